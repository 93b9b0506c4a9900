package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"trackgate/harness/golden"
	"trackgate/harness/result"
	"trackgate/harness/runner"
)

// gateTrackerEnv makes the test binary serve 'trackgate reference' when
// it re-runs itself as the tracker of a check (see TestGateTrackerChild).
const gateTrackerEnv = "TRACKGATE_GATE_TRACKER_CHILD"

// blessChildEnv makes the test binary run 'trackgate bless --all' with a
// write that stops half-way (see TestBlessChild); its value is the file
// created when the write is under way.
const blessChildEnv = "TRACKGATE_BLESS_CHILD"

// TestGateTrackerChild is not a test: run as a subprocess by the check and
// bless tests, it serves the reference tracker and exits.
func TestGateTrackerChild(t *testing.T) {
	if os.Getenv(gateTrackerEnv) == "" {
		t.Skip("child process of the check tests")
	}
	os.Exit(run([]string{"reference"}, os.Stdout, os.Stderr))
}

// TestBlessChild is not a test: run as a subprocess by
// TestBlessInterruptedLosesNothing, it re-blesses every golden of the
// project file named by its arguments, and stops half-way through the
// first write until it is killed.
func TestBlessChild(t *testing.T) {
	marker := os.Getenv(blessChildEnv)
	if marker == "" {
		t.Skip("child process of TestBlessInterruptedLosesNothing")
	}
	blessMidWrite = func(path string) {
		os.WriteFile(marker, []byte(path), 0o644)
		time.Sleep(time.Minute)
	}
	os.Exit(run([]string{"bless", "--all", "--config", os.Getenv(blessChildEnv + "_CONFIG")}, os.Stdout, os.Stderr))
}

// gateProject writes a project file whose tracker is the test binary
// serving the reference, whose scenarios are the named stock scenarios and
// whose goldens go to a fresh folder. It returns the file and the folder.
func gateProject(t *testing.T, scenarios ...string) (file, goldenDir string) {
	t.Helper()
	dir := t.TempDir()
	goldenDir = filepath.Join(dir, "golden")
	var globs []string
	for _, s := range scenarios {
		abs, err := filepath.Abs(filepath.Join("..", "..", "scenarios", s+".yaml"))
		if err != nil {
			t.Fatal(err)
		}
		globs = append(globs, fmt.Sprintf("%q", abs))
	}
	text := fmt.Sprintf(`format: 1
tracker:
  name: quay-tracker
  command: [%q, "-test.run=^TestGateTrackerChild$"]
  env: {%s: "1", GORACE: "atexit_sleep_ms=0"}
scenarios: [%s]
golden_dir: %q
tie_margin: 1e-9
`, os.Args[0], gateTrackerEnv, strings.Join(globs, ", "), goldenDir)
	file = filepath.Join(dir, "trackgate.yaml")
	if err := os.WriteFile(file, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return file, goldenDir
}

// runCmd runs the command line in process and returns the exit code and
// the two outputs.
func runCmd(args ...string) (int, string, string) {
	var stdout, stderr bytes.Buffer
	code := run(args, &stdout, &stderr)
	return code, stdout.String(), stderr.String()
}

// files maps every file under root to its bytes.
func files(t *testing.T, root string) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := os.ReadFile(p)
		out[p] = string(b)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// TestCheckAndBlessCommands: bless then check --against both passes and
// writes every report; a quoted --tracker line works; usage, scenario and
// tracker problems give exit codes 2 and 3.
func TestCheckAndBlessCommands(t *testing.T) {
	t.Setenv("CI", "")
	cfg, _ := gateProject(t, "tie-mirror-pair", "warmup-rail-carts")
	code, out, errOut := runCmd("bless", "--config", cfg, "--golden-runs", "2")
	if code != exitPass || !strings.Contains(out, "0 written, 17 new, 0 unchanged") {
		t.Fatalf("bless: exit %d\n%s%s", code, out, errOut)
	}
	dir := t.TempDir()
	reports := map[string]string{"--json": "r.json", "--junit": "r.xml", "--markdown": "r.md", "--html": "r.html"}
	args := []string{"check", "--config", cfg, "--against", "both", "--golden-runs", "2", "-j", "2"}
	for flag, name := range reports {
		args = append(args, flag, filepath.Join(dir, name))
	}
	code, out, errOut = runCmd(args...)
	if code != exitPass {
		t.Fatalf("check: exit %d\n%s%s", code, out, errOut)
	}
	if !strings.Contains(out, "tie-mirror-pair") || !strings.Contains(out, "PASS") {
		t.Errorf("terminal report lacks the scenario or the verdict:\n%s", out)
	}
	for _, name := range reports {
		if fi, err := os.Stat(filepath.Join(dir, name)); err != nil || fi.Size() == 0 {
			t.Errorf("report %s not written: %v", name, err)
		}
	}
	s, err := result.Read(filepath.Join(dir, "r.json"))
	if err != nil || s.Status != result.Pass || s.Against != "both" || len(s.Scenarios) != 2 || s.Platform.GOOS == "" {
		t.Fatalf("result file: %v %+v", err, s)
	}

	// The tracker given on the command line, with quotes a shell would
	// remove, and the project's environment.
	code, out, errOut = runCmd("check", "--config", cfg, "--against", "reference",
		"--tracker", fmt.Sprintf("'%s' \"-test.run=^TestGateTrackerChild$\"", os.Args[0]))
	if code != exitPass {
		t.Fatalf("check --tracker: exit %d\n%s%s", code, out, errOut)
	}

	tests := []struct {
		name string
		args []string
		want int
	}{
		{"unknown against", []string{"check", "--config", cfg, "--against", "sideways"}, exitUsage},
		{"unterminated quote", []string{"check", "--config", cfg, "--tracker", "'./quay"}, exitUsage},
		{"missing scenario", []string{"check", "--config", cfg, "--against", "reference", "no-such-scenario.yaml"}, exitUsage},
		{"bad shard", []string{"check", "--config", cfg, "--shard", "3/2", "--shard-base", "0"}, exitUsage},
		{"shard without its base", []string{"check", "--config", cfg, "--shard", "0/2"}, exitUsage},
		{"tracker exits", []string{"check", "--config", cfg, "--against", "reference", "--tracker", "sh -c 'exit 5'"}, exitTracker},
		{"unknown profile", []string{"bless", "--config", cfg, "--profile", "float16"}, exitUsage},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if code, out, errOut := runCmd(tt.args...); code != tt.want {
				t.Errorf("%v: exit %d, want %d\n%s%s", tt.args, code, tt.want, out, errOut)
			}
		})
	}
}

