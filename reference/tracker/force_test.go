package tracker

import (
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/mot"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
)

// TestStepWithForcedSwap: in quayScan the pallets tie exactly; forcing the
// swapped event updates each pallet with the other return, leaves the
// forklift's cluster as StepFrom has it, and leaves the ranking unchanged.
//
// With F = I, H = I, P⁻ = 0.5·I and R = 0.5·I the update is worked by
// hand: S = P⁻ + R = I, K = P⁻S⁻¹ = 0.5·I, x = x⁻ + K(z − x⁻) and
// P = (I − K)P⁻ = 0.25·I (R. E. Kalman, "A new approach to linear
// filtering and prediction problems", J. Basic Eng. 82(1):35–45, 1960;
// Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
// to Tracking and Navigation", Wiley, 2001, §5.2.3, equation numbers from
// memory).
func TestStepWithForcedSwap(t *testing.T) {
	md, states, scan := quayScan()
	plain, err := StepFrom(md, states, scan, 5, 0)
	if err != nil {
		t.Fatal(err)
	}
	east, west := plain.Objects[0].Detection, plain.Objects[1].Detection
	if east == west || east == mot.NoDetection || west == mot.NoDetection {
		t.Fatalf("pallets took %d and %d: the scene is meant to give each a return", east, west)
	}
	d, err := StepWith(md, states, scan, 5, 0, map[string]int{"pallet-east": west, "pallet-west": east})
	if err != nil {
		t.Fatal(err)
	}
	z := map[int][]float64{}
	for _, det := range scan.Detections {
		z[det.ID] = det.Z
	}
	for i, want := range []struct {
		det  int
		from []float64
	}{{west, []float64{1, 0}}, {east, []float64{-1, 0}}} {
		od := d.Objects[i]
		if od.Detection != want.det {
			t.Errorf("%s: detection %d, want the forced %d", od.Object, od.Detection, want.det)
		}
		for c := range 2 {
			m := want.from[c] + 0.5*(z[want.det][c]-want.from[c])
			if !near(od.Mean[c], m, 1e-15, 1e-15) {
				t.Errorf("%s: mean[%d] = %.17g, want %.17g", od.Object, c, od.Mean[c], m)
			}
		}
		if !near(od.Cov.Data[0], 0.25, 1e-15, 0) || !near(od.Cov.Data[3], 0.25, 1e-15, 0) || od.Cov.Data[1] != 0 || od.Cov.Data[2] != 0 {
			t.Errorf("%s: covariance %v, want 0.25·I", od.Object, od.Cov.Data)
		}
		// The swap costs the same as the best, so the innovation is
		// as large: d² = |z − x⁻|² with S = I.
		d2 := math.Pow(z[want.det][0]-want.from[0], 2) + math.Pow(z[want.det][1]-want.from[1], 2)
		if !near(od.NIS, d2, 1e-12, 1e-12) {
			t.Errorf("%s: NIS %.17g, want %.17g", od.Object, od.NIS, d2)
		}
	}
	if diff := cmp.Diff(plain.Objects[2], d.Objects[2], cmpopts.EquateNaNs()); diff != "" {
		t.Errorf("the forklift's cluster is not forced, yet it changed (-StepFrom +StepWith):\n%s", diff)
	}
	strip := func(d Detail) Detail { d.Objects = nil; return d }
	if diff := cmp.Diff(strip(plain), strip(d), cmpopts.EquateNaNs()); diff != "" {
		t.Errorf("the ranking changed under forcing (-StepFrom +StepWith):\n%s", diff)
	}
}

// TestStepWithNothingForcedIsStepFrom: an empty or nil force gives
// StepFrom's detail, and forcing the best hypothesis changes nothing.
func TestStepWithNothingForcedIsStepFrom(t *testing.T) {
	md, states, scan := quayScan()
	plain, err := StepFrom(md, states, scan, 5, 0)
	if err != nil {
		t.Fatal(err)
	}
	best := map[string]int{}
	for _, od := range plain.Objects {
		best[od.Object] = od.Detection
	}
	for name, force := range map[string]map[string]int{"nil": nil, "empty": {}, "the best": best} {
		d, err := StepWith(md, states, scan, 5, 0, force)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if diff := cmp.Diff(plain, d, cmpopts.EquateNaNs()); diff != "" {
			t.Errorf("%s: differs from StepFrom:\n%s", name, diff)
		}
	}
}

