package golden

import (
	"fmt"
	"io"
	"os"
	"path/filepath"

	"trackgate/harness/internal/atomicfile"
)

// IsTemp reports whether a base file name is one of WriteFile's temporary
// files, left behind only when a writer was killed. The leading dot hides
// it from directory listings and from Scan, and the name never ends in
// ".jsonl", so a leftover is never taken for a golden.
func IsTemp(base string) bool { return atomicfile.IsTemp(base) }

// WriteFile atomically replaces the file at path with what fill writes:
// fill writes to a buffered temporary file in the same folder, which is
// flushed, fsynced, closed, and renamed over path; then the folder is
// fsynced so the rename itself is durable (see harness/internal/atomicfile).
// If fill or any step fails the temporary file is removed and path is
// untouched. A process killed at any point leaves path either as it was or
// fully replaced, plus at most one hidden temporary file (see IsTemp and
// RemoveTemps).
func WriteFile(path string, fill func(w io.Writer) error) error {
	if err := atomicfile.Write(path, fill); err != nil {
		return fmt.Errorf("golden: %w", err)
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
