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
// same seeds; see the package documentation for the decision rule
//
//	fail ⇔ L > max(0, MinEffect),  L = d̄ − t_{N−1}⁻¹((1 + c)/2)·s_d/√N.
//
// The zero value is a two-sided 95% gate with no minimum effect for a metric
// where lower is better.
type Paired struct {
	// Confidence c of the two-sided interval, in (0, 1); zero means 0.95.
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
	half := 0.0
	shift := math.Max(0, g.MinEffect)
	v := Verdict{Gate: gate, Test: "paired t", Estimate: mean, Limit: g.MinEffect}
	if sd > 0 {
		dist := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: n - 1}
		se := sd / math.Sqrt(n)
		half = dist.Quantile((1+conf)/2) * se
		v.PValue = dist.Survival((mean - shift) / se)
	} else if mean > shift {
		v.PValue = 0
	} else {
		v.PValue = 1
	}
	v.Lo, v.Hi = mean-half, mean+half
	worse := "higher"
	if g.HigherIsBetter {
		worse = "lower"
	}
	switch {
	case v.Lo > shift:
		v.Reason = fmt.Sprintf("candidate is worse (%s) by %.4g on average over %d runs; the %g interval [%.4g, %.4g] lies above the minimum effect %g",
			worse, mean, len(d), conf, v.Lo, v.Hi, g.MinEffect)
	case v.Lo > 0:
		v.Pass = true
		v.Reason = fmt.Sprintf("candidate is worse with confidence %g, but the interval [%.4g, %.4g] reaches below the minimum effect %g",
			conf, v.Lo, v.Hi, g.MinEffect)
	default:
		v.Pass = true
		v.Reason = fmt.Sprintf("no significant worsening over %d runs: the %g interval [%.4g, %.4g] includes 0 or lies below it",
			len(d), conf, v.Lo, v.Hi)
	}
	return v, nil
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
