package sim

import (
	"bytes"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/mot"
	"trackgate/harness/scenario"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/ that differ from the simulator's output")

func render(t testing.TB, spec *scenario.Spec, run mot.Run) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := Write(&b, Record{Scenario: spec.Name, Hash: spec.Hash, Run: run}); err != nil {
		t.Fatalf("Write: %v", err)
	}
	return b.Bytes()
}

// TestGolden pins the exact bytes of three runs of the quay scene. The
// goldens were checked by the statistical tests and by reading, never by
// pasting; -update rewrites only the files that differ. The cross-architecture
// test runs this test on arm64 and with GOAMD64=v3.
func TestGolden(t *testing.T) {
	spec := quayScene()
	for r := range spec.Runs {
		t.Run(fmt.Sprint(r), func(t *testing.T) {
			got := render(t, spec, Run(spec, r))
			path := filepath.Join("testdata", fmt.Sprintf("%s-run%d.jsonl", spec.Name, r))
			want, err := os.ReadFile(path)
			if bytes.Equal(got, want) {
				return
			}
			if *update {
				writeAtomic(t, path, got)
				t.Logf("rewrote %s", path)
				return
			}
			if err != nil {
				t.Fatalf("%v (run with -update to create it)", err)
			}
			t.Errorf("run %d differs from %s (-want +got):\n%s", r, path, cmp.Diff(strings.Split(string(want), "\n"), strings.Split(string(got), "\n")))
		})
	}
}

func writeAtomic(t *testing.T, path string, data []byte) {
	t.Helper()
	tmp, err := os.CreateTemp(filepath.Dir(path), ".golden-*")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		t.Fatal(err)
	}
	if err := tmp.Chmod(0o644); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		t.Fatal(err)
	}
	if err := tmp.Close(); err != nil {
		os.Remove(tmp.Name())
		t.Fatal(err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		os.Remove(tmp.Name())
		t.Fatal(err)
	}
}

func TestSameRunSameBytes(t *testing.T) {
	spec := quayScene()
	s, err := Prepare(spec)
	if err != nil {
		t.Fatal(err)
	}
	for r := range 4 {
		a := render(t, spec, s.Run(r))
		b := render(t, spec, Run(quayScene(), r))
		if !bytes.Equal(a, b) {
			t.Errorf("run %d: two simulations differ", r)
		}
	}
	if bytes.Equal(render(t, spec, s.Run(0)), render(t, spec, s.Run(1))) {
		t.Error("runs 0 and 1 are identical")
	}
}

