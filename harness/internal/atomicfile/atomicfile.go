package atomicfile

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// tempPrefix starts the name of every temporary file Write creates. The
// leading dot hides it from folder listings, and a temporary name ends in
// random digits, so it never carries the destination's extension and is
// never taken for a finished file of that kind.
const tempPrefix = ".trackgate-tmp-"

// bufferSize is the size of the buffer between fill and the temporary file.
const bufferSize = 64 << 10

// IsTemp reports whether a base file name is one of Write's temporary
// files, which remain only when a writer was killed.
func IsTemp(base string) bool { return strings.HasPrefix(base, tempPrefix) }

// Write atomically replaces the file at path with what fill writes. fill
// receives a *bufio.Writer over the temporary file; Write flushes it. The
// folder of path must exist. See the package documentation for the steps
// and for what a failure or a killed process leaves behind.
func Write(path string, fill func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, tempPrefix+base+"-*")
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriterSize(tmp, bufferSize)
	if err = fill(bw); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Chmod(0o644); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("write %s: sync: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := syncDir(dir); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}

// WriteBytes atomically replaces the file at path with data, like Write.
func WriteBytes(path string, data []byte) error {
	return Write(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// syncDir fsyncs a folder so that a rename inside it survives a crash.
// Systems that cannot sync a folder (EINVAL or ENOTSUP, e.g. some network
// file systems; every error on systems without folder sync) are tolerated:
// the rename has still happened.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("sync folder: %w", err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !isUnsupportedSync(err) {
		return fmt.Errorf("sync folder %s: %w", dir, err)
	}
	return nil
}
