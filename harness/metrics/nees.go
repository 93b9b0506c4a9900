package metrics

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"trackgate/harness/mot"
)

// NotPositiveDefiniteError reports a covariance whose Cholesky factorisation
// broke down: Pivot is the value under the square root at row Row.
type NotPositiveDefiniteError struct {
	Row   int
	Pivot float64
}

func (e *NotPositiveDefiniteError) Error() string {
	return fmt.Sprintf("covariance is not positive definite: pivot %g at row %d", e.Pivot, e.Row)
}

// NEES returns ε = (x − x̂)ᵀ P⁻¹ (x − x̂) for the true state x, the estimate
// xhat and its covariance p. It returns an error when the lengths disagree,
// a value is not finite, or p is not positive definite
// (*NotPositiveDefiniteError).
func NEES(x, xhat []float64, p mot.Mat) (float64, error) {
	if len(x) != len(xhat) {
		return 0, fmt.Errorf("state has length %d, estimate has length %d", len(x), len(xhat))
	}
	var buf [8]float64
	var e []float64
	if len(x) <= len(buf) {
		e = buf[:len(x)]
	} else {
		e = make([]float64, len(x))
	}
	for i := range x {
		e[i] = x[i] - xhat[i]
	}
	return quadForm(e, p)
}

// NIS returns ε_ν = νᵀ S⁻¹ ν for the innovation nu and its covariance s,
// with the same errors as NEES.
func NIS(nu []float64, s mot.Mat) (float64, error) {
	return quadForm(nu, s)
}

// quadForm returns vᵀ A⁻¹ v by Cholesky factorisation A = L Lᵀ and forward
// substitution L w = v, so that vᵀ A⁻¹ v = wᵀ w. Only the lower triangle of
// A is read; v is not modified.
func quadForm(v []float64, a mot.Mat) (float64, error) {
	n := len(v)
	if a.Rows != n || a.Cols != n || len(a.Data) != n*n {
		return 0, fmt.Errorf("covariance is %d×%d with %d entries, want %d×%d", a.Rows, a.Cols, len(a.Data), n, n)
	}
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, fmt.Errorf("error component %d is %g, want a finite number", i, x)
		}
	}
	for i, x := range a.Data {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, fmt.Errorf("covariance entry (%d,%d) is %g, want a finite number", i/n, i%n, x)
		}
	}
	var lbuf [64]float64
	var wbuf [8]float64
	var l, w []float64
	if n*n <= len(lbuf) {
		l, w = lbuf[:n*n], wbuf[:n]
	} else {
		l, w = make([]float64, n*n), make([]float64, n)
	}
	for j := 0; j < n; j++ {
		s := a.Data[j*n+j]
		for k := 0; k < j; k++ {
			s -= float64(l[j*n+k] * l[j*n+k])
		}
		if !(s > 0) {
			return 0, &NotPositiveDefiniteError{Row: j, Pivot: s}
		}
		d := math.Sqrt(s)
		l[j*n+j] = d
		for i := j + 1; i < n; i++ {
			t := a.Data[i*n+j]
			for k := 0; k < j; k++ {
				t -= float64(l[i*n+k] * l[j*n+k])
			}
			l[i*n+j] = t / d
		}
	}
	var q float64
	for i := 0; i < n; i++ {
		t := v[i]
		for k := 0; k < i; k++ {
			t -= float64(l[i*n+k] * w[k])
		}
		w[i] = t / l[i*n+i]
		q += float64(w[i] * w[i])
	}
	return q, nil
}

// Interval returns the two-sided acceptance interval with probability conf
// for the average of runs independent χ²_dim statistics (NEES with dim the
// state dimension, NIS with dim the measurement dimension):
//
//	[ χ²_{dim·runs}⁻¹((1 − conf)/2), χ²_{dim·runs}⁻¹((1 + conf)/2) ] / runs.
//
// It panics unless dim ≥ 1, runs ≥ 1 and 0 < conf < 1.
func Interval(dim, runs int, conf float64) (lo, hi float64) {
	if dim < 1 || runs < 1 {
		panic(fmt.Sprintf("metrics: chi-square interval needs dim ≥ 1 and runs ≥ 1, got %d and %d", dim, runs))
	}
	if !(conf > 0 && conf < 1) {
		panic(fmt.Sprintf("metrics: confidence %g outside (0, 1)", conf))
	}
	d := distuv.ChiSquared{K: float64(dim * runs)}
	n := float64(runs)
	return d.Quantile((1-conf)/2) / n, d.Quantile((1+conf)/2) / n
}

// StepConsistency is the averaged NEES (or NIS) of one step.
type StepConsistency struct {
	Step int
	// Count is the number of values averaged (runs, or runs × matched
	// tracks); a step with Count 0 is not judged.
	Count int
	// Mean is the average value ε̄, or 0 when Count is 0.
	Mean float64
	// Lo and Hi bound the acceptance interval for Count values.
	Lo, Hi float64
	// Inside reports Lo ≤ Mean ≤ Hi.
	Inside bool
}

// Consistency is the chi-square consistency check of a sequence of steps.
type Consistency struct {
	Dim        int
	Confidence float64
	Steps      []StepConsistency
	// Judged is the number of steps with at least one value, and
	// InsideFraction the fraction of those whose mean lies in its interval
	// (0 when Judged is 0).
	Judged         int
	InsideFraction float64
}

// CheckConsistency averages values[k] (the NEES or NIS values at step k,
// one per run and matched track) and checks each step's average against its
// chi-square interval for dim degrees of freedom per value, with
// probability conf. A zero conf means 0.95. It returns an error naming the
// step of the first value that is negative or not finite.
//
// For the time-averaged test of a single run (K steps, K·ε̄ ~ χ²_{K·dim},
// exact for NIS, approximate for NEES whose values are correlated in time),
// pass all K values as one step.
func CheckConsistency(values [][]float64, dim int, conf float64) (Consistency, error) {
	if conf == 0 {
		conf = 0.95
	}
	c := Consistency{Dim: dim, Confidence: conf, Steps: make([]StepConsistency, len(values))}
	type bounds struct{ lo, hi float64 }
	cache := map[int]bounds{}
	inside := 0
	for k, vs := range values {
		s := StepConsistency{Step: k, Count: len(vs)}
		var sum float64
		for j, v := range vs {
			if !(v >= 0) || math.IsInf(v, 0) {
				return Consistency{}, fmt.Errorf("step %d: value %d is %g, want a finite non-negative number", k, j, v)
			}
			sum += v
		}
		if s.Count > 0 {
			b, ok := cache[s.Count]
			if !ok {
				b.lo, b.hi = Interval(dim, s.Count, conf)
				cache[s.Count] = b
			}
			s.Mean = sum / float64(s.Count)
			s.Lo, s.Hi = b.lo, b.hi
			s.Inside = s.Lo <= s.Mean && s.Mean <= s.Hi
			c.Judged++
			if s.Inside {
				inside++
			}
		}
		c.Steps[k] = s
	}
	if c.Judged > 0 {
		c.InsideFraction = float64(inside) / float64(c.Judged)
	}
	return c, nil
}
