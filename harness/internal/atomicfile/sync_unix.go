//go:build unix

package atomicfile

import (
	"errors"
	"syscall"
)

// isUnsupportedSync reports whether a folder sync failed only because the
// file system cannot sync folders.
func isUnsupportedSync(err error) bool {
	return errors.Is(err, syscall.EINVAL) || errors.Is(err, syscall.ENOTSUP)
}