// TestStructure checks the shape of a run of the quay scene against the
// spec: steps and times, the living objects at each step, a truth start at
// the prior mean where DrawStart is false, the scripted scan in the order
// written, and origins only in the truth.
func TestStructure(t *testing.T) {
	spec := quayScene()
	run := Run(spec, 1)
	if run.Index != 1 || run.Seed != RunSeed(spec.Seed, 1) {
		t.Errorf("Index, Seed = %d, %d; want 1, %d", run.Index, run.Seed, RunSeed(spec.Seed, 1))
	}
	if len(run.Scans) != spec.Steps || len(run.Truth) != spec.Steps {
		t.Fatalf("%d scans and %d truth records, want %d", len(run.Scans), len(run.Truth), spec.Steps)
	}
	for k := range spec.Steps {
		sc, tr := run.Scans[k], run.Truth[k]
		if sc.Step != k || tr.Step != k || sc.Time != float64(k)*spec.Model.Interval {
			t.Errorf("step %d: scan step %d time %v, truth step %d", k, sc.Step, sc.Time, tr.Step)
		}
		var want []string
		for _, o := range spec.Objects {
			if o.Alive(k) {
				want = append(want, o.ID)
			}
		}
		var got []string
		for _, o := range tr.Objects {
			got = append(got, o.Object)
		}
		if diff := cmp.Diff(want, got); diff != "" {
			t.Errorf("step %d: living objects (-want +got):\n%s", k, diff)
		}
		if len(tr.Origins) != len(sc.Detections) {
			t.Errorf("step %d: %d origins for %d detections", k, len(tr.Origins), len(sc.Detections))
		}
	}
	if diff := cmp.Diff(spec.Objects[0].Mean, run.Truth[0].Objects[0].X); diff != "" {
		t.Errorf("pilot starts away from its prior mean (-want +got):\n%s", diff)
	}
	if start := run.Truth[4].Objects[2].X; cmp.Equal(start, spec.Objects[2].Mean) {
		t.Errorf("workboat draws its start but starts at the mean %v", start)
	}
	sc := run.Scans[6]
	want := []mot.Detection{{ID: sc.Detections[0].ID, Z: []float64{-830, 190}}, {ID: sc.Detections[0].ID + 1, Z: []float64{1200.5, -750.25}}}
	if diff := cmp.Diff(want, sc.Detections); diff != "" {
		t.Errorf("scripted scan (-want +got):\n%s", diff)
	}
	wantOrigins := []mot.Origin{{Detection: want[0].ID, Object: "pilot"}, {Detection: want[1].ID}}
	if diff := cmp.Diff(wantOrigins, run.Truth[6].Origins); diff != "" {
		t.Errorf("scripted origins (-want +got):\n%s", diff)
	}
}

// TestStreamsIndependent checks the sub-stream design: scripting a scan
// changes neither the truth nor any other scan, and adding an object
// changes no other object's trajectory.
func TestStreamsIndependent(t *testing.T) {
	base := quayScene()
	base.Scripted = nil
	scripted := quayScene()
	for r := range 3 {
		a, b := Run(base, r), Run(scripted, r)
		if diff := cmp.Diff(a.Truth, b.Truth, cmp.FilterPath(func(p cmp.Path) bool {
			return strings.HasSuffix(p.String(), "Origins")
		}, cmp.Ignore())); diff != "" {
			t.Errorf("run %d: scripting step 6 changed the truth (-plain +scripted):\n%s", r, diff)
		}
		for k := range a.Scans {
			if k == 6 {
				continue
			}
			za, zb := zs(a.Scans[k]), zs(b.Scans[k])
			if diff := cmp.Diff(za, zb); diff != "" {
				t.Errorf("run %d step %d: scripting step 6 changed this scan (-plain +scripted):\n%s", r, k, diff)
			}
		}
	}
	more := quayScene()
	more.Objects = append(more.Objects, scenario.Object{Object: mot.Object{
		ID: "dredger", Mean: []float64{50, 0, 50, 0}, Cov: mot.Identity(4), Appear: 2, Disappear: -1,
	}, DrawStart: true})
	a, b := Run(quayScene(), 0), Run(more, 0)
	for k := range a.Truth {
		if diff := cmp.Diff(a.Truth[k].Objects, b.Truth[k].Objects[:len(a.Truth[k].Objects)]); diff != "" {
			t.Errorf("step %d: adding an object moved the others (-before +after):\n%s", k, diff)
		}
	}
}

func zs(sc mot.Scan) [][]float64 {
	out := [][]float64{}
	for _, d := range sc.Detections {
		out = append(out, d.Z)
	}
	return out
}

