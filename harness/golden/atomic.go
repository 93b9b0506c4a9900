package golden

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// tempPrefix starts the name of every temporary file WriteFile creates. The
// leading dot hides it from directory listings and from Scan, and the name
// never ends in ".jsonl", so a leftover is never taken for a golden.
const tempPrefix = ".trackgate-tmp-"

// IsTemp reports whether a base file name is one of WriteFile's temporary
// files, left behind only when a writer was killed.
func IsTemp(base string) bool { return strings.HasPrefix(base, tempPrefix) }

// WriteFile atomically replaces the file at path with what fill writes:
// fill writes to a buffered temporary file in the same folder, which is
// flushed, fsynced, closed, and renamed over path; then the folder is
// fsynced so the rename itself is durable. If fill or any step fails the
// temporary file is removed and path is untouched. A process killed at any
// point leaves path either as it was or fully replaced, plus at most one
// hidden temporary file (see IsTemp and RemoveTemps).
func WriteFile(path string, fill func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, tempPrefix+base+"-*")
	if err != nil {
		return fmt.Errorf("golden: %w", err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriterSize(tmp, 64<<10)
	if err = fill(bw); err != nil {
		return fmt.Errorf("golden: writing %s: %w", path, err)
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("golden: writing %s: %w", path, err)
	}
	if err = tmp.Chmod(0o644); err != nil {
		return fmt.Errorf("golden: %w", err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("golden: syncing %s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("golden: %w", err)
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("golden: %w", err)
	}
	return syncDir(dir)
}

// syncDir fsyncs a folder so that a rename inside it survives a crash.
// Systems that cannot sync a folder (EINVAL, e.g. some network file
// systems) are tolerated: the rename has still happened.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("golden: %w", err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !isUnsupportedSync(err) {
		return fmt.Errorf("golden: syncing folder %s: %w", dir, err)
	}
	return nil
}

// Write marshals f and writes it atomically to path, creating the folder if
// needed.
func Write(path string, f File) error {
	b, err := Marshal(f)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return fmt.Errorf("golden: %w", err)
	}
	return WriteFile(path, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}
