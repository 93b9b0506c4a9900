package atomicfile

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestWriteReplaces(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "quay_tracks.jsonl")
	if err := os.WriteFile(path, []byte("old\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{"first\n", "second, longer than the first\n", ""} {
		if err := WriteBytes(path, []byte(s)); err != nil {
			t.Fatalf("WriteBytes(%q): %v", s, err)
		}
		if b, _ := os.ReadFile(path); string(b) != s {
			t.Errorf("file = %q, want %q", b, s)
		}
	}
	fi, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	if fi.Mode().Perm() != 0o644 {
		t.Errorf("mode = %v, want 0644 whatever the old file's mode", fi.Mode().Perm())
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("folder holds %d entries, want 1 (temporary file left?)", len(ents))
	}
}

// TestWriteUsesHiddenTemp looks into the folder while fill runs: the bytes
// go to one hidden temporary file that IsTemp recognises, and the
// destination is not yet touched.
func TestWriteUsesHiddenTemp(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "buoy.json")
	if err := os.WriteFile(path, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	var during []string
	err := Write(path, func(w io.Writer) error {
		if _, ok := w.(interface{ Flush() error }); !ok {
			t.Errorf("fill got %T, want a buffered writer", w)
		}
		ents, err := os.ReadDir(dir)
		for _, e := range ents {
			during = append(during, e.Name())
		}
		if b, _ := os.ReadFile(path); string(b) != "old" {
			t.Errorf("destination = %q while fill runs, want it untouched", b)
		}
		_, werr := io.WriteString(w, "new")
		return errors.Join(err, werr)
	})
	if err != nil {
		t.Fatal(err)
	}
	var temps []string
	for _, name := range during {
		if IsTemp(name) {
			temps = append(temps, name)
		}
	}
	if len(during) != 2 || len(temps) != 1 || !strings.HasPrefix(temps[0], ".") {
		t.Errorf("folder during fill = %q, want buoy.json and one hidden temporary file", during)
	}
	if b, _ := os.ReadFile(path); string(b) != "new" {
		t.Errorf("file = %q, want %q", b, "new")
	}
}

func TestWriteFailureKeepsOld(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "old.jsonl")
	if err := os.WriteFile(path, []byte("old\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	interrupted := errors.New("the run was interrupted")
	err := Write(path, func(w io.Writer) error {
		io.WriteString(w, strings.Repeat("partial ", 20000)) // more than the buffer holds
		return interrupted
	})
	if !errors.Is(err, interrupted) {
		t.Fatalf("Write with a failing fill: error %v, want it to wrap %v", err, interrupted)
	}
	if want := "write " + path + ": "; !strings.HasPrefix(err.Error(), want) {
		t.Errorf("error %q, want prefix %q", err, want)
	}
	if b, _ := os.ReadFile(path); string(b) != "old\n" {
		t.Errorf("file = %.20q after a failed write, want %q", b, "old\n")
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("folder holds %d entries after a failed write, want 1 (no temporary file)", len(ents))
	}
}

func TestWriteMissingFolder(t *testing.T) {
	path := filepath.Join(t.TempDir(), "missing", "x.json")
	err := WriteBytes(path, []byte("{}"))
	if err == nil {
		t.Fatal("WriteBytes into a missing folder succeeded")
	}
	if !errors.Is(err, os.ErrNotExist) || !strings.HasPrefix(err.Error(), "write "+path+": ") {
		t.Errorf("error %q, want a not-exist error that begins with %q", err, "write "+path+": ")
	}
}

func TestWriteRelativeName(t *testing.T) {
	dir := t.TempDir()
	t.Chdir(dir)
	if err := WriteBytes("plain.txt", []byte("harbour")); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "plain.txt")); string(b) != "harbour" {
		t.Errorf("file = %q, want %q", b, "harbour")
	}
}

func TestIsTemp(t *testing.T) {
	tests := []struct {
		name string
		want bool
	}{
		{".trackgate-tmp-run-0.reference.jsonl-123456", true},
		{"run-0.reference.jsonl", false},
		{".hidden", false},
		{"trackgate-tmp-x", false},
	}
	for _, tt := range tests {
		if got := IsTemp(tt.name); got != tt.want {
			t.Errorf("IsTemp(%q) = %v, want %v", tt.name, got, tt.want)
		}
	}
}

func BenchmarkWriteBytes(b *testing.B) {
	path := filepath.Join(b.TempDir(), "bench.json")
	data := bytes.Repeat([]byte("{\"track\":\"ferry\",\"mean\":[1.5,2,3,4]}\n"), 2000)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		if err := WriteBytes(path, data); err != nil {
			b.Fatal(err)
		}
	}
}
