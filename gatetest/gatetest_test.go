package gatetest

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
)

const stock = "../scenarios/"

func noCI(string) string { return "" }

// recorder is a testing.TB that keeps what Check reports.
type recorder struct {
	testing.TB
	errors, logs []string
	fatal        bool
}

func (r *recorder) Helper()        {}
func (r *recorder) Error(a ...any) { r.errors = append(r.errors, fmt.Sprint(a...)) }
func (r *recorder) Log(a ...any)   { r.logs = append(r.logs, fmt.Sprint(a...)) }
func (r *recorder) Fatalf(f string, a ...any) {
	r.fatal = true
	r.errors = append(r.errors, fmt.Sprintf(f, a...))
}

// nudged is the reference with its first track's first mean component
// moved by 5 cm from step `at` on: an estimation regression.
type nudged struct{ at int }

func (n nudged) Ready() protocol.Ready {
	r := Reference().Ready()
	r.Name = "nudged"
	return r
}

func (n nudged) Begin(s protocol.Start) (protocol.StepFunc, error) {
	step, _ := Reference().Begin(s)
	return func(scan mot.Scan) (mot.Frame, error) {
		f, err := step(scan)
		if err == nil && scan.Step >= n.at && len(f.Tracks) > 0 {
			f.Tracks = slices.Clone(f.Tracks)
			f.Tracks[0].Mean = slices.Clone(f.Tracks[0].Mean)
			f.Tracks[0].Mean[0] += 0.05
		}
		return f, err
	}, nil
}

// TestReferenceInProcess: the reference tracker in process, blessed into
// an empty folder and checked again, passes against both the reference and
// its goldens.
func TestReferenceInProcess(t *testing.T) {
	dir := t.TempDir()
	o := Options{Scenarios: []string{stock + "tie-mirror-pair.yaml", stock + "crossing-*.yaml"}, Golden: dir, Runs: 2, Getenv: noCI, Workers: 2}
	o.Update = true
	var rec recorder
	s := Check(&rec, Reference(), o)
	if len(rec.errors) > 0 || s == nil {
		t.Fatalf("blessing run reported %q", rec.errors)
	}
	if !strings.Contains(strings.Join(rec.logs, "\n"), "new") {
		t.Errorf("no note of the goldens written: %q", rec.logs)
	}
	tapes, _ := filepath.Glob(filepath.Join(dir, "*", "run-*.tape.jsonl"))
	// tie-mirror-pair has one run of its own, so its golden set is run 0
	// only, whatever Runs says; crossing-harbour-vessels has ten.
	if len(tapes) != 3 {
		t.Errorf("%d scan tapes blessed, want 3 (1 of tie-mirror-pair, 2 of crossing-harbour-vessels)", len(tapes))
	}
	o.Update = false
	rec = recorder{}
	s = Check(&rec, Reference(), o)
	if len(rec.errors) > 0 {
		t.Fatalf("check against fresh goldens reported %q", rec.errors)
	}
	if s.Against != "both" || len(s.Scenarios) != 2 || s.Tracker.Name != "trackgate-reference" {
		t.Errorf("suite against %s, %d scenarios, tracker %q", s.Against, len(s.Scenarios), s.Tracker.Name)
	}
}

// TestTies: changed associations judged ties are listed per run, by check
// and step.
func TestTies(t *testing.T) {
	s := &result.Suite{Scenarios: []result.Scenario{{Name: "tie-mirror-pair", Runs: []result.Run{
		{Index: 0, Status: result.Tie, Checks: []result.Check{
			{Name: "reference", Status: result.Tie, Ties: []result.Divergence{{Step: 1}}},
			{Name: "conformance", Status: result.Tie, Ties: []result.Divergence{{Step: 1}, {Step: 2}}},
		}},
		{Index: 1, Status: result.Pass},
	}}}}
	got := Ties(s)
	want := []string{"tie-mirror-pair run 0: ties (not failures) at reference step 1, conformance step 1, conformance step 2"}
	if !slices.Equal(got, want) {
		t.Errorf("Ties = %q, want %q", got, want)
	}
	if f := Failures(s); len(f) != 0 {
		t.Errorf("ties listed as failures: %q", f)
	}
}

