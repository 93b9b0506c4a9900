package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trackgate/harness/scenario"
	"trackgate/harness/sim"
)

// simScenario is an invented demo: two pontoons drifting in a marina,
// measured by a dock-mounted range sensor with a little clutter.
const simScenario = `format: 1
name: marina-pontoons
description: Two drifting pontoons in a marina seen by a dock sensor.
seed: 5150
steps: 6
interval: 1.0
runs: 3
motion:
  kind: constant-velocity
  axes: 1
  accel-noise: 0.01
sensor:
  noise: [0.5]
detection-probability: 0.9
clutter:
  region: {min: [0], max: [100]}
  mean-count: 1.5
objects:
  - id: pontoon-a
    prior: {mean: [10, 0.2], cov: [1, 0.01]}
  - id: pontoon-b
    prior: {mean: [60, -0.1], cov: [1, 0.01]}
    start: draw
`

func writeSimScenario(t *testing.T) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "marina.yaml")
	if err := os.WriteFile(p, []byte(simScenario), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// simWant is the library's output for run r of the scenario at path: the
// command must print exactly what sim.Write gives.
func simWant(t *testing.T, path string, r int) []byte {
	t.Helper()
	spec, err := scenario.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := sim.Write(&b, sim.Record{Scenario: spec.Name, Hash: spec.Hash, Run: sim.Run(spec, r)}); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestSimulateStdoutAndFile(t *testing.T) {
	path := writeSimScenario(t)
	var out, errb bytes.Buffer
	if code := run([]string{"simulate", path}, &out, &errb); code != exitPass {
		t.Fatalf("simulate exit %d: %s", code, errb.String())
	}
	if !bytes.Equal(out.Bytes(), simWant(t, path, 0)) {
		t.Errorf("simulate stdout differs from sim.Write of run 0:\n%s", out.String())
	}
	rec, err := sim.Read(bytes.NewReader(out.Bytes()), "stdout")
	if err != nil {
		t.Fatalf("output does not read back: %v", err)
	}
	if rec.Scenario != "marina-pontoons" || rec.Run.Index != 0 || len(rec.Run.Scans) != 6 || len(rec.Hash) != 64 {
		t.Errorf("header: scenario %q run %d steps %d hash %q", rec.Scenario, rec.Run.Index, len(rec.Run.Scans), rec.Hash)
	}

	dst := filepath.Join(t.TempDir(), "run2.jsonl")
	if err := os.WriteFile(dst, []byte("old contents\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	// Flags after the file, in both spellings.
	out.Reset()
	if code := run([]string{"simulate", path, "--run", "2", "-o", dst}, &out, &errb); code != exitPass {
		t.Fatalf("simulate -o exit %d: %s", code, errb.String())
	}
	if out.Len() != 0 {
		t.Errorf("simulate -o also wrote to stdout: %q", out.String())
	}
	got, err := os.ReadFile(dst)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, simWant(t, path, 2)) {
		t.Error("the -o file differs from sim.Write of run 2")
	}
	if bytes.Equal(got, simWant(t, path, 0)) {
		t.Error("-run 2 wrote run 0")
	}
	left, _ := filepath.Glob(filepath.Join(filepath.Dir(dst), ".*tmp*"))
	if len(left) != 0 {
		t.Errorf("temporary files left behind: %v", left)
	}
}

func TestSimulateErrors(t *testing.T) {
	path := writeSimScenario(t)
	bad := filepath.Join(t.TempDir(), "bad.yaml")
	if err := os.WriteFile(bad, []byte(strings.Replace(simScenario, "steps: 6", "steps: six", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	noDir := filepath.Join(t.TempDir(), "missing", "out.jsonl")
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"no file", []string{"simulate"}, "expected one scenario file, got 0"},
		{"two files", []string{"simulate", path, path}, "expected one scenario file, got 2"},
		{"missing file", []string{"simulate", filepath.Join(t.TempDir(), "nope.yaml")}, "nope.yaml"},
		{"bad scenario", []string{"simulate", bad}, "bad.yaml:5:"},
		{"run too large", []string{"simulate", "-run", "3", path}, "-run: expected a run from 0 to 2"},
		{"negative run", []string{"simulate", path, "-run=-1"}, "-run: expected a run from 0 to 2"},
		{"bad flag", []string{"simulate", "-runs", "1", path}, "flag provided but not defined"},
		{"unwritable output", []string{"simulate", path, "-o", noDir}, "trackgate simulate: -o:"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			code := run(tt.args, &out, &errb)
			if code != exitUsage {
				t.Errorf("exit %d, want %d", code, exitUsage)
			}
			if !strings.Contains(errb.String(), tt.want) {
				t.Errorf("stderr = %q, want it to contain %q", errb.String(), tt.want)
			}
			if out.Len() != 0 {
				t.Errorf("stdout = %q, want nothing", out.String())
			}
		})
	}
	if _, err := os.Stat(noDir); err == nil {
		t.Error("output written into a missing directory")
	}
}

// TestSimulateStockScenarios simulates every run of every stock scenario
// through the command and reads each output back.
func TestSimulateStockScenarios(t *testing.T) {
	files, err := filepath.Glob("../../scenarios/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no stock scenarios found (%v)", err)
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			var out, errb bytes.Buffer
			if code := run([]string{"simulate", f}, &out, &errb); code != exitPass {
				t.Fatalf("exit %d: %s", code, errb.String())
			}
			if _, err := sim.Read(bytes.NewReader(out.Bytes()), f); err != nil {
				t.Errorf("output does not read back: %v", err)
			}
		})
	}
}
