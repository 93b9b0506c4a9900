package metrics

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// bruteSignedRankP enumerates all 2ⁿ sign patterns of the non-zero
// differences with midranks, independently of the dynamic programme.
func bruteSignedRankP(d []float64) (w, p float64) {
	var abs []float64
	for _, v := range d {
		if v != 0 {
			abs = append(abs, math.Abs(v))
		}
	}
	n := len(abs)
	rank := make([]float64, n)
	for i, a := range abs {
		less, equal := 0, 0
		for _, b := range abs {
			if b < a {
				less++
			} else if b == a {
				equal++
			}
		}
		rank[i] = float64(less) + float64(equal+1)/2
	}
	k := 0
	for _, v := range d {
		if v != 0 {
			if v > 0 {
				w += rank[k]
			}
			k++
		}
	}
	hits := 0
	for mask := 0; mask < 1<<n; mask++ {
		var s float64
		for i := 0; i < n; i++ {
			if mask&(1<<i) != 0 {
				s += rank[i]
			}
		}
		if s >= w-1e-9 {
			hits++
		}
	}
	return w, float64(hits) / float64(int(1)<<n)
}

func TestSignedRankExactAgainstEnumeration(t *testing.T) {
	r := testRand(t, 21)
	for i := 0; i < 400; i++ {
		n := r.IntN(13)
		d := make([]float64, n)
		for k := range d {
			// Coarse values produce zeros and ties.
			d[k] = float64(r.IntN(9) - 3)
		}
		w, _, p, _ := SignedRankTest(d, RankExact)
		bw, bp := bruteSignedRankP(d)
		if w != bw || !closeRel(p, bp, 1e-12) {
			t.Fatalf("SignedRankTest(%v) = W %g, p %.15g; enumeration W %g, p %.15g", d, w, p, bw, bp)
		}
	}
}

// TestSignedRankCriticalValues checks the exact null distribution against
// the printed table of critical values of the signed-rank statistic (lower
// critical T for a two-sided test at 0.05: n = 6: 0, n = 8: 3, n = 10: 8,
// n = 20: 52; from memory, as printed in standard statistical tables, e.g.
// Hollander & Wolfe 1999, Table A.4). rankCritical returns the upper
// critical value M − T.
func TestSignedRankCriticalValues(t *testing.T) {
	for _, c := range []struct{ n, lower int }{{6, 0}, {8, 3}, {10, 8}, {20, 52}} {
		m := c.n * (c.n + 1) / 2
		if got := rankCritical(c.n, 0.025); got != m-c.lower {
			t.Errorf("rankCritical(%d, 0.025) = %d, want %d", c.n, got, m-c.lower)
		}
	}
	// n = 6, all positive: P(W⁺ ≥ 21) = 1/64 (only the all-positive
	// pattern reaches 21; hand derivation).
	if _, _, p, _ := SignedRankTest([]float64{1, 2, 3, 4, 5, 6}, RankExact); !closeRel(p, 1.0/64, 1e-15) {
		t.Errorf("all positive n = 6: p = %g, want 1/64", p)
	}
	if _, n, p, _ := SignedRankTest([]float64{0, 0}, RankAuto); n != 0 || p != 1 {
		t.Errorf("all zero: n = %d, p = %g, want 0 and 1", n, p)
	}
}

