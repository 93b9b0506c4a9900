package metrics

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestStudentTQuantiles pins the quantiles the paired gate relies on to a
// printed table: NIST/SEMATECH e-Handbook of Statistical Methods (2011),
// §1.3.6.7.2, upper critical values of Student's t, α = 0.025: ν = 1 12.706,
// ν = 9 2.262, ν = 29 2.045, ν = 100 1.984 (3 decimals).
func TestStudentTQuantiles(t *testing.T) {
	for _, c := range []struct{ nu, want float64 }{{1, 12.706}, {9, 2.262}, {29, 2.045}, {100, 1.984}} {
		got := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: c.nu}.Quantile(0.975)
		if math.Abs(got-c.want) > 5e-4 {
			t.Errorf("t quantile 0.975 with ν = %g = %.5f, want %.3f", c.nu, got, c.want)
		}
	}
}

// TestPairedStudentSleep checks the interval against the paired example of
// W. S. Gosset ("Student"), "The probable error of a mean", Biometrika 6(1),
// 1908: extra hours of sleep of ten patients under two drugs (data of Cushny
// and Peebles). Differences 1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4,
// mean 1.58; the 95% interval [0.7001, 2.4599] and t = 4.062 with 9 degrees
// of freedom are from memory (the paired t test as printed by statistics
// packages for this data set).
func TestPairedStudentSleep(t *testing.T) {
	drug1 := []float64{0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0}
	drug2 := []float64{1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4}
	v, err := Paired{}.Compare("sleep", drug2, drug1)
	if err != nil {
		t.Fatal(err)
	}
	if !closeRel(v.Estimate, 1.58, 1e-12) || math.Abs(v.Lo-0.7001) > 1e-4 || math.Abs(v.Hi-2.4599) > 1e-4 {
		t.Errorf("Compare = %.6f [%.6f, %.6f], want 1.58 [0.7001, 2.4599]", v.Estimate, v.Lo, v.Hi)
	}
	// Independent recomputation: half-width = t₉(0.975)·s/√10 with the NIST
	// table value t₉ = 2.262 (3 decimals).
	_, sd := meanSD([]float64{1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4})
	if half := (v.Hi - v.Lo) / 2; math.Abs(half-2.262*sd/math.Sqrt(10)) > 1e-3 {
		t.Errorf("half-width %g, want 2.262·%g/√10", half, sd)
	}
	if tStat := v.Estimate / (sd / math.Sqrt(10)); math.Abs(tStat-4.062) > 1e-3 {
		t.Errorf("t statistic %g, want 4.062", tStat)
	}
	if v.Pass {
		t.Errorf("candidate 1.58 h worse with interval above 0 passed: %s", v.Reason)
	}
	// Two-sided p-value 0.002833 for t = 4.062 with 9 degrees of freedom
	// (from memory, as above); the gate reports the one-sided half.
	if math.Abs(2*v.PValue-0.002833) > 5e-7 || v.Test != "paired t" {
		t.Errorf("PValue = %.7f (%s), want 0.002833/2 from the paired t test", v.PValue, v.Test)
	}
	// A minimum effect of 1 h lies above the lower bound 0.70: pass.
	v, _ = Paired{MinEffect: 1}.Compare("sleep", drug2, drug1)
	if !v.Pass || !strings.Contains(v.Reason, "minimum effect") {
		t.Errorf("MinEffect 1: Pass = %v (%s), want pass citing the minimum effect", v.Pass, v.Reason)
	}
	// Higher is better: drug 2 is then an improvement.
	v, _ = Paired{HigherIsBetter: true}.Compare("sleep", drug2, drug1)
	if !v.Pass || !closeRel(v.Estimate, -1.58, 1e-12) {
		t.Errorf("HigherIsBetter: %+v, want pass with estimate -1.58", v)
	}
}

