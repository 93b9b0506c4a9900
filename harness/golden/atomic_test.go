package golden

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// childEnv names the golden file the test binary, re-run as a child,
// writes slowly until it is killed.
const childEnv = "TRACKGATE_GOLDEN_SLOW_WRITER"

func TestMain(m *testing.M) {
	if path := os.Getenv(childEnv); path != "" {
		slowWriter(path)
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// slowWriter replaces path with a large golden, writing in chunks with
// pauses; after the first chunk reaches the disk it says "writing" on
// stdout so the parent knows the temporary file holds data.
func slowWriter(path string) {
	err := WriteFile(path, func(w io.Writer) error {
		for i := 0; i < 100000; i++ {
			fmt.Fprintf(w, `{"step":%d,"tracks":[{"track":"barge","mean":[%d.5,1,2,3]}]}`+"\n", i, i)
			if i == 2000 {
				w.(*bufio.Writer).Flush()
				fmt.Println("writing")
			}
			if i > 2000 && i%100 == 0 {
				time.Sleep(time.Millisecond)
			}
		}
		return nil
	})
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	fmt.Println("finished")
}

// TestKilledWriterLeavesOldGolden kills a writer in the middle of an
// atomic replacement: the old golden must be byte-identical afterwards and
// the leftover temporary file must not be taken for a golden.
func TestKilledWriterLeavesOldGolden(t *testing.T) {
	if testing.Short() {
		t.Skip("re-runs the test binary")
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "pier_crossing", "run-0.reference.jsonl")
	old := File{Header: header(Reference)}
	old.Header.Scenario = "pier_crossing"
	if err := Write(path, old); err != nil {
		t.Fatal(err)
	}
	before, _ := os.ReadFile(path)

	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), childEnv+"="+path)
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(out).ReadString('\n')
	if err != nil || line != "writing\n" {
		cmd.Process.Kill()
		cmd.Wait()
		t.Fatalf("child said %q, %v; stderr: %s", line, err, stderr.String())
	}
	if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	werr := cmd.Wait()
	if ws, ok := cmd.ProcessState.Sys().(syscall.WaitStatus); !ok || !ws.Signaled() {
		t.Fatalf("child was not killed by the signal: %v", werr)
	}

	after, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(before, after) {
		t.Fatalf("golden changed after the writer was killed: %d bytes before, %d after", len(before), len(after))
	}
	tree, err := Scan(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(tree.Goldens) != 1 || len(tree.Strays) != 0 {
		t.Errorf("Scan after kill: goldens %v, strays %v; want only the original", tree.Goldens, tree.Strays)
	}
	if len(tree.Temps) != 1 || !strings.HasPrefix(filepath.Base(tree.Temps[0]), ".") {
		t.Fatalf("Scan after kill: temps %v, want one hidden temporary file", tree.Temps)
	}
	if fi, _ := os.Stat(tree.Temps[0]); fi.Size() == 0 {
		t.Errorf("temporary file is empty: the writer was killed before writing, the test proves nothing")
	}
	if err := tree.Remove(dir, tree.Temps); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(tree.Temps[0]); !os.IsNotExist(err) {
		t.Errorf("temporary file still present after Remove: %v", err)
	}
}

func TestWriteFileFailureKeepsOld(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "old.jsonl")
	os.WriteFile(path, []byte("old\n"), 0o644)
	err := WriteFile(path, func(w io.Writer) error {
		io.WriteString(w, "partial")
		return fmt.Errorf("the run was interrupted")
	})
	if err == nil {
		t.Fatal("WriteFile with a failing fill succeeded")
	}
	if b, _ := os.ReadFile(path); string(b) != "old\n" {
		t.Errorf("file = %q after a failed write, want %q", b, "old\n")
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("folder holds %d entries after a failed write, want 1 (no temporary file)", len(ents))
	}
}

func TestWriteFileReplaces(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "g.jsonl")
	for _, s := range []string{"first\n", "second\n"} {
		if err := WriteFile(path, func(w io.Writer) error { _, err := io.WriteString(w, s); return err }); err != nil {
			t.Fatal(err)
		}
		if b, _ := os.ReadFile(path); string(b) != s {
			t.Errorf("file = %q, want %q", b, s)
		}
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("folder holds %d entries, want 1", len(ents))
	}
}
