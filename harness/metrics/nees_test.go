package metrics

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"trackgate/harness/mot"
)

func mat(rows ...[]float64) mot.Mat {
	m, ok := mot.MatFromRows(rows)
	if !ok {
		panic("ragged test matrix")
	}
	return m
}

func closeRel(got, want, tol float64) bool {
	if got == want {
		return true
	}
	return math.Abs(got-want) <= tol*math.Max(math.Abs(want), 1e-300)
}

func TestNEES(t *testing.T) {
	tests := []struct {
		name    string
		x, xhat []float64
		p       mot.Mat
		want    float64
		source  string
	}{
		{
			// CHECK-VALUES §3.2 "Single-NEES arithmetic check" [COMP-lib]; by hand:
			// P⁻¹ = [[3,−1],[−1,4]]/11, e = [1,−2], eᵀP⁻¹e = (3+4+16)/11 = 23/11.
			name: "2x2 full", x: []float64{1, -2}, xhat: []float64{0, 0},
			p: mat([]float64{4, 1}, []float64{1, 3}), want: 23.0 / 11, source: "CHECK-VALUES §3.2; hand",
		},
		{
			// Diagonal: Σ eᵢ²/σᵢ² = 9/9 + 16/4 + 1/1 = 6 (hand derivation).
			name: "diagonal", x: []float64{3, 4, 1}, xhat: []float64{0, 0, 0},
			p: mat([]float64{9, 0, 0}, []float64{0, 4, 0}, []float64{0, 0, 1}), want: 6, source: "hand",
		},
		{
			name: "zero error", x: []float64{5, 5}, xhat: []float64{5, 5},
			p: mat([]float64{2, 0}, []float64{0, 2}), want: 0, source: "hand",
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := NEES(tt.x, tt.xhat, tt.p)
			if err != nil {
				t.Fatalf("NEES: %v", err)
			}
			if !closeRel(got, tt.want, 1e-12) {
				t.Errorf("NEES(%v, %v) = %.15g, want %.15g (%s)", tt.x, tt.xhat, got, tt.want, tt.source)
			}
		})
	}
}

// TestNEESAgainstExplicitInverse compares the Cholesky route with the
// explicit inverse of random 2×2 covariances (closed form
// [[a,b],[b,c]]⁻¹ = [[c,−b],[−b,a]]/(ac − b²), common practice).
func TestNEESAgainstExplicitInverse(t *testing.T) {
	r := testRand(t, 11)
	for i := 0; i < 2000; i++ {
		a, c := 0.1+10*r.Float64(), 0.1+10*r.Float64()
		b := (2*r.Float64() - 1) * 0.95 * math.Sqrt(a*c)
		e := []float64{r.NormFloat64() * 3, r.NormFloat64() * 3}
		det := a*c - b*b
		want := (c*e[0]*e[0] - 2*b*e[0]*e[1] + a*e[1]*e[1]) / det
		got, err := NIS(e, mat([]float64{a, b}, []float64{b, c}))
		if err != nil {
			t.Fatal(err)
		}
		if !closeRel(got, want, 1e-9) {
			t.Fatalf("NIS(%v, [[%g,%g],[%g,%g]]) = %.15g, want %.15g", e, a, b, b, c, got, want)
		}
	}
}

func TestNEESErrors(t *testing.T) {
	var npd *NotPositiveDefiniteError
	if _, err := NEES([]float64{1, 1}, []float64{0, 0}, mat([]float64{1, 2}, []float64{2, 1})); !errors.As(err, &npd) {
		t.Errorf("indefinite covariance: err = %v, want *NotPositiveDefiniteError", err)
	} else if npd.Row != 1 || !closeRel(npd.Pivot, -3, 1e-12) {
		t.Errorf("pivot = %g at row %d, want -3 at row 1", npd.Pivot, npd.Row)
	}
	cases := []struct {
		name    string
		x, xhat []float64
		p       mot.Mat
	}{
		{"length mismatch", []float64{1}, []float64{0, 0}, mot.Identity(2)},
		{"shape mismatch", []float64{1, 1}, []float64{0, 0}, mot.Identity(3)},
		{"nan state", []float64{math.NaN(), 1}, []float64{0, 0}, mot.Identity(2)},
		{"inf covariance", []float64{1, 1}, []float64{0, 0}, mat([]float64{math.Inf(1), 0}, []float64{0, 1})},
		{"zero covariance", []float64{1, 1}, []float64{0, 0}, mot.NewMat(2, 2)},
	}
	for _, c := range cases {
		if _, err := NEES(c.x, c.xhat, c.p); err == nil {
			t.Errorf("%s: NEES returned no error", c.name)
		}
	}
}

