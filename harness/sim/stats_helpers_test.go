package sim

import (
	"flag"
	"math"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat/distuv"
)

// alpha is the significance level of every statistical test in this
// package: each fails with probability 0.001 when the simulator is right.
// The seeds are fixed, so a passing test passes every time; the level only
// guards against choosing a seed that happens to pass a wrong simulator.
const alpha = 0.001

var statSeed = flag.Uint64("statseed", 1, "seed choice of the statistical tests: 1 keeps the fixed seeds, 0 picks a seed from the clock (logged), any other value is mixed into every seed")

var (
	clockSeedOnce sync.Once
	clockSeed     uint64
)

// seedFor returns the seed a statistical test uses in place of base,
// following -statseed, and logs it when it is not the fixed one. Trying
// many values shows how often the tests fail on a correct simulator.
func seedFor(t testing.TB, base uint64) uint64 {
	t.Helper()
	s := *statSeed
	if s == 1 {
		return base
	}
	if s == 0 {
		clockSeedOnce.Do(func() { clockSeed = uint64(time.Now().UnixNano()) | 2 })
		s = clockSeed
	}
	seed := base ^ mix(s)
	t.Logf("-statseed %d: seed %d in place of %d", s, seed, base)
	return seed
}

// twoSidedZ fails t when |z| exceeds the standard normal quantile
// Φ⁻¹(1 − level/2) (gonum distuv.UnitNormal).
func twoSidedZ(t *testing.T, what string, z, level float64) {
	t.Helper()
	crit := distuv.UnitNormal.Quantile(1 - level/2)
	if math.IsNaN(z) || math.Abs(z) > crit {
		t.Errorf("%s: z = %.4f, outside ±%.4f (two-sided, level %g)", what, z, crit, level)
	} else {
		t.Logf("%s: z = %.4f (critical ±%.4f)", what, z, crit)
	}
}

// chiSquareTwoSided fails t when x is outside the central 1 − level range
// of the χ² distribution with k degrees of freedom.
func chiSquareTwoSided(t *testing.T, what string, x, k, level float64) {
	t.Helper()
	d := distuv.ChiSquared{K: k}
	lo, hi := d.Quantile(level/2), d.Quantile(1-level/2)
	if !(x >= lo && x <= hi) {
		t.Errorf("%s: χ² = %.3f with %g degrees of freedom, outside [%.3f, %.3f] (level %g)", what, x, k, lo, hi, level)
	} else {
		t.Logf("%s: χ² = %.3f, dof %g, range [%.3f, %.3f]", what, x, k, lo, hi)
	}
}

// poissonFit runs three checks of counts against Poisson(mean):
//
//   - Pearson's χ² goodness of fit (K. Pearson, "On the criterion that a
//     given system of deviations ...", Philosophical Magazine 50:157–175,
//     1900), with neighbouring cells pooled until each expects at least 5
//     (W. G. Cochran, "Some methods for strengthening the common χ² tests",
//     Biometrics 10:417–451, 1954), the two tails pooled into the end cells,
//     and cells−1 degrees of freedom; upper critical value at level;
//   - the sample mean against mean, z = (x̄ − μ)/√(μ/N) (central limit
//     theorem; Poisson variance μ);
//   - the sample variance s² against μ, with Var(s²) = (μ₄ − σ⁴(N−3)/(N−1))/N
//     (H. Cramér, Mathematical Methods of Statistics, 1946, §27.4, from
//     memory), where a Poisson law has σ² = μ and μ₄ = μ + 3μ² (its fourth
//     central moment, from its cumulants all equal to μ: μ₄ = κ₄ + 3κ₂²).
//
// pmf values come from gonum distuv.Poisson (gonum v0.17.0).
func poissonFit(t *testing.T, what string, counts []int, mean float64) {
	t.Helper()
	n := float64(len(counts))
	hist := map[int]int{}
	top := 0
	var sum, sum2 float64
	for _, c := range counts {
		hist[c]++
		top = max(top, c)
		sum += float64(c)
	}
	xbar := sum / n
	for _, c := range counts {
		d := float64(c) - xbar
		sum2 += d * d
	}
	s2 := sum2 / (n - 1)

	// Cells: pool from the left until the expectation reaches 5, and fold
	// the upper tail (beyond top) into the last cell.
	pois := distuv.Poisson{Lambda: mean}
	type cell struct{ obs, exp float64 }
	var cells []cell
	var cur cell
	for k := 0; k <= top; k++ {
		cur.obs += float64(hist[k])
		if k == 0 {
			cur.exp += n * pois.CDF(0)
		} else {
			cur.exp += n * pois.Prob(float64(k))
		}
		if cur.exp >= 5 {
			cells = append(cells, cur)
			cur = cell{}
		}
	}
	cur.exp += n * pois.Survival(float64(top))
	if len(cells) > 0 && cur.exp < 5 {
		cells[len(cells)-1].obs += cur.obs
		cells[len(cells)-1].exp += cur.exp
	} else {
		cells = append(cells, cur)
	}
	var chi float64
	for _, c := range cells {
		d := c.obs - c.exp
		chi += d * d / c.exp
	}
	if len(cells) >= 2 {
		crit := distuv.ChiSquared{K: float64(len(cells) - 1)}.Quantile(1 - alpha)
		if chi > crit {
			t.Errorf("%s: Pearson χ² = %.3f with %d cells, above the %g critical value %.3f", what, chi, len(cells), 1-alpha, crit)
		} else {
			t.Logf("%s: Pearson χ² = %.3f with %d cells (critical %.3f)", what, chi, len(cells), crit)
		}
	}
	twoSidedZ(t, what+": mean", (xbar-mean)/math.Sqrt(mean/n), alpha)
	mu4 := mean + 3*mean*mean
	varS2 := (mu4 - mean*mean*(n-3)/(n-1)) / n
	twoSidedZ(t, what+": variance", (s2-mean)/math.Sqrt(varS2), alpha)
}

// kolmogorovQuantile returns x with P(K ≤ x) = p for the limiting
// Kolmogorov distribution
//
//	P(K ≤ x) = 1 − 2 Σ_{k≥1} (−1)^{k−1} e^{−2k²x²}
//
// (A. N. Kolmogorov, "Sulla determinazione empirica di una legge di
// distribuzione", Giornale dell'Istituto Italiano degli Attuari 4:83–91,
// 1933), by bisection.
func kolmogorovQuantile(p float64) float64 {
	cdf := func(x float64) float64 {
		var s float64
		for k := 1; k <= 100; k++ {
			term := math.Exp(-2 * float64(k*k) * x * x)
			if k%2 == 1 {
				s += term
			} else {
				s -= term
			}
		}
		return 1 - 2*s
	}
	lo, hi := 0.2, 5.0
	for range 200 {
		mid := (lo + hi) / 2
		if cdf(mid) < p {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// ksUniform returns the Kolmogorov–Smirnov statistic √n·D_n of samples u
// (sorted in place) against the uniform law on [0, 1):
// D_n = max_i max(i/n − u_(i), u_(i) − (i−1)/n).
func ksUniform(u []float64) float64 {
	sortFloats(u)
	n := float64(len(u))
	var d float64
	for i, x := range u {
		d = max(d, float64(i+1)/n-x, x-float64(i)/n)
	}
	return math.Sqrt(n) * d
}
