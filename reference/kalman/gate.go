package kalman

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Threshold returns the gate threshold γ = χ²_m⁻¹(pg): the pg quantile of
// the chi-square distribution with m degrees of freedom, so that a detection
// of the object itself falls inside d² ≤ γ with probability pg.
func Threshold(m int, pg float64) (float64, error) {
	if m < 1 {
		return 0, fmt.Errorf("kalman: gate threshold for measurement dimension %d, want ≥ 1", m)
	}
	if !(pg > 0 && pg < 1) {
		return 0, fmt.Errorf("kalman: gate probability %g, want a number in (0, 1)", pg)
	}
	g := distuv.ChiSquared{K: float64(m)}.Quantile(pg)
	if math.IsNaN(g) || math.IsInf(g, 0) || g <= 0 {
		return 0, fmt.Errorf("kalman: chi-square quantile for m=%d, P_G=%g is %g", m, pg, g)
	}
	return g, nil
}
