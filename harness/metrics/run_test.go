package metrics

import (
	"math"
	"strings"
	"testing"
)

// TestGOSPARunWarehouse checks per-step GOSPA on the warehouse run (see
// warehouse in score_test.go) with c = 5, p = 2 on positions, derived by
// hand: step 0 t1 is exactly c = 5 from a (one miss + one false, 12.5 +
// 12.5 = 25); step 1 t1 exact, t9 false (12.5); step 2 t2 is 3 from b (9),
// t9 false (12.5): 21.5; step 3 a missed (12.5), t2 3 from b (9): 21.5;
// steps 4 and 5 exact: 0.
func TestGOSPARunWarehouse(t *testing.T) {
	truth, frames, _ := warehouse()
	var w Workspace
	p := Params{Order: 2, Cutoff: 5, Components: []int{0, 2}}
	gs, err := w.GOSPARun(truth, frames, p)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{25, 12.5, 21.5, 21.5, 0, 0}
	if len(gs) != len(want) {
		t.Fatalf("%d steps, want %d", len(gs), len(want))
	}
	for k, g := range gs {
		if !closeRel(g.Power, want[k], 1e-12) {
			t.Errorf("step %d: GOSPA² = %g, want %g", k, g.Power, want[k])
		}
	}
	if gs[0].Misses != 1 || gs[0].FalseTracks != 1 || gs[3].Misses != 1 || gs[2].FalseTracks != 1 {
		t.Errorf("counts: %+v", gs)
	}
	mean, rms := Average(gs, p)
	if wm := (5 + math.Sqrt(12.5) + 2*math.Sqrt(21.5)) / 6; !closeRel(mean, wm, 1e-12) {
		t.Errorf("mean GOSPA = %g, want %g", mean, wm)
	}
	if wr := math.Sqrt(80.5 / 6); !closeRel(rms, wr, 1e-12) {
		t.Errorf("RMS GOSPA = %g, want %g", rms, wr)
	}
	if m, r := Average(nil, p); m != 0 || r != 0 {
		t.Errorf("Average(nil) = %g, %g", m, r)
	}
}

func TestGOSPARunErrors(t *testing.T) {
	var w Workspace
	p := Params{Cutoff: 5, Components: []int{0, 2}}
	truth, frames, _ := warehouse()
	frames[2].Tracks[1].Mean[2] = math.NaN()
	if _, err := w.GOSPARun(truth, frames, p); err == nil || !strings.Contains(err.Error(), `step 2: track "t2": component 2 is NaN`) {
		t.Errorf("NaN track: err = %v", err)
	}
	truth, frames, _ = warehouse()
	truth[4].Objects[1].X = []float64{1}
	if _, err := w.GOSPARun(truth, frames, p); err == nil || !strings.Contains(err.Error(), `step 4: object "b": has 1 components`) {
		t.Errorf("short object: err = %v", err)
	}
	truth, frames, _ = warehouse()
	if _, err := w.GOSPARun(truth, frames[:3], p); err == nil {
		t.Error("length mismatch accepted")
	}
	frames[1].Step = 9
	if _, err := w.GOSPARun(truth, frames, p); err == nil || !strings.Contains(err.Error(), "index 1") {
		t.Errorf("step mismatch: err = %v", err)
	}
}
