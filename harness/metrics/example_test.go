package metrics_test

import (
	"fmt"

	"trackgate/harness/metrics"
)

// A harbour approach: three vessels in truth, three tracks. By hand, with
// c = 20 m and p = 2: the pairs at 5 m and 12 m cost 25 + 144 = 169, the
// third vessel is missed (20²/2 = 200) and the track at (500, 500) is false
// (200), so GOSPA = √569 ≈ 23.85 m.
func ExampleWorkspace_GOSPA() {
	vessels := [][]float64{{0, 0}, {100, 0}, {200, 50}}
	tracks := [][]float64{{3, 4}, {100, 12}, {500, 500}}
	var w metrics.Workspace
	g, err := w.GOSPA(vessels, tracks, metrics.Params{Order: 2, Cutoff: 20})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("GOSPA %.2f m: localisation %g, missed %g (%d), false %g (%d)\n",
		g.Value, g.Localisation, g.Missed, g.Misses, g.False, g.FalseTracks)
	fmt.Println("matches:", w.Matches())
	// Output:
	// GOSPA 23.85 m: localisation 169, missed 200 (1), false 200 (1)
	// matches: [0 1 -1]
}

// Four seeds, per-run mean GOSPA of a candidate and a baseline tracker. The
// worsening is 0.5, 1.5, 0.5, 1.5 m: mean 1, s = 0.5774, and with the table
// value t₃(0.95) = 2.353 the one-sided 95% lower bound is
// 1 − 2.353·0.5774/2 = 0.32 m, above 0: the gate fails. With a minimum
// effect of 0.5 m it passes. The two-sided 95% interval, for display, uses
// t₃(0.975) = 3.182: 1 ∓ 3.182·0.5774/2 = [0.08, 1.92] m.
func ExamplePaired_Compare() {
	baseline := []float64{4.0, 6.0, 5.0, 3.5}
	candidate := []float64{4.5, 7.5, 5.5, 5.0}
	v, err := metrics.Paired{}.Compare("mean GOSPA", candidate, baseline)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("estimate %.2f, bound [%.2f, %v), pass %v\n", v.Estimate, v.Lo, v.Hi, v.Pass)
	v, _ = metrics.Paired{MinEffect: 0.5}.Compare("mean GOSPA", candidate, baseline)
	fmt.Printf("with minimum effect 0.5: pass %v\n", v.Pass)
	lo, hi, _ := metrics.MeanInterval([]float64{0.5, 1.5, 0.5, 1.5}, 0.95)
	fmt.Printf("two-sided interval [%.2f, %.2f]\n", lo, hi)
	// Output:
	// estimate 1.00, bound [0.32, +Inf), pass false
	// with minimum effect 0.5: pass true
	// two-sided interval [0.08, 1.92]
}

// Two Monte Carlo runs of a filter with a scalar state. The average of two
// χ²₁ values is checked against χ²₂/2, whose quantiles have the closed form
// −ln(1 − q): the 95% interval is [−ln 0.975, −ln 0.025] = [0.025, 3.689].
// Step 0 averages 1 (inside), step 1 averages 5 (outside).
func ExampleCheckConsistency() {
	nees := [][]float64{{0.5, 1.5}, {4, 6}}
	c, err := metrics.CheckConsistency(nees, 1, 0.95)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range c.Steps {
		fmt.Printf("step %d: mean %.2f in [%.3f, %.3f]: %v\n", s.Step, s.Mean, s.Lo, s.Hi, s.Inside)
	}
	fmt.Println("inside fraction:", c.InsideFraction)
	fmt.Println(metrics.ConsistentSteps("nees", c, 0.9).Pass)
	// Output:
	// step 0: mean 1.00 in [0.025, 3.689]: true
	// step 1: mean 5.00 in [0.025, 3.689]: false
	// inside fraction: 0.5
	// false
}