// TestSignedRankNormalSleep checks the normal approximation on the
// differences of Student's (1908) sleep data (see TestPairedStudentSleep):
// one zero is dropped, 1.3 is tied twice, W⁺ = 45 with n = 9. By hand:
// E = 22.5, Var = 9·10·19/24 − (2³ − 2)/48 = 71.125,
// z = (45 − 22.5 − 0.5)/√71.125 = 2.60862. The two-sided p-value 0.009091
// is what statistics packages print for this data set with the continuity
// and tie corrections (from memory).
func TestSignedRankNormalSleep(t *testing.T) {
	d := []float64{1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4}
	w, n, p, _ := SignedRankTest(d, RankNormal)
	if w != 45 || n != 9 {
		t.Fatalf("W = %g, n = %d, want 45, 9", w, n)
	}
	if want := distuv.UnitNormal.Survival(22 / math.Sqrt(71.125)); !closeRel(p, want, 1e-12) {
		t.Errorf("p = %.15g, want %.15g", p, want)
	}
	if math.Abs(2*p-0.009091) > 5e-7 {
		t.Errorf("two-sided p = %.7f, want 0.009091", 2*p)
	}
	// Exact: W⁺ = 45 is the maximum, reached only by the all-positive pattern.
	if _, _, p, _ := SignedRankTest(d, RankExact); !closeRel(p, 1.0/512, 1e-15) {
		t.Errorf("exact p = %g, want 1/512", p)
	}
}

func TestSignTest(t *testing.T) {
	r := testRand(t, 31)
	for i := 0; i < 300; i++ {
		d := make([]float64, r.IntN(40))
		for k := range d {
			d[k] = float64(r.IntN(5) - 2)
		}
		pos, n, p, _ := SignTest(d)
		want := 1.0
		if n > 0 {
			// Independent: gonum's binomial CDF, P(S ≥ pos) = 1 − P(S ≤ pos − 1).
			want = 1 - distuv.Binomial{N: float64(n), P: 0.5}.CDF(float64(pos-1))
		}
		if math.Abs(p-want) > 1e-12 {
			t.Fatalf("SignTest(%v) = %d of %d, p %.15g; binomial %.15g", d, pos, n, p, want)
		}
	}
	// Sleep data: 9 positive of 9 non-zero: 1/512 (hand).
	if pos, n, p, _ := SignTest([]float64{1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4}); pos != 9 || n != 9 || !closeRel(p, 1.0/512, 1e-12) {
		t.Errorf("sleep sign test = %d, %d, %g; want 9, 9, 1/512", pos, n, p)
	}
}

// TestRankedInterval checks the one-sided Walsh-average lower bound by the
// duality it rests on (Hollander & Wolfe 1999, §3.3, from memory): W⁺ of
// d − θ counts the Walsh averages above θ, so just below the lower bound W⁺
// reaches the one-sided critical value at level 1 − c and just above it
// does not.
func TestRankedInterval(t *testing.T) {
	r := testRand(t, 41)
	for i := 0; i < 200; i++ {
		n := 6 + r.IntN(20)
		a, b := make([]float64, n), make([]float64, n)
		for k := range a {
			b[k] = 10 + r.NormFloat64()
			a[k] = b[k] + 0.3 + r.NormFloat64()
		}
		v, err := Ranked{}.Compare("walsh", a, b)
		if err != nil {
			t.Fatal(err)
		}
		d, _ := differences(a, b, false)
		k := rankCritical(n, 1-0.95)
		shiftW := func(theta float64) float64 {
			s := make([]float64, n)
			for j := range d {
				s[j] = d[j] - theta
			}
			w, _, _, _ := SignedRankTest(s, RankExact)
			return w
		}
		if w := shiftW(v.Lo - 1e-9); w < float64(k) {
			t.Fatalf("W⁺(d − (L − ε)) = %g, want ≥ %d", w, k)
		}
		if w := shiftW(v.Lo + 1e-9); w >= float64(k) {
			t.Fatalf("W⁺(d − (L + ε)) = %g, want < %d", w, k)
		}
		if !(v.Lo <= v.Estimate) || !math.IsInf(v.Hi, 1) {
			t.Fatalf("estimate %g outside [%g, %g], want Hi = +Inf", v.Estimate, v.Lo, v.Hi)
		}
	}
	// Hodges–Lehmann by hand: d = 1, 2, 3 has Walsh averages
	// 1, 1.5, 2, 2, 2.5, 3 with median 2; n = 3 is too few for 95%.
	v, err := Ranked{}.Compare("hl", []float64{1, 2, 3}, []float64{0, 0, 0})
	if err != nil {
		t.Fatal(err)
	}
	if v.Estimate != 2 || !math.IsInf(v.Lo, -1) || !math.IsInf(v.Hi, 1) || !v.Pass {
		t.Errorf("n = 3: %+v, want estimate 2, unbounded interval, pass", v)
	}
	// n = 5 all positive: W⁺ = 15 has exact one-sided p = 1/32 = 0.03125
	// ≤ 0.05 (the whole null distribution is 2⁵ equally likely sign
	// patterns; Wilcoxon 1945), so the one-sided 95% bound is the smallest
	// Walsh average, min d = 0.5, and the gate fails.
	v, err = Ranked{}.Compare("n5", []float64{0.5, 1, 2, 3, 4}, make([]float64, 5))
	if err != nil {
		t.Fatal(err)
	}
	if v.Lo != 0.5 || v.Pass || math.Abs(v.PValue-1.0/32) > 1e-12 {
		t.Errorf("n = 5: %+v, want bound 0.5, p = 1/32, fail", v)
	}
}

