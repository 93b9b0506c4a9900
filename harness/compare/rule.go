package compare

import (
	"fmt"
	"math"
)

// Rule is the tolerance for one quantity. The zero Rule demands exact
// equality (with +0 == −0). See the package documentation for the formula:
//
//	agree(want, got) ⇔ ¬NaN(want) ∧ ¬NaN(got) ∧
//	    ( want == got
//	    ∨ finite(want) ∧ finite(got) ∧ |got − want| ≤ max(Abs, Rel·max(|want|, |got|))
//	    ∨ finite(want) ∧ finite(got) ∧ ulps(want, got) ≤ ULPs )
type Rule struct {
	// Abs is the absolute floor, in the unit of the quantity. Never negative.
	Abs float64
	// Rel is the relative tolerance, applied to max(|want|, |got|). Never
	// negative.
	Rel float64
	// ULPs is the largest distance in units in the last place that agrees.
	ULPs uint64
}

// Valid reports an error when a field is negative, NaN or infinite.
func (r Rule) Valid() error {
	if !(r.Abs >= 0) || math.IsInf(r.Abs, 0) {
		return fmt.Errorf("compare: absolute tolerance %v must be finite and ≥ 0", r.Abs)
	}
	if !(r.Rel >= 0) || math.IsInf(r.Rel, 0) {
		return fmt.Errorf("compare: relative tolerance %v must be finite and ≥ 0", r.Rel)
	}
	return nil
}

// String formats the rule for reports, e.g. "abs 1e-09, rel 2e-12, 4 ulp".
func (r Rule) String() string {
	return fmt.Sprintf("abs %g, rel %g, %d ulp", r.Abs, r.Rel, r.ULPs)
}

// Bound returns max(Abs, Rel·max(|want|, |got|)), the largest absolute error
// the rule allows for this pair apart from its ULP allowance.
func (r Rule) Bound(want, got float64) float64 {
	m := math.Max(math.Abs(want), math.Abs(got))
	return math.Max(r.Abs, float64(r.Rel*m))
}

// Agree reports whether want and got agree under r.
func (r Rule) Agree(want, got float64) bool {
	ok, _, _ := r.measure(want, got)
	return ok
}

// measure returns the verdict, the absolute error and the ULP distance
// (math.MaxUint64 when undefined).
func (r Rule) measure(want, got float64) (ok bool, err float64, ulps uint64) {
	if math.IsNaN(want) || math.IsNaN(got) {
		return false, math.NaN(), math.MaxUint64
	}
	if want == got {
		return true, 0, 0
	}
	if math.IsInf(want, 0) || math.IsInf(got, 0) {
		return false, math.Inf(1), math.MaxUint64
	}
	err = math.Abs(got - want)
	ulps = ULPDistance(want, got)
	return err <= r.Bound(want, got) || ulps <= r.ULPs, err, ulps
}

// ULPDistance returns the number of representable float64 values between a
// and b: 0 when a == b (including +0 and −0), 1 for neighbours. It returns
// math.MaxUint64 when either is NaN, and counts the infinities as the
// values one step beyond ±math.MaxFloat64.
func ULPDistance(a, b float64) uint64 {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.MaxUint64
	}
	ia, ib := ordered(a), ordered(b)
	if ia > ib {
		ia, ib = ib, ia
	}
	return uint64(ib) - uint64(ia)
}

// ordered maps a float64 to an integer that increases with the value, with
// +0 and −0 both mapped to 0.
func ordered(x float64) int64 {
	u := math.Float64bits(x)
	if u>>63 != 0 {
		return -int64(u &^ (1 << 63))
	}
	return int64(u)
}
