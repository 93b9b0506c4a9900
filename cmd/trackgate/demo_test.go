package main

import (
	"bytes"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trackgate/harness/result"
	"trackgate/scenarios"
)

// demoChildEnv makes the test binary run the trackgate command line held in
// the variable (words separated by spaces) when the demo starts it as a
// tracker (see TestDemoChild).
const demoChildEnv = "TRACKGATE_DEMO_CHILD"

// TestDemoChild is not a test: the demo tests start the test binary as
// their tracker, and it runs 'trackgate reference [-variant NAME]'.
func TestDemoChild(t *testing.T) {
	line := os.Getenv(demoChildEnv)
	if line == "" {
		t.Skip("child process of the demo tests")
	}
	os.Exit(run(strings.Fields(line), os.Stdout, os.Stderr))
}

// childTracker makes the demo start this test binary as its tracker, with
// extra prepended to the arguments the demo asks for.
func childTracker(t *testing.T, extra ...string) {
	t.Helper()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	old := demoTracker
	t.Cleanup(func() { demoTracker = old })
	demoTracker = func(args ...string) ([]string, map[string]string, error) {
		words := append(append([]string{"reference"}, extra...), args...)
		return []string{exe, "-test.run=^TestDemoChild$"},
			map[string]string{demoChildEnv: strings.Join(words, " "), "GORACE": "atexit_sleep_ms=0"}, nil
	}
}

func runDemoArgs(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(append([]string{"demo"}, args...), &out, &errb)
	return code, out.String(), errb.String()
}

// TestDemo runs the demo (one run per scenario) from an empty folder with
// no other setup and checks both verdicts, the exit status and every file
// it promises.
func TestDemo(t *testing.T) {
	childTracker(t)
	t.Chdir(t.TempDir())
	dir := "trackgate-demo" // the default -o
	code, out, errs := runDemoArgs(t, "-runs", "1")
	if code != exitPass {
		t.Fatalf("demo exit %d, want 0\nstdout:\n%s\nstderr:\n%s", code, out, errs)
	}
	for _, want := range []string{
		"the reference tracker    pass  passed, as expected",
		"the greedy variant       fail  caught (first in ",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	for name, want := range map[string]result.Status{"reference": result.Pass, "variant-greedy": result.Fail} {
		s, err := result.Read(filepath.Join(dir, name+".json"))
		if err != nil {
			t.Fatalf("%s.json: %v", name, err)
		}
		if s.Status != want {
			t.Errorf("%s.json: status %s, want %s", name, s.Status, want)
		}
		html, err := os.ReadFile(filepath.Join(dir, name+".html"))
		if err != nil || !bytes.Contains(html, []byte("<svg")) {
			t.Errorf("%s.html: %d bytes, err %v; want a page with plots", name, len(html), err)
		}
		for _, sc := range s.Scenarios {
			if len(sc.Runs) != 1 {
				t.Errorf("%s.json: scenario %s has %d runs, want 1 (-runs 1)", name, sc.Name, len(sc.Runs))
			}
		}
	}
	names, _ := fs.Glob(scenarios.Stock, "*.yaml")
	for _, n := range names {
		want, _ := fs.ReadFile(scenarios.Stock, n)
		got, err := os.ReadFile(filepath.Join(dir, "scenarios", n))
		if err != nil || !bytes.Equal(got, want) {
			t.Errorf("scenarios/%s: not the stock file (err %v)", n, err)
		}
	}
}

// TestDemoNotAsExpected: when the first tracker is not the reference (here
// greedy in its place), the demo says so and exits 1.
func TestDemoNotAsExpected(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the demo's two checks again; skipped under -short")
	}
	childTracker(t, "-variant", "greedy")
	code, out, _ := runDemoArgs(t, "-o", t.TempDir(), "-runs", "1", "-variant", "relabel")
	if code != exitFail {
		t.Errorf("exit %d, want %d\n%s", code, exitFail, out)
	}
	if !strings.Contains(out, "the reference tracker    fail  caught") || !strings.Contains(out, "NOT as expected") {
		t.Errorf("output does not report the unexpected verdict:\n%s", out)
	}
}

// TestDemoHarmlessVariant: a harmless variant must pass, and the demo
// exits 0 when it does.
func TestDemoHarmlessVariant(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the demo's two checks again; skipped under -short")
	}
	childTracker(t)
	code, out, errs := runDemoArgs(t, "-o", t.TempDir(), "-runs", "1", "-variant", "shuffle")
	if code != exitPass || !strings.Contains(out, "the shuffle variant      pass  passed, as expected") {
		t.Errorf("exit %d, want 0 with shuffle passing\n%s\n%s", code, out, errs)
	}
}

func TestDemoUsage(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"unknown variant", []string{"-variant", "sloppy"}, `-variant: unknown variant "sloppy"`},
		{"arguments", []string{"extra"}, "want no arguments"},
		{"negative runs", []string{"-runs", "-2"}, "-runs and -j"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, errs := runDemoArgs(t, append([]string{"-o", t.TempDir()}, tc.args...)...)
			if code != exitUsage || !strings.Contains(errs, tc.want) {
				t.Errorf("exit %d, stderr %q; want %d and %q", code, errs, exitUsage, tc.want)
			}
		})
	}
}

// TestReferenceUnknownVariant covers the -variant flag of the reference
// command; the variants themselves are run through the gate by
// harness/catalogue.
func TestReferenceUnknownVariant(t *testing.T) {
	var out, errb bytes.Buffer
	if code := run([]string{"reference", "-variant", "sloppy"}, &out, &errb); code != exitUsage ||
		!strings.Contains(errb.String(), `unknown variant "sloppy"`) {
		t.Errorf("reference -variant sloppy: exit %d, stderr %q; want 2 naming the variant", code, errb.String())
	}
}