func TestInterval(t *testing.T) {
	tests := []struct {
		dim, runs int
		conf      float64
		lo, hi    float64
		tol       float64
		source    string
	}{
		// CHECK-VALUES §3.2, exact 95% intervals [COMP-lib: scipy 1.10.1 chi2.ppf].
		{2, 50, 0.95, 1.4844385495, 2.5912239437, 1e-9, "CHECK-VALUES §3.2"},
		{4, 50, 0.95, 3.2545596500, 4.8211579101, 1e-9, "CHECK-VALUES §3.2"},
		{4, 100, 0.95, 3.4648176536, 4.5730548197, 1e-9, "CHECK-VALUES §3.2"},
		{6, 25, 0.95, 4.7193806161, 7.4320178802, 1e-9, "CHECK-VALUES §3.2"},
		{1, 1000, 0.95, 0.9142571538, 1.0895309128, 1e-9, "CHECK-VALUES §3.2"},
		{3, 50, 0.95, 2.3596903081, 3.7160089401, 1e-9, "CHECK-VALUES §3.2"},
		// Single run: CHECK-VALUES §3.2 table printed to ~1e-9.
		{2, 1, 0.95, 0.050635616, 7.377758908, 1e-7, "CHECK-VALUES §3.2 single run"},
		{6, 1, 0.95, 1.237344246, 14.449375335, 1e-7, "CHECK-VALUES §3.2 single run"},
		// Time-averaged NIS of one run of K steps, (n_z, K) = (2, 200) and
		// (1, 100): CHECK-VALUES §3.2 [COMP-lib], same formula with K for N.
		{2, 200, 0.95, 1.7324088268, 2.2865274098, 1e-9, "CHECK-VALUES §3.2 time-averaged NIS"},
		{1, 100, 0.95, 0.7422192747, 1.2956119719, 1e-9, "CHECK-VALUES §3.2 time-averaged NIS"},
		// NIST/SEMATECH e-Handbook of Statistical Methods (2011), §1.3.6.7.4,
		// critical values of the chi-square distribution: ν = 10 lower 2.5%
		// point 3.247, upper 2.5% point 20.483; ν = 100 lower 74.222, upper
		// 129.561. Printed to 3 decimals.
		{10, 1, 0.95, 3.247, 20.483, 2e-4, "NIST e-Handbook §1.3.6.7.4"},
		{1, 100, 0.95, 0.74222, 1.29561, 2e-5, "NIST e-Handbook §1.3.6.7.4 (ν = 100, divided by N = 100)"},
		// ν = 10 at 90%: lower 5% point 3.940, upper 5% point 18.307 (same table).
		{10, 1, 0.90, 3.940, 18.307, 2e-4, "NIST e-Handbook §1.3.6.7.4"},
	}
	for _, tt := range tests {
		lo, hi := Interval(tt.dim, tt.runs, tt.conf)
		if !closeRel(lo, tt.lo, tt.tol) || !closeRel(hi, tt.hi, tt.tol) {
			t.Errorf("Interval(%d, %d, %g) = [%.10g, %.10g], want [%.10g, %.10g] (%s)",
				tt.dim, tt.runs, tt.conf, lo, hi, tt.lo, tt.hi, tt.source)
		}
	}
	// Closed form for 2 degrees of freedom: χ²₂ is the exponential law with
	// mean 2, so its quantile is −2·ln(1 − q) (common practice).
	for _, conf := range []float64{0.5, 0.9, 0.95, 0.99} {
		lo, hi := Interval(2, 1, conf)
		wlo, whi := -2*math.Log((1+conf)/2), -2*math.Log((1-conf)/2)
		if !closeRel(lo, wlo, 1e-9) || !closeRel(hi, whi, 1e-9) {
			t.Errorf("Interval(2, 1, %g) = [%.12g, %.12g], want [%.12g, %.12g]", conf, lo, hi, wlo, whi)
		}
		lo, hi = Interval(1, 2, conf)
		if !closeRel(lo, wlo/2, 1e-9) || !closeRel(hi, whi/2, 1e-9) {
			t.Errorf("Interval(1, 2, %g) = [%.12g, %.12g], want [%.12g, %.12g]", conf, lo, hi, wlo/2, whi/2)
		}
	}
	// Bar-Shalom, Li, Kirubarajan (2001) §5.4.2 print the 95% region for
	// n = 2, N = 50 as [1.5, 2.6] (from memory, CHECK-VALUES §3.1 [SRC-mem]).
	lo, hi := Interval(2, 50, 0.95)
	if math.Round(lo*10)/10 != 1.5 || math.Round(hi*10)/10 != 2.6 {
		t.Errorf("Interval(2, 50, 0.95) = [%g, %g], rounds differently from [1.5, 2.6]", lo, hi)
	}
	// Scalar NIS, N = 50: [0.65, 1.43] (same source, from memory).
	lo, hi = Interval(1, 50, 0.95)
	if math.Round(lo*100)/100 != 0.65 || math.Round(hi*100)/100 != 1.43 {
		t.Errorf("Interval(1, 50, 0.95) = [%g, %g], rounds differently from [0.65, 1.43]", lo, hi)
	}
}