// TestRankedSimulation mirrors TestPairedSimulation for the distribution-
// free gate, with heavy-tailed (Student t, ν = 2) noise where the t gate
// loses power.
func TestRankedSimulation(t *testing.T) {
	r := testRand(t, 51)
	noise := distuv.StudentsT{Mu: 0, Sigma: 0.5, Nu: 2, Src: r}
	const trials, runs = 200, 30
	count := func(shift float64, g Ranked) int {
		fails := 0
		for range trials {
			a, b := make([]float64, runs), make([]float64, runs)
			for i := range a {
				base := 5 + 2*r.NormFloat64()
				b[i] = base + noise.Rand()
				a[i] = base + shift + noise.Rand()
			}
			v, err := g.Compare("sim", a, b)
			if err != nil {
				t.Fatal(err)
			}
			if !v.Pass {
				fails++
			}
		}
		return fails
	}
	if n := count(0, Ranked{}); n > 22 {
		t.Errorf("noise only: gate failed %d of %d trials, want about 10 (one-sided 5%%)", n, trials)
	}
	if n := count(1.5, Ranked{}); n < trials-2 {
		t.Errorf("shift 1.5: gate failed %d of %d trials, want nearly all", n, trials)
	}
	if n := count(1.5, Ranked{MinEffect: 3}); n != 0 {
		t.Errorf("shift 1.5 with minimum effect 3: failed %d trials, want none", n)
	}
	same := []float64{1, 2, 3, 4, 5, 6, 7}
	if v, _ := (Ranked{}).Compare("same", same, same); !v.Pass || v.Estimate != 0 || v.PValue != 1 {
		t.Errorf("identical samples: %+v", v)
	}
}

// TestRankCriticalNormal checks that the large-n critical value from the
// normal approximation stays within a few ranks of the exact one at the
// switch-over (n = ExactRankLimit).
func TestRankCriticalNormal(t *testing.T) {
	exact := rankCritical(ExactRankLimit, 0.025)
	nf := float64(ExactRankLimit)
	approx := int(math.Ceil(nf*(nf+1)/4 + 0.5 + 1.959963984540054*math.Sqrt(nf*(nf+1)*(2*nf+1)/24)))
	if d := exact - approx; d < -3 || d > 3 {
		t.Errorf("critical value at n = %d: exact %d, normal %d", ExactRankLimit, exact, approx)
	}
	if got := rankCritical(ExactRankLimit+1, 0.025); got <= exact || got > exact+ExactRankLimit+5 {
		t.Errorf("critical value at n = %d = %d, want just above %d", ExactRankLimit+1, got, exact)
	}
}

func TestRankTestsRejectNonFinite(t *testing.T) {
	for _, d := range [][]float64{{1, math.NaN()}, {math.Inf(1), 2}, {-1, math.Inf(-1)}} {
		if _, _, _, err := SignedRankTest(d, RankAuto); err == nil {
			t.Errorf("SignedRankTest(%v): no error", d)
		}
		if _, _, _, err := SignTest(d); err == nil {
			t.Errorf("SignTest(%v): no error", d)
		}
	}
}
