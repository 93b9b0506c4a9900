package metrics

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Verdict is the structured outcome of one gate.
type Verdict struct {
	// Gate names the gate, as given by the caller.
	Gate string
	// Test names the decision procedure: "absolute", "paired t" or
	// "signed rank".
	Test string
	// Estimate is the judged quantity: the value for an absolute gate, the
	// mean worsening d̄ for a paired gate.
	Estimate float64
	// Lo and Hi bound the confidence interval of Estimate for a paired
	// gate; an absolute gate sets both to Estimate. The signed-rank gate
	// sets them to −Inf and +Inf when there are too few runs for any
	// interval at the requested confidence.
	Lo, Hi float64
	// Limit is the threshold the decision compared against.
	Limit float64
	// PValue is, for the statistical gates, the one-sided p-value of the
	// hypothesis that the candidate is no worse than max(0, MinEffect);
	// absolute gates leave it 0.
	PValue float64
	// Pass is the decision.
	Pass bool
	// Reason says in one sentence why.
	Reason string
}

// AtMost is the absolute gate value ≤ limit (for example mean GOSPA ≤ 4 m).
// A NaN value fails.
func AtMost(gate string, value, limit float64) Verdict {
	v := Verdict{Gate: gate, Test: "absolute", Estimate: value, Lo: value, Hi: value, Limit: limit}
	v.Pass = value <= limit
	if v.Pass {
		v.Reason = fmt.Sprintf("%g is at most the limit %g", value, limit)
	} else {
		v.Reason = fmt.Sprintf("%g exceeds the limit %g", value, limit)
	}
	return v
}

// AtLeast is the absolute gate value ≥ limit (for example the fraction of
// steps whose NEES lies in its interval ≥ 0.9). A NaN value fails.
func AtLeast(gate string, value, limit float64) Verdict {
	v := Verdict{Gate: gate, Test: "absolute", Estimate: value, Lo: value, Hi: value, Limit: limit}
	v.Pass = value >= limit
	if v.Pass {
		v.Reason = fmt.Sprintf("%g is at least the limit %g", value, limit)
	} else {
		v.Reason = fmt.Sprintf("%g is below the limit %g", value, limit)
	}
	return v
}

// ConsistentSteps is the absolute gate "the averaged NEES (or NIS) lies in
// its acceptance interval on at least the fraction minInside of the judged
// steps". A check with no judged step fails.
func ConsistentSteps(gate string, c Consistency, minInside float64) Verdict {
	if c.Judged == 0 {
		return Verdict{Gate: gate, Test: "absolute", Limit: minInside, Reason: "no step had a value to judge"}
	}
	v := AtLeast(gate, c.InsideFraction, minInside)
	v.Reason = fmt.Sprintf("%d of %d steps (%.4g) inside the %g interval; need at least %g",
		int(math.Round(c.InsideFraction*float64(c.Judged))), c.Judged, c.InsideFraction, c.Confidence, minInside)
	return v
}

// Paired is the relative gate of a candidate against a baseline run on the
// same seeds: a one-sided paired t test at level 1 − c of H₀: μ_d ≤ max(0, δ)
// (see the package documentation),
//
//	fail ⇔ L₁ > max(0, MinEffect),  L₁ = d̄ − t_{N−1}⁻¹(c)·s_d/√N,
//
// where L₁ is the one-sided lower confidence bound of the mean worsening at
// confidence c. The verdict reports Lo = L₁ and Hi = +Inf, the one-sided
// interval [L₁, +∞) the decision is taken on, and the one-sided p-value of
// H₀; the gate fails exactly when that p-value is below 1 − c. The
// two-sided interval, for display, is MeanInterval.
//
// The zero value is a 95% one-sided gate with no minimum effect for a metric
// where lower is better.
type Paired struct {
	// Confidence c in (0, 1) that the candidate is worse before the gate
	// fails: the one-sided level of the lower bound; zero means 0.95.
	Confidence float64
	// MinEffect δ ≥ 0 is the smallest mean worsening, in the metric's unit,
	// that may fail the gate; zero means any significant worsening fails.
	MinEffect float64
	// HigherIsBetter flips the sign of the differences for metrics where a
	// larger value is an improvement (the fraction of consistent steps, for
	// example). False suits GOSPA, OSPA and RMSE.
	HigherIsBetter bool
}