func TestIntervalPanics(t *testing.T) {
	for _, c := range []struct {
		dim, runs int
		conf      float64
	}{{0, 1, 0.95}, {1, 0, 0.95}, {1, 1, 0}, {1, 1, 1}, {1, 1, math.NaN()}} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("Interval(%d, %d, %g) did not panic", c.dim, c.runs, c.conf)
				}
			}()
			Interval(c.dim, c.runs, c.conf)
		}()
	}
}

// simulateNEES draws runs×steps errors from N(0, trueP), evaluates their
// NEES against the claimed covariance and returns values[step][run].
func simulateNEES(t *testing.T, r *rand.Rand, trueP, claimed mot.Mat, runs, steps int) [][]float64 {
	t.Helper()
	// Cholesky factor of trueP = [[a,b],[b,c]] in closed form.
	a, b, c := trueP.At(0, 0), trueP.At(0, 1), trueP.At(1, 1)
	l00 := math.Sqrt(a)
	l10 := b / l00
	l11 := math.Sqrt(c - l10*l10)
	values := make([][]float64, steps)
	zero := []float64{0, 0}
	for k := range values {
		values[k] = make([]float64, runs)
		for i := range values[k] {
			z0, z1 := r.NormFloat64(), r.NormFloat64()
			e := []float64{l00 * z0, l10*z0 + l11*z1}
			v, err := NEES(e, zero, claimed)
			if err != nil {
				t.Fatal(err)
			}
			values[k][i] = v
		}
	}
	return values
}

// TestConsistencyCoverage checks that errors drawn from the covariance the
// filter claims fall inside the 95% interval on about 95% of the steps, and
// almost never when the claimed covariance is half the true one (the NEES
// average then concentrates near 2n = 4, above the interval [1.48, 2.59]).
// The acceptance band 0.90–0.99 for 400 steps is ±3.7 binomial standard
// deviations around 0.95 (common practice).
func TestConsistencyCoverage(t *testing.T) {
	r := testRand(t, 2026)
	p := mat([]float64{4, 1}, []float64{1, 3})
	values := simulateNEES(t, r, p, p, 50, 400)
	c, err := CheckConsistency(values, 2, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if c.Judged != 400 {
		t.Fatalf("Judged = %d, want 400", c.Judged)
	}
	if c.InsideFraction < 0.90 || c.InsideFraction > 0.99 {
		t.Errorf("consistent filter: inside fraction %g, want about 0.95", c.InsideFraction)
	}
	if !ConsistentSteps("nees", c, 0.9).Pass {
		t.Errorf("consistent filter failed the 90%% gate: %g", c.InsideFraction)
	}

	half := mat([]float64{2, 0.5}, []float64{0.5, 1.5})
	values = simulateNEES(t, r, p, half, 50, 400)
	c, err = CheckConsistency(values, 2, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if c.InsideFraction > 0.02 {
		t.Errorf("covariance understated by 2: inside fraction %g, want near 0", c.InsideFraction)
	}
	if ConsistentSteps("nees", c, 0.9).Pass {
		t.Errorf("overconfident filter passed the consistency gate")
	}
}

func TestCheckConsistency(t *testing.T) {
	// Step 0: mean 2, inside [1.4844, 2.5912] (dim 2, 50 values); step 1:
	// no values, not judged; step 2: one value 10, above the single-run
	// interval [0.0506, 7.378] (CHECK-VALUES §3.2).
	vals := [][]float64{make([]float64, 50), nil, {10}}
	for i := range vals[0] {
		vals[0][i] = 2
	}
	c, err := CheckConsistency(vals, 2, 0)
	if err != nil {
		t.Fatal(err)
	}
	if c.Confidence != 0.95 || c.Judged != 2 || c.InsideFraction != 0.5 {
		t.Errorf("CheckConsistency = conf %g judged %d inside %g, want 0.95, 2, 0.5", c.Confidence, c.Judged, c.InsideFraction)
	}
	if !c.Steps[0].Inside || c.Steps[1].Count != 0 || c.Steps[2].Inside {
		t.Errorf("step verdicts = %+v", c.Steps)
	}
	if _, err := CheckConsistency([][]float64{{1, -1}}, 2, 0.95); err == nil {
		t.Error("negative NEES accepted")
	}
	if _, err := CheckConsistency([][]float64{{math.NaN()}}, 2, 0.95); err == nil {
		t.Error("NaN NEES accepted")
	}
	if v := ConsistentSteps("empty", Consistency{}, 0.9); v.Pass {
		t.Error("a check with no judged step passed")
	}
}

func BenchmarkNEES4(b *testing.B) {
	p := mat([]float64{4, 1, 0, 0}, []float64{1, 3, 0, 0}, []float64{0, 0, 2, 0.5}, []float64{0, 0, 0.5, 1})
	x, xh := []float64{1, 2, 3, 4}, []float64{0.5, 2.5, 2, 4.5}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := NEES(x, xh, p); err != nil {
			b.Fatal(err)
		}
	}
}