// TestRegressionReported: a tracker whose estimate departs at step 6 fails
// with that step named, against the reference and against goldens blessed
// from the unchanged tracker under the same name.
func TestRegressionReported(t *testing.T) {
	dir := t.TempDir()
	o := Options{Scenarios: []string{stock + "crossing-harbour-vessels.yaml"}, Golden: dir, Runs: 1, Getenv: noCI, Name: "harbour"}
	o.Update = true
	if _, _, err := Run(t.Context(), Reference(), o); err != nil {
		t.Fatal(err)
	}
	o.Update = false
	var rec recorder
	s := Check(&rec, nudged{at: 6}, o)
	if s.Status != result.Fail || len(rec.errors) != 1 {
		t.Fatalf("status %s, errors %q; want one failing run", s.Status, rec.errors)
	}
	e := rec.errors[0]
	if !strings.HasPrefix(e, "crossing-harbour-vessels run 0 (seed ") || !strings.Contains(e, "at step 6, estimate:") {
		t.Errorf("failure %q does not name the run and its first divergence at step 6", e)
	}
	var golden bool
	for _, c := range s.Scenarios[0].Runs[0].Checks {
		golden = golden || (c.Name == "golden" && c.Status == result.Fail)
	}
	if !golden {
		t.Error("the golden comparison did not fail")
	}
}

// TestBadOptions: what prevents any run is one fatal report.
func TestBadOptions(t *testing.T) {
	for _, tt := range []struct {
		name string
		o    Options
		want string
	}{
		{"no scenario", Options{Scenarios: []string{stock + "none-*.yaml"}}, "matches no file"},
		{"update without folder", Options{Scenarios: []string{stock + "tie-mirror-pair.yaml"}, Update: true}, "no golden folder"},
		{"CI refuses update", Options{Scenarios: []string{stock + "tie-mirror-pair.yaml"}, Update: true, Golden: "unused",
			Getenv: func(k string) string {
				if k == "CI" {
					return "true"
				}
				return ""
			}}, "CI mode forbids"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			if tt.o.Golden == "unused" {
				tt.o.Golden = t.TempDir()
			}
			var rec recorder
			if s := Check(&rec, Reference(), tt.o); s != nil || !rec.fatal || !strings.Contains(strings.Join(rec.errors, ""), tt.want) {
				t.Errorf("errors %q (fatal %v), want a fatal report containing %q", rec.errors, rec.fatal, tt.want)
			}
		})
	}
	if _, _, err := Run(t.Context(), nil, Options{}); err == nil {
		t.Error("a nil tracker was accepted")
	}
}

// TestFirstFailure: the earliest divergence wins, and at the same step a
// fault outranks a regression; a failing check without a divergence comes
// after any that has one.
func TestFirstFailure(t *testing.T) {
	r := result.Run{Status: result.Faulted, Checks: []result.Check{
		{Name: "reference", Status: result.Fail, First: &result.Divergence{Step: 4, Kind: "estimate", Message: "off"}},
		{Name: "golden", Status: result.Fail, Message: "metrics differ"},
		{Name: "identity", Status: result.Tie, First: &result.Divergence{Step: 1, Kind: "identity", Message: "tie"}},
		{Name: "tracker", Status: result.Faulted, First: &result.Divergence{Step: 4, Kind: "fault", Message: "crashed"}},
	}}
	if got, want := firstFailure(r), "tracker fault at step 4, fault: crashed"; got != want {
		t.Errorf("firstFailure = %q, want %q", got, want)
	}
	r.Checks = r.Checks[1:2]
	if got, want := firstFailure(r), "golden fail at metrics differ"; got != want {
		t.Errorf("firstFailure = %q, want %q", got, want)
	}
}

// BenchmarkRun measures Run on one stock scenario, 10 runs, the reference
// in process against the reference: what a team's go test pays per
// scenario besides its own tracker.
func BenchmarkRun(b *testing.B) {
	o := Options{Scenarios: []string{stock + "crossing-harbour-vessels.yaml"}, Runs: 10, Getenv: noCI}
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := Run(b.Context(), Reference(), o); err != nil {
			b.Fatal(err)
		}
	}
}

// TestUnloadableScenario: a scenario file that does not load is one
// failure naming the file and what is wrong with it.
func TestUnloadableScenario(t *testing.T) {
	bad := filepath.Join(t.TempDir(), "sluice-gate.yaml")
	if err := os.WriteFile(bad, []byte("format: 1\nname: sluice-gate\nsteps: many\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	var rec recorder
	s := Check(&rec, Reference(), Options{Scenarios: []string{bad, stock + "tie-mirror-pair.yaml"}, Getenv: noCI})
	if s.Status != result.Error || len(rec.errors) != 1 {
		t.Fatalf("status %s, errors %q; want one error", s.Status, rec.errors)
	}
	if e := rec.errors[0]; !strings.HasPrefix(e, "sluice-gate: not run: ") || !strings.Contains(e, "steps") {
		t.Errorf("failure %q does not say why the scenario was not run", e)
	}
}