// TestCheckCIModeCommand: with CI=true, check writes nothing (not even the
// actual output of a failing golden) and a missing golden fails.
func TestCheckCIModeCommand(t *testing.T) {
	t.Setenv("CI", "")
	cfg, root := gateProject(t, "tie-mirror-pair")
	if code, out, errOut := runCmd("bless", "--config", cfg); code != exitPass {
		t.Fatalf("bless: exit %d\n%s%s", code, out, errOut)
	}
	if err := os.Remove(filepath.Join(root, "tie-mirror-pair", "quay-tracker", "run-0.jsonl")); err != nil {
		t.Fatal(err)
	}
	before := files(t, root)
	t.Setenv("CI", "true")
	code, out, errOut := runCmd("check", "--config", cfg, "--against", "golden")
	if code != exitFail || !strings.Contains(out+errOut, "CI mode") {
		t.Fatalf("check in CI mode with a missing golden: exit %d, want 1\n%s%s", code, out, errOut)
	}
	code, out, errOut = runCmd("bless", "--config", cfg)
	if code != exitFail || !strings.Contains(out, "refused") {
		t.Fatalf("bless in CI mode: exit %d, want 1\n%s%s", code, out, errOut)
	}
	after := files(t, root)
	if len(before) != len(after) {
		t.Fatalf("CI mode changed the number of files: %d before, %d after", len(before), len(after))
	}
	for p, b := range before {
		if after[p] != b {
			t.Errorf("CI mode changed %s", p)
		}
	}
}

// TestBlessInterruptedLosesNothing kills a bless half-way through writing
// a golden (SIGKILL, so nothing can clean up) and checks that every golden
// is still whole, byte for byte the file it was, and still passes a check.
func TestBlessInterruptedLosesNothing(t *testing.T) {
	t.Setenv("CI", "")
	cfg, root := gateProject(t, "tie-mirror-pair")
	if code, out, errOut := runCmd("bless", "--config", cfg); code != exitPass {
		t.Fatalf("bless: exit %d\n%s%s", code, out, errOut)
	}
	before := files(t, root)
	marker := filepath.Join(t.TempDir(), "writing")
	child := exec.Command(os.Args[0], "-test.run=^TestBlessChild$")
	child.Env = append(os.Environ(), blessChildEnv+"="+marker, blessChildEnv+"_CONFIG="+cfg, "GORACE=atexit_sleep_ms=0")
	var childOut bytes.Buffer
	child.Stdout, child.Stderr = &childOut, &childOut
	if err := child.Start(); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(30 * time.Second)
	var writing []byte
	for {
		var err error
		if writing, err = os.ReadFile(marker); err == nil && len(writing) > 0 {
			break
		}
		if time.Now().After(deadline) {
			child.Process.Kill()
			child.Wait()
			t.Fatalf("the child never reached a write:\n%s", childOut.String())
		}
		time.Sleep(10 * time.Millisecond)
	}
	if err := child.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	child.Wait()
	// The temporary file half-written by the child must exist: otherwise
	// the test did not interrupt a write at all.
	tree, err := golden.Scan(root)
	if err != nil {
		t.Fatal(err)
	}
	if len(tree.Temps) != 1 {
		t.Fatalf("want one leftover temporary file of the killed writer (writing %s), got %v", writing, tree.Temps)
	}
	after := files(t, root)
	for p, b := range before {
		if after[p] != b {
			t.Errorf("%s changed after the interrupted bless", p)
		}
	}
	if code, out, errOut := runCmd("check", "--config", cfg, "--against", "golden"); code != exitPass {
		t.Fatalf("check after the interrupted bless: exit %d\n%s%s", code, out, errOut)
	}
}

