package metrics

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestStudentTQuantiles pins the quantiles the paired gate (one-sided,
// α = 0.05) and MeanInterval (two-sided, α = 0.025 per tail) rely on to a
// printed table: NIST/SEMATECH e-Handbook of Statistical Methods (2011),
// §1.3.6.7.2, upper critical values of Student's t (3 decimals):
// α = 0.025: ν = 1 12.706, ν = 9 2.262, ν = 29 2.045, ν = 100 1.984;
// α = 0.05: ν = 1 6.314, ν = 9 1.833, ν = 29 1.699, ν = 100 1.660.
func TestStudentTQuantiles(t *testing.T) {
	for _, c := range []struct{ q, nu, want float64 }{
		{0.975, 1, 12.706}, {0.975, 9, 2.262}, {0.975, 29, 2.045}, {0.975, 100, 1.984},
		{0.95, 1, 6.314}, {0.95, 9, 1.833}, {0.95, 29, 1.699}, {0.95, 100, 1.660},
	} {
		got := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: c.nu}.Quantile(c.q)
		if math.Abs(got-c.want) > 5e-4 {
			t.Errorf("t quantile %g with ν = %g = %.5f, want %.3f", c.q, c.nu, got, c.want)
		}
	}
}

// TestPairedStudentSleep checks the paired example of W. S. Gosset
// ("Student"), "The probable error of a mean", Biometrika 6(1), 1908: extra
// hours of sleep of ten patients under two drugs (data of Cushny and
// Peebles). Differences 1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4,
// mean 1.58; the two-sided 95% interval [0.7001, 2.4599], t = 4.062 with 9
// degrees of freedom and the two-sided p-value 0.002833 are from memory
// (the paired t test as printed by statistics packages for this data set).
// The two-sided interval is checked on MeanInterval; the gate's one-sided
// bound is recomputed from the published t statistic and the NIST table.
func TestPairedStudentSleep(t *testing.T) {
	drug1 := []float64{0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0}
	drug2 := []float64{1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4}
	diffs := []float64{1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4}
	lo, hi, err := MeanInterval(diffs, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(lo-0.7001) > 1e-4 || math.Abs(hi-2.4599) > 1e-4 {
		t.Errorf("MeanInterval = [%.6f, %.6f], want [0.7001, 2.4599]", lo, hi)
	}
	// Independent recomputation: half-width = t₉(0.975)·s/√10 with the NIST
	// table value t₉ = 2.262 (3 decimals).
	_, sd := meanSD(diffs)
	if half := (hi - lo) / 2; math.Abs(half-2.262*sd/math.Sqrt(10)) > 1e-3 {
		t.Errorf("half-width %g, want 2.262·%g/√10", half, sd)
	}
	if tStat := 1.58 / (sd / math.Sqrt(10)); math.Abs(tStat-4.062) > 1e-3 {
		t.Errorf("t statistic %g, want 4.062", tStat)
	}

	v, err := Paired{}.Compare("sleep", drug2, drug1)
	if err != nil {
		t.Fatal(err)
	}
	// One-sided 95% lower bound: L₁ = d̄ − t₉(0.95)·se with t₉(0.95) = 1.833
	// (NIST table above) and se = d̄/t = 1.58/4.062 from the published t
	// statistic: 1.58 − 1.833·0.38897 = 0.8670 (±1e-3 for the rounding of
	// the two printed values).
	wantLo := 1.58 - 1.833*1.58/4.062
	if !closeRel(v.Estimate, 1.58, 1e-12) || math.Abs(v.Lo-wantLo) > 1e-3 || !math.IsInf(v.Hi, 1) {
		t.Errorf("Compare = %.6f [%.6f, %g], want 1.58 [%.4f, +Inf]", v.Estimate, v.Lo, v.Hi, wantLo)
	}
	if v.Pass {
		t.Errorf("candidate 1.58 h worse with lower bound above 0 passed: %s", v.Reason)
	}
	// Two-sided p-value 0.002833 (from memory, as above); the gate reports
	// the one-sided half.
	if math.Abs(2*v.PValue-0.002833) > 5e-7 || v.Test != "paired t" {
		t.Errorf("PValue = %.7f (%s), want 0.002833/2 from the paired t test", v.PValue, v.Test)
	}
	// A minimum effect of 1 h lies above the lower bound 0.87: pass.
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
	if !v.Pass || v.Estimate != 0 || v.Lo != 0 || !math.IsInf(v.Hi, 1) || v.PValue != 1 {
		t.Errorf("identical samples: %+v, want pass with bound 0 and p = 1", v)
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
// the gate fails only when the one-sided 5% tail is hit (expected 10 of 200
// trials; the bound 22 is 3.9 binomial standard deviations above); with a
// clear shift of 1 (noise s.d. 0.5 per run, so s_d ≈ 0.71, 30 runs, and the
// one-sided bound lies about 0.22 below the mean) it fails in every trial.
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
	if n := count(0, Paired{}); n > 22 {
		t.Errorf("noise only: gate failed %d of %d trials, want about 10", n, trials)
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

// TestPairedOneSidedLevel is a case that separates a one-sided test at
// level 1 − c from the lower end of a two-sided c interval. Worsenings
// 1.5, 0.5, 0.5, 0.5, 0.5, 1.0, 1.0: mean 0.785714, s = 0.393398,
// se = s/√7 = 0.148690 (by hand). With c = 0.95 and δ = 0.45 the t
// statistic (0.785714 − 0.45)/0.148690 = 2.2578 lies between the NIST table
// values t₆ = 1.943 (α = 0.05) and 2.447 (α = 0.025) (NIST/SEMATECH
// e-Handbook of Statistical Methods, 2011, §1.3.6.7.2), so the one-sided
// p-value is in (0.025, 0.05): worse with confidence 0.95 by more than δ,
// the gate fails, although the two-sided 95% interval (lower end
// 0.785714 − 2.447·0.148690 = 0.4219) reaches below δ.
func TestPairedOneSidedLevel(t *testing.T) {
	d := []float64{1.5, 0.5, 0.5, 0.5, 0.5, 1.0, 1.0}
	zero := make([]float64, len(d))
	v, err := Paired{Confidence: 0.95, MinEffect: 0.45}.Compare("one-sided", d, zero)
	if err != nil {
		t.Fatal(err)
	}
	wantLo := 0.785714 - 1.943*0.148690
	if v.Pass || math.Abs(v.Lo-wantLo) > 1e-3 || !math.IsInf(v.Hi, 1) {
		t.Errorf("δ = 0.45: %+v, want fail with bound %.4f", v, wantLo)
	}
	if !(v.PValue > 0.025 && v.PValue < 0.05) {
		t.Errorf("δ = 0.45: p = %g, want in (0.025, 0.05)", v.PValue)
	}
	lo, _, err := MeanInterval(d, 0.95)
	if err != nil || math.Abs(lo-(0.785714-2.447*0.148690)) > 1e-3 || lo > 0.45 {
		t.Errorf("two-sided lower end %g (%v), want 0.4219, below δ", lo, err)
	}
	// δ = 0.5 lies above the one-sided bound 0.4968: t = 1.9215 < 1.943.
	v, _ = Paired{Confidence: 0.95, MinEffect: 0.5}.Compare("one-sided", d, zero)
	if !v.Pass || !(v.PValue > 0.05 && v.PValue < 0.1) {
		t.Errorf("δ = 0.5: %+v, want pass with p in (0.05, 0.1)", v)
	}
}

// TestGateDecisionMatchesPValue checks on seeded random inputs that both
// statistical gates fail exactly when their reported one-sided p-value is
// at the level 1 − c: p < 1 − c for the t gate, p ≤ 1 − c for the exact
// signed-rank gate (whose p-values are attained values of a discrete
// distribution), so that decision, documented rule and p-value agree.
func TestGateDecisionMatchesPValue(t *testing.T) {
	r := testRand(t, 61)
	for i := range 400 {
		n := 3 + r.IntN(25)
		conf := []float64{0.8, 0.9, 0.95, 0.99}[i%4]
		delta := []float64{0, 0.1, 0.4}[r.IntN(3)]
		a, b := make([]float64, n), make([]float64, n)
		for k := range a {
			b[k] = 4 + r.NormFloat64()
			a[k] = b[k] + 0.4*r.Float64() + 0.5*r.NormFloat64()
		}
		higher := r.IntN(2) == 0
		if higher {
			a, b = b, a
		}
		pv, err := Paired{Confidence: conf, MinEffect: delta, HigherIsBetter: higher}.Compare("t", a, b)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(pv.PValue-(1-conf)) > 1e-9 && pv.Pass != (pv.PValue > 1-conf) {
			t.Errorf("paired n=%d c=%g δ=%g: pass %v with p = %g", n, conf, delta, pv.Pass, pv.PValue)
		}
		rv, err := Ranked{Confidence: conf, MinEffect: delta, HigherIsBetter: higher}.Compare("rank", a, b)
		if err != nil {
			t.Fatal(err)
		}
		if rv.Pass != (rv.PValue > 1-conf) || !math.IsInf(rv.Hi, 1) {
			t.Errorf("ranked n=%d c=%g δ=%g: pass %v with p = %g, Hi %g", n, conf, delta, rv.Pass, rv.PValue, rv.Hi)
		}
	}
}

// TestMeanIntervalErrors covers the input checks of MeanInterval.
func TestMeanIntervalErrors(t *testing.T) {
	for _, d := range [][]float64{nil, {1}, {1, math.NaN()}, {math.Inf(1), 2}} {
		if _, _, err := MeanInterval(d, 0.95); err == nil {
			t.Errorf("MeanInterval(%v): no error", d)
		}
	}
	defer func() {
		if recover() == nil {
			t.Error("MeanInterval with confidence 1 did not panic")
		}
	}()
	MeanInterval([]float64{1, 2}, 1)
}
