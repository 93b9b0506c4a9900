//go:build unix

package golden

import (
	"errors"
	"syscall"
)

func isUnsupportedSync(err error) bool {
	return errors.Is(err, syscall.EINVAL) || errors.Is(err, syscall.ENOTSUP)
}