// TestExplainCommand shows step 0 of tie-mirror-pair, whose clutter
// detection lies on float-west's gate boundary and outside float-east's,
// and step 1, an exact tie.
func TestExplainCommand(t *testing.T) {
	file := filepath.Join("..", "..", "scenarios", "tie-mirror-pair.yaml")
	code, out, errOut := runCmd("explain", file, "--run", "0", "--step", "1", "--config", "no-such-project.yaml")
	if code != exitPass {
		t.Fatalf("explain: exit %d\n%s%s", code, out, errOut)
	}
	for _, want := range []string{"float-west", "float-east", "d3", "d4", "miss", "probability 0.5", "margin 0 —", "covered mass 1, exact"} {
		if !strings.Contains(out, want) {
			t.Errorf("explain step 1 lacks %q:\n%s", want, out)
		}
	}
	code, out, errOut = runCmd("explain", file, "--run", "0", "--step", "0", "--config", "no-such-project.yaml",
		"--tracker", fmt.Sprintf("env %s=1 %s -test.run=^TestGateTrackerChild$", gateTrackerEnv, os.Args[0]))
	if code != exitPass {
		t.Fatalf("explain --tracker: exit %d\n%s%s", code, out, errOut)
	}
	if !strings.Contains(out, "·") || !strings.Contains(out, "no check departs at this step") {
		t.Errorf("explain step 0 lacks a gated-out cell or the tracker's verdict:\n%s", out)
	}
	for _, args := range [][]string{
		{"explain", file, "--step", "99"},
		{"explain", file, "--run", "5"},
		{"explain"},
	} {
		if code, _, _ := runCmd(args...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, exitUsage)
		}
	}
}

// TestCheckHelp: the exit codes are documented in 'check -h' and in the
// manual.
func TestCheckHelp(t *testing.T) {
	code, _, errOut := runCmd("check", "-h")
	if code != exitPass || !strings.Contains(errOut, "Exit codes: 0 pass") || !strings.Contains(errOut, "-against") {
		t.Fatalf("check -h: exit %d\n%s", code, errOut)
	}
	_, out, _ := runCmd("help")
	for _, want := range []string{"check", "bless", "explain", "3 the tracker itself faulted"} {
		if !strings.Contains(out, want) {
			t.Errorf("manual lacks %q", want)
		}
	}
}

// TestCheckRejectsBadCounts: an empty program name and a run count past
// runner.MaxRuns are usage errors (exit 2), found before anything runs.
func TestCheckRejectsBadCounts(t *testing.T) {
	cfg, _ := gateProject(t, "warmup-rail-carts")
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"empty program", []string{"--tracker", "''"}, "--tracker: expected a program name as the first word"},
		{"empty program with arguments", []string{"--tracker", `"" -v`}, "--tracker: expected a program name as the first word"},
		{"runs past the cap", []string{"--runs", "1000000000000"}, fmt.Sprintf("--runs: expected a number of runs from 1 to %d", runner.MaxRuns)},
		{"runs one past the cap", []string{"--runs", fmt.Sprint(runner.MaxRuns + 1)}, "--runs: expected a number of runs"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			args := append([]string{"check", "--config", cfg, "--quiet"}, tt.args...)
			code, out, errOut := runCmd(args...)
			if code != exitUsage || !strings.Contains(errOut, tt.want) {
				t.Errorf("exit %d, want %d; stderr %q, want it to contain %q\n%s", code, exitUsage, errOut, tt.want, out)
			}
		})
	}
	code, _, errOut := runCmd("explain", "--tracker", "''", "--run", "0", "--step", "0",
		filepath.Join("..", "..", "scenarios", "warmup-rail-carts.yaml"))
	if code != exitUsage || !strings.Contains(errOut, "first word names a program") {
		t.Errorf("explain with an empty program: exit %d, stderr %q", code, errOut)
	}
}