// TestStepWithBadForce: a force that is not a feasible event of whole
// clusters is an error naming what is wrong, never a panic.
func TestStepWithBadForce(t *testing.T) {
	md, states, scan := quayScan()
	sure := md
	sure.PD = 1
	cases := []struct {
		name  string
		model mot.Model
		force map[string]int
		want  string
	}{
		{"half a cluster", md, map[string]int{"pallet-east": 22}, "all or none"},
		{"unknown object", md, map[string]int{"crane": 21}, `"crane" is not live`},
		{"detection not in the scan", md, map[string]int{"forklift": 99}, "not in the scan"},
		{"outside the gate", md, map[string]int{"forklift": 21}, "outside its gate"},
		{"taken twice", md, map[string]int{"pallet-east": 21, "pallet-west": 21}, "taken once"},
		{"a miss with P_D = 1", sure, map[string]int{"forklift": mot.NoDetection}, "miss is impossible"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := StepWith(tc.model, states, scan, 5, 0, tc.force)
			if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "step 4") {
				t.Errorf("error %v, want one at step 4 saying %q", err, tc.want)
			}
		})
	}
}

// TestStepChainIsRun: StepFrom chained over a stock run, each step from
// the previous step's posteriors and a newly appearing object from its
// prior, reproduces RunAll bit for bit. A branch that follows another
// tracker after a tie is continued this way.
func TestStepChainIsRun(t *testing.T) {
	for _, name := range []string{"tie-mirror-pair", "lifecycle-warehouse-forklifts"} {
		spec, err := scenario.Load(filepath.Join("../../scenarios", name+".yaml"))
		if err != nil {
			t.Fatal(err)
		}
		run := sim.Run(spec, 0)
		cfg := ConfigFor(spec, 0)
		ex, err := RunAll(cfg, run)
		if err != nil {
			t.Fatal(err)
		}
		var prev Detail
		for k, scan := range run.Scans {
			var states []State
			for _, o := range cfg.Objects {
				if !o.Alive(scan.Step) {
					continue
				}
				i := slices.IndexFunc(prev.Objects, func(od ObjectDetail) bool { return od.Object == o.ID })
				if i < 0 {
					states = append(states, State{ID: o.ID, Mean: o.Mean, Cov: o.Cov, Predicted: true})
					continue
				}
				states = append(states, State{ID: o.ID, Mean: prev.Objects[i].Mean, Cov: prev.Objects[i].Cov})
			}
			d, err := StepWith(spec.Model, states, scan, 0, 0, nil)
			if err != nil {
				t.Fatalf("%s step %d: %v", name, k, err)
			}
			if diff := cmp.Diff(ex.Steps[k], d, cmpopts.EquateNaNs()); diff != "" {
				t.Fatalf("%s step %d: the chained step differs from the run:\n%s", name, k, diff)
			}
			prev = d
		}
	}
}

// FuzzStepWith: whatever association is forced on quayScan, StepWith
// returns an error or a detail in which every forced object took its
// forced detection, no detection twice, and finite posteriors; it never
// panics.
func FuzzStepWith(f *testing.F) {
	f.Add(uint8(0), int16(22), uint8(1), int16(21), uint8(2), int16(23))
	f.Add(uint8(0), int16(-1), uint8(1), int16(-1), uint8(2), int16(-1))
	f.Add(uint8(0), int16(21), uint8(0), int16(22), uint8(5), int16(99))
	f.Fuzz(func(t *testing.T, o1 uint8, d1 int16, o2 uint8, d2 int16, o3 uint8, d3 int16) {
		md, states, scan := quayScan()
		ids := []string{"pallet-east", "pallet-west", "forklift", "crane"}
		force := map[string]int{}
		for _, p := range []struct {
			o uint8
			d int16
		}{{o1, d1}, {o2, d2}, {o3, d3}} {
			force[ids[int(p.o)%len(ids)]] = int(p.d)
		}
		d, err := StepWith(md, states, scan, 3, 0, force)
		if err != nil {
			return
		}
		used := map[int]bool{}
		for _, od := range d.Objects {
			if want, ok := force[od.Object]; ok && od.Detection != want {
				t.Fatalf("%s took %d, forced %d", od.Object, od.Detection, want)
			}
			if od.Detection != mot.NoDetection {
				if used[od.Detection] {
					t.Fatalf("detection %d used twice", od.Detection)
				}
				used[od.Detection] = true
			}
			for _, v := range append(slices.Clone(od.Mean), od.Cov.Data...) {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("%s: posterior %v %v not finite", od.Object, od.Mean, od.Cov.Data)
				}
			}
		}
	})
}