func TestPairedDecisions(t *testing.T) {
	base := []float64{3.1, 2.7, 4.0, 3.3, 2.9, 3.8}
	if (Paired{}).Validate() != nil || (Paired{Confidence: 0.99, MinEffect: 0.2}).Validate() != nil {
		t.Error("valid gate settings rejected")
	}
	v, err := Paired{}.Compare("same", base, base)
	if err != nil {
		t.Fatal(err)
	}
	if !v.Pass || v.Estimate != 0 || v.Lo != 0 || v.Hi != 0 {
		t.Errorf("identical samples: %+v, want pass with a zero interval", v)
	}
	// A constant worsening has a zero-width interval at the shift.
	shifted := make([]float64, len(base))
	for i := range base {
		shifted[i] = base[i] + 0.5
	}
	if v, _ := (Paired{}).Compare("const", shifted, base); v.Pass || !closeRel(v.Lo, 0.5, 1e-12) {
		t.Errorf("constant worsening 0.5: %+v, want fail at 0.5", v)
	}
	if v, _ := (Paired{MinEffect: 0.5}).Compare("const", shifted, base); !v.Pass {
		t.Errorf("constant worsening equal to the minimum effect failed: %s", v.Reason)
	}
	for _, c := range []struct {
		name string
		a, b []float64
	}{
		{"lengths", []float64{1, 2}, []float64{1}},
		{"one pair", []float64{1}, []float64{1}},
		{"nan", []float64{1, math.NaN()}, []float64{1, 2}},
		{"inf baseline", []float64{1, 2}, []float64{math.Inf(1), 2}},
	} {
		if _, err := (Paired{}).Compare(c.name, c.a, c.b); err == nil {
			t.Errorf("%s: no error", c.name)
		}
	}
	for _, g := range []Paired{{Confidence: 1}, {Confidence: -0.1}, {MinEffect: -1}, {MinEffect: math.NaN()}} {
		if g.Validate() == nil || (Ranked(g)).Validate() == nil {
			t.Errorf("Paired%+v.Validate() = nil, want an error", g)
		}
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("Ranked%+v did not panic", g)
				}
			}()
			Ranked(g).Compare("bad", base, base)
		}()
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("Paired%+v did not panic", g)
				}
			}()
			g.Compare("bad", base, base)
		}()
	}
}

// TestPairedSimulation runs the gate on seeded simulated per-run metrics: a
// shared per-seed difficulty plus independent noise. With no true change
// the gate fails only when the one-sided 2.5% tail is hit (expected 5 of
// 200 trials; the bound 13 is 3.6 binomial standard deviations above); with
// a clear shift of 1 (noise s.d. 0.5, 30 runs, so the interval half-width
// is about 0.26) it fails in every trial.
func TestPairedSimulation(t *testing.T) {
	r := testRand(t, 7)
	const trials, runs = 200, 30
	sim := func(shift float64) (cand, base []float64) {
		cand, base = make([]float64, runs), make([]float64, runs)
		for i := range cand {
			difficulty := 5 + 2*r.NormFloat64()
			base[i] = difficulty + 0.5*r.NormFloat64()
			cand[i] = difficulty + shift + 0.5*r.NormFloat64()
		}
		return cand, base
	}
	count := func(shift float64, g Paired) int {
		fails := 0
		for range trials {
			c, b := sim(shift)
			v, err := g.Compare("sim", c, b)
			if err != nil {
				t.Fatal(err)
			}
			if !v.Pass {
				fails++
			}
		}
		return fails
	}
	if n := count(0, Paired{}); n > 13 {
		t.Errorf("noise only: gate failed %d of %d trials, want about 5", n, trials)
	}
	if n := count(1, Paired{}); n != trials {
		t.Errorf("shift 1: gate failed %d of %d trials, want all", n, trials)
	}
	if n := count(-1, Paired{}); n != 0 {
		t.Errorf("improvement by 1: gate failed %d of %d trials, want none", n, trials)
	}
	// A minimum effect of 2 is far above a true shift of 1: never fails.
	if n := count(1, Paired{MinEffect: 2}); n != 0 {
		t.Errorf("shift 1 with minimum effect 2: gate failed %d of %d trials, want none", n, trials)
	}
}

func TestAbsoluteGates(t *testing.T) {
	if v := AtMost("gospa", 3.9, 4); !v.Pass || v.Estimate != 3.9 || v.Limit != 4 {
		t.Errorf("AtMost(3.9, 4) = %+v", v)
	}
	if v := AtMost("gospa", 4.1, 4); v.Pass {
		t.Errorf("AtMost(4.1, 4) passed")
	}
	if v := AtMost("gospa", math.NaN(), 4); v.Pass {
		t.Errorf("AtMost(NaN, 4) passed")
	}
	if v := AtLeast("inside", 0.95, 0.9); !v.Pass {
		t.Errorf("AtLeast(0.95, 0.9) failed")
	}
	if v := AtLeast("inside", math.NaN(), 0.9); v.Pass {
		t.Errorf("AtLeast(NaN, 0.9) passed")
	}
}
