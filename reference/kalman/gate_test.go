package kalman

import (
	"math"
	"testing"
)

// TestThreshold compares γ = χ²_m⁻¹(P_G) with published critical values of
// the chi-square distribution: NIST/SEMATECH e-Handbook of Statistical
// Methods, §1.3.6.7.4 "Critical Values of the Chi-Square Distribution"
// (upper-tail probabilities 0.05, 0.01, 0.001, printed to three decimals;
// the same values appear to more digits in M. Abramowitz, I. A. Stegun,
// "Handbook of Mathematical Functions", 1964, Table 26.8). The printed
// digits are from memory; the 12-digit values are CHECK-VALUES §6.2 (scipy
// 1.10.1 chi2.ppf) and are in turn checked against closed forms below.
func TestThreshold(t *testing.T) {
	tests := []struct {
		m        int
		pg       float64
		printed  float64 // NIST table, three decimals
		computed float64 // CHECK-VALUES §6.2
	}{
		{1, 0.95, 3.841, 3.841458820694},
		{2, 0.95, 5.991, 5.991464547108},
		{3, 0.95, 7.815, 7.814727903251},
		{1, 0.99, 6.635, 6.634896601021},
		{2, 0.99, 9.210, 9.210340371976},
		{3, 0.99, 11.345, 11.344866730144},
		{1, 0.999, 10.828, 10.827566170663},
		{2, 0.999, 13.816, 13.815510557964},
		{3, 0.999, 16.266, 16.266236196238},
	}
	for _, tc := range tests {
		g, err := Threshold(tc.m, tc.pg)
		if err != nil {
			t.Fatal(err)
		}
		if math.Round(g*1000)/1000 != tc.printed {
			t.Errorf("Threshold(%d, %g) = %.6f, want the printed %.3f", tc.m, tc.pg, g, tc.printed)
		}
		if !near(g, tc.computed, 0, 1e-9) {
			t.Errorf("Threshold(%d, %g) = %.12f, want %.12f", tc.m, tc.pg, g, tc.computed)
		}
		// Closed forms (standard results for χ² with 1, 2, 3 degrees of
		// freedom; Abramowitz & Stegun 1964, §26.4): m = 2: P_G = 1 − e^{−γ/2};
		// m = 1: P_G = erf(√(γ/2)); m = 3: P_G = erf(√(γ/2)) − √(2γ/π)·e^{−γ/2}.
		var cdf float64
		switch tc.m {
		case 1:
			cdf = math.Erf(math.Sqrt(g / 2))
		case 2:
			cdf = 1 - math.Exp(-g/2)
		case 3:
			cdf = math.Erf(math.Sqrt(g/2)) - math.Sqrt(2*g/math.Pi)*math.Exp(-g/2)
		}
		if !near(cdf, tc.pg, 1e-12, 0) {
			t.Errorf("m=%d: closed-form CDF(γ=%.12g) = %.15g, want %g", tc.m, g, cdf, tc.pg)
		}
	}
	for _, bad := range []struct {
		m  int
		pg float64
	}{{0, 0.99}, {2, 0}, {2, 1}, {2, math.NaN()}, {1, -0.5}} {
		if _, err := Threshold(bad.m, bad.pg); err == nil {
			t.Errorf("Threshold(%d, %g) returned no error", bad.m, bad.pg)
		}
	}
}

// TestDistanceAndLikelihood checks the gating numbers of the worked GNN
// example of CHECK-VALUES §6.3 (numpy 1.24.2 values): track 1 with
// ẑ = (0, 0), S = [[4, 1], [1, 3]] and the detections z₁ … z₃.
func TestDistanceAndLikelihood(t *testing.T) {
	pr := Projection{M: 2, Zhat: []float64{0, 0}, S: []float64{4, 1, 1, 3}, L: make([]float64, 4)}
	ld, err := cholesky(pr.L, pr.S, 2)
	if err != nil {
		t.Fatal(err)
	}
	pr.LogDetS = ld
	if !near(ld, math.Log(11), 1e-15, 0) {
		t.Errorf("ln|S| = %.15g, want ln 11", ld)
	}
	tests := []struct {
		z      []float64
		d2, lk float64
	}{
		{[]float64{1, 1}, 0.454545454545, 0.0382314261},
		{[]float64{4, 4.5}, 8.454545454545, 0.000700233},
		{[]float64{2.5, 2.5}, 2.840909090909, 0.0115938644},
	}
	for _, tc := range tests {
		d2 := pr.Distance2(tc.z)
		if !near(d2, tc.d2, 1e-12, 0) {
			t.Errorf("Distance2(%v) = %.12g, want %.12g", tc.z, d2, tc.d2)
		}
		if g := math.Exp(pr.LogLikelihood(d2)); !near(g, tc.lk, 0, 1e-6) {
			t.Errorf("likelihood(%v) = %.10g, want %.10g", tc.z, g, tc.lk)
		}
	}
}
