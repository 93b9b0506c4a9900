//go:build unix

package atomicfile

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

// childEnv names the file the test binary, re-run as a child, replaces
// slowly until it is killed.
const childEnv = "TRACKGATE_ATOMICFILE_SLOW_WRITER"

func TestMain(m *testing.M) {
	if path := os.Getenv(childEnv); path != "" {
		slowWriter(path)
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// slowWriter replaces path with many lines, pausing between them; once the
// first part has reached the temporary file it says "writing" on stdout.
func slowWriter(path string) {
	err := Write(path, func(w io.Writer) error {
		for i := 0; i < 100000; i++ {
			fmt.Fprintf(w, "scan %d: buoy-%d at %d.25 m\n", i, i%7, i)
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

// TestKilledWriterKeepsOld kills a writer part way through a replacement:
// the old file must be byte-identical afterwards, and the only other entry
// must be one non-empty temporary file that IsTemp recognises.
func TestKilledWriterKeepsOld(t *testing.T) {
	if testing.Short() {
		t.Skip("re-runs the test binary")
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "breakwater.jsonl")
	before := []byte("{\"step\":0}\n")
	if err := WriteBytes(path, before); err != nil {
		t.Fatal(err)
	}
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
		t.Fatalf("file changed after the writer was killed: %d bytes before, %d after", len(before), len(after))
	}
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var temps []string
	for _, e := range ents {
		if IsTemp(e.Name()) {
			temps = append(temps, e.Name())
		}
	}
	if len(ents) != 2 || len(temps) != 1 {
		t.Fatalf("folder after kill holds %v, want the old file and one temporary file", ents)
	}
	if fi, err := os.Stat(filepath.Join(dir, temps[0])); err != nil || fi.Size() == 0 {
		t.Errorf("temporary file %s is empty or gone (%v): the writer was killed before writing, the test proves nothing", temps[0], err)
	}
}