func TestPrepareRejects(t *testing.T) {
	tests := []struct {
		name  string
		edit  func(*scenario.Spec)
		field string
	}{
		{"nil model dims", func(s *scenario.Spec) { s.Model.StateDim = 0 }, "model.state-dim"},
		{"F shape", func(s *scenario.Spec) { s.Model.F = mot.Identity(3) }, "model.F"},
		{"H shape", func(s *scenario.Spec) { s.Model.H = mot.NewMat(2, 3) }, "model.H"},
		{"Q indefinite", func(s *scenario.Spec) { s.Model.Q.Set(0, 0, -1) }, "model.Q"},
		{"R wrong size", func(s *scenario.Spec) { s.Model.R = mot.Identity(3) }, "model.R"},
		{"PD", func(s *scenario.Spec) { s.Model.PD = 1.5 }, "detection-probability"},
		{"clutter NaN", func(s *scenario.Spec) { s.Model.ClutterMean = nanF() }, "clutter.mean-count"},
		{"clutter box", func(s *scenario.Spec) { s.Model.ClutterMax = []float64{0} }, "clutter.region"},
		{"clutter inverted", func(s *scenario.Spec) { s.Model.ClutterMax = []float64{-2000, 0} }, "clutter.region"},
		{"interval", func(s *scenario.Spec) { s.Model.Interval = 0 }, "interval"},
		{"steps", func(s *scenario.Spec) { s.Steps = -1 }, "steps"},
		{"duplicate id", func(s *scenario.Spec) { s.Objects[1].ID = "pilot" }, "objects[1].id"},
		{"empty id", func(s *scenario.Spec) { s.Objects[0].ID = "" }, "objects[0].id"},
		{"mean length", func(s *scenario.Spec) { s.Objects[2].Mean = []float64{1} }, "objects[2].prior.mean"},
		{"disappear", func(s *scenario.Spec) { s.Objects[2].Disappear = 4 }, "objects[2].disappear"},
		{"appear", func(s *scenario.Spec) { s.Objects[0].Appear = -3 }, "objects[0].appear"},
		{"prior cov", func(s *scenario.Spec) { s.Objects[2].Cov = mot.NewMat(2, 2) }, "objects[2].prior.cov"},
		{"scripted step", func(s *scenario.Spec) { s.Scripted[0].Step = 12 }, "scripted[0].step"},
		{"scripted twice", func(s *scenario.Spec) { s.Scripted = append(s.Scripted, s.Scripted[0]) }, "scripted[1].step"},
		{"scripted length", func(s *scenario.Spec) { s.Scripted[0].Detections[1].Z = []float64{1} }, "scripted[0].detections[1].at"},
		{"scripted from", func(s *scenario.Spec) { s.Scripted[0].Detections[0].Object = "ghost" }, "scripted[0].detections[0].from"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			spec := quayScene()
			tt.edit(spec)
			_, err := Prepare(spec)
			if err == nil {
				t.Fatalf("Prepare succeeded, want an error naming %s", tt.field)
			}
			if !strings.HasPrefix(err.Error(), `sim: scenario "quay-launches": `+tt.field) {
				t.Errorf("Prepare error = %q, want it to start with the scenario and %s", err, tt.field)
			}
			defer func() {
				if recover() == nil {
					t.Error("Run did not panic on a spec Prepare rejects")
				}
			}()
			Run(spec, 0)
		})
	}
	if _, err := Prepare(nil); err == nil {
		t.Error("Prepare(nil) succeeded")
	}
}

func nanF() float64 { var z float64; return z / z }

// TestConcurrentRuns checks that one Sim serves many goroutines (run it
// with -race) and that the runs do not depend on one another.
func TestConcurrentRuns(t *testing.T) {
	spec := quayScene()
	s, err := Prepare(spec)
	if err != nil {
		t.Fatal(err)
	}
	want := make([][]byte, 8)
	for r := range want {
		want[r] = render(t, spec, s.Run(r))
	}
	got := make([][]byte, 8)
	done := make(chan int)
	for r := range got {
		go func() {
			var b bytes.Buffer
			if err := Write(&b, Record{Scenario: spec.Name, Hash: spec.Hash, Run: s.Run(r)}); err != nil {
				t.Error(err)
			}
			got[r] = b.Bytes()
			done <- r
		}()
	}
	for range got {
		<-done
	}
	for r := range got {
		if !bytes.Equal(got[r], want[r]) {
			t.Errorf("run %d differs when simulated concurrently", r)
		}
	}
}