// Compare judges candidate against baseline, where candidate[i] and
// baseline[i] come from the same seed. It returns an error when the lengths
// differ, there are fewer than two pairs, or a value is not finite; it
// panics on invalid parameters.
func (g Paired) Compare(gate string, candidate, baseline []float64) (Verdict, error) {
	conf := mustGate(g.Confidence, g.MinEffect)
	d, err := differences(candidate, baseline, g.HigherIsBetter)
	if err != nil {
		return Verdict{}, err
	}
	n := float64(len(d))
	mean, sd := meanSD(d)
	shift := math.Max(0, g.MinEffect)
	v := Verdict{Gate: gate, Test: "paired t", Estimate: mean, Lo: mean, Hi: math.Inf(1), Limit: g.MinEffect}
	if sd > 0 {
		dist := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: n - 1}
		se := sd / math.Sqrt(n)
		v.Lo = mean - dist.Quantile(conf)*se
		v.PValue = dist.Survival((mean - shift) / se)
	} else if mean > shift {
		v.PValue = 0
	} else {
		v.PValue = 1
	}
	worse := "higher"
	if g.HigherIsBetter {
		worse = "lower"
	}
	switch {
	case v.Lo > shift:
		v.Reason = fmt.Sprintf("candidate is worse (%s) by %.4g on average over %d runs; its one-sided %g lower bound %.4g lies above the minimum effect %g (p = %.3g)",
			worse, mean, len(d), conf, v.Lo, g.MinEffect, v.PValue)
	case v.Lo > 0:
		v.Pass = true
		v.Reason = fmt.Sprintf("candidate is worse with confidence %g, but its one-sided lower bound %.4g does not exceed the minimum effect %g (p = %.3g)",
			conf, v.Lo, g.MinEffect, v.PValue)
	default:
		v.Pass = true
		v.Reason = fmt.Sprintf("no significant worsening over %d runs: the one-sided %g lower bound %.4g is not above 0 (p = %.3g)",
			len(d), conf, v.Lo, v.PValue)
	}
	return v, nil
}

// MeanInterval returns the two-sided Student-t confidence interval with
// coverage conf for the mean of d,
//
//	[L, U] = d̄ ∓ t_{N−1}⁻¹((1 + conf)/2)·s_d/√N,
//
// for display beside a gate's verdict; the gate itself decides on the
// one-sided bound (Paired). It returns an error for fewer than two values
// or a value that is not finite, and panics on conf outside (0, 1).
//
// References: W. S. Gosset ("Student"), "The probable error of a mean",
// Biometrika 6(1):1–25, 1908.
func MeanInterval(d []float64, conf float64) (lo, hi float64, err error) {
	if !(conf > 0 && conf < 1) {
		panic(fmt.Sprintf("metrics: confidence is %g, want a number in (0, 1)", conf))
	}
	if len(d) < 2 {
		return 0, 0, fmt.Errorf("%d values, need at least 2", len(d))
	}
	if err := checkFinite(d); err != nil {
		return 0, 0, err
	}
	mean, sd := meanSD(d)
	n := float64(len(d))
	half := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: n - 1}.Quantile((1+conf)/2) * sd / math.Sqrt(n)
	return mean - half, mean + half, nil
}

// Validate reports a confidence outside (0, 1) (zero stands for 0.95) or a
// minimum effect that is negative or not finite. Callers that read gate
// settings from a file check them with Validate; Compare panics on them.
func (g Paired) Validate() error { return validateGate(g.Confidence, g.MinEffect) }

func validateGate(conf, minEffect float64) error {
	if conf != 0 && !(conf > 0 && conf < 1) {
		return fmt.Errorf("confidence is %g, want a number in (0, 1)", conf)
	}
	if !(minEffect >= 0) || math.IsInf(minEffect, 0) {
		return fmt.Errorf("minimum effect is %g, want a finite non-negative number", minEffect)
	}
	return nil
}

// mustGate returns the confidence (0.95 for zero), panicking on invalid
// settings.
func mustGate(conf, minEffect float64) float64 {
	if err := validateGate(conf, minEffect); err != nil {
		panic("metrics: " + err.Error())
	}
	if conf == 0 {
		return 0.95
	}
	return conf
}

// differences returns dᵢ = s·(candidateᵢ − baselineᵢ), with s = −1 when
// higher values are better.
func differences(candidate, baseline []float64, higherIsBetter bool) ([]float64, error) {
	if len(candidate) != len(baseline) {
		return nil, fmt.Errorf("candidate has %d runs, baseline has %d; pairs need equal counts", len(candidate), len(baseline))
	}
	if len(candidate) < 2 {
		return nil, fmt.Errorf("%d paired runs, need at least 2", len(candidate))
	}
	d := make([]float64, len(candidate))
	for i := range candidate {
		a, b := candidate[i], baseline[i]
		if math.IsNaN(a) || math.IsInf(a, 0) {
			return nil, fmt.Errorf("candidate run %d: value %g, want a finite number", i, a)
		}
		if math.IsNaN(b) || math.IsInf(b, 0) {
			return nil, fmt.Errorf("baseline run %d: value %g, want a finite number", i, b)
		}
		d[i] = a - b
		if higherIsBetter {
			d[i] = -d[i]
		}
	}
	return d, nil
}

// meanSD returns the mean and the sample standard deviation (divisor
// N − 1) of x, by the two-pass formula.
func meanSD(x []float64) (mean, sd float64) {
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	var ss float64
	for _, v := range x {
		ss += float64((v - mean) * (v - mean))
	}
	return mean, math.Sqrt(ss / float64(len(x)-1))
}
