package metrics

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// RankMethod chooses how SignedRankTest computes its p-value.
type RankMethod int

const (
	// RankAuto is exact up to ExactRankLimit non-zero differences and the
	// normal approximation above.
	RankAuto RankMethod = iota
	// RankExact enumerates the permutation distribution of W⁺ given the
	// ranks (including midranks for ties) by dynamic programming.
	RankExact
	// RankNormal uses the normal approximation with the tie correction
	// and a continuity correction of ½.
	RankNormal
)

// ExactRankLimit is the largest number of non-zero differences for which
// RankAuto computes the exact distribution (the work grows as n³).
const ExactRankLimit = 200

// SignedRankTest is the Wilcoxon signed-rank test of the null hypothesis
// that the differences d are symmetric about 0 against the alternative that
// they tend to be positive. Zero differences are dropped (Wilcoxon's
// convention) and tied absolute values get their average rank. It returns
// W⁺, the sum of the ranks of the positive differences, the number n of
// non-zero differences and the one-sided p-value P(W⁺ ≥ w) (1 when n = 0).
// A difference that is not finite is an error.
//
// Under the null each rank carries a positive sign with probability ½
// independently, so the exact distribution of W⁺ given the ranks is the
// convolution of the two-point laws {0, rᵢ}; the normal approximation uses
//
//	E W⁺ = n(n + 1)/4,  Var W⁺ = n(n + 1)(2n + 1)/24 − Σ (t³ − t)/48
//
// over tie groups of size t, and p = 1 − Φ((w − E W⁺ − ½)/√Var W⁺).
//
// References: F. Wilcoxon, "Individual comparisons by ranking methods",
// Biometrics Bulletin 1(6):80–83, 1945; M. Hollander, D. A. Wolfe,
// "Nonparametric Statistical Methods", 2nd ed., Wiley, 1999, §3.1 (tie
// correction of the variance).
func SignedRankTest(d []float64, method RankMethod) (w float64, n int, p float64, err error) {
	if err := checkFinite(d); err != nil {
		return 0, 0, 0, err
	}
	abs := make([]float64, 0, len(d))
	for _, v := range d {
		if v != 0 {
			abs = append(abs, math.Abs(v))
		}
	}
	n = len(abs)
	if n == 0 {
		return 0, 0, 1, nil
	}
	// Doubled midranks are integers: rank2[i] = first + last (1-based) of
	// the tie group of abs[i].
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmpFloat(abs[a], abs[b]) })
	rank2 := make([]int, n)
	var tieSum float64
	for i := 0; i < n; {
		j := i
		for j+1 < n && abs[order[j+1]] == abs[order[i]] {
			j++
		}
		for k := i; k <= j; k++ {
			rank2[order[k]] = (i + 1) + (j + 1)
		}
		t := float64(j - i + 1)
		tieSum += t*t*t - t
		i = j + 1
	}
	w2 := 0
	k := 0
	for _, v := range d {
		if v != 0 {
			if v > 0 {
				w2 += rank2[k]
			}
			k++
		}
	}
	w = float64(w2) / 2
	if method == RankNormal || (method == RankAuto && n > ExactRankLimit) {
		nf := float64(n)
		mean := nf * (nf + 1) / 4
		sd := math.Sqrt(nf*(nf+1)*(2*nf+1)/24 - tieSum/48)
		if sd == 0 {
			return w, n, 1, nil
		}
		z := (w - mean - 0.5) / sd
		return w, n, distuv.UnitNormal.Survival(z), nil
	}
	// prob[s] = P(2W⁺ = s), built one rank at a time.
	total := 0
	for _, r := range rank2 {
		total += r
	}
	prob := make([]float64, total+1)
	prob[0] = 1
	reach := 0
	for _, r := range rank2 {
		for s := reach; s >= 0; s-- {
			if prob[s] != 0 {
				prob[s+r] += prob[s] / 2
				prob[s] /= 2
			}
		}
		reach += r
	}
	for s := w2; s <= total; s++ {
		p += prob[s]
	}
	return w, n, math.Min(p, 1), nil
}

// SignTest is the exact sign test of the null hypothesis that positive and
// negative differences are equally likely, against the alternative that
// positive ones are more likely. Zeros are dropped. It returns the number
// of positive differences, the number n of non-zero ones and the one-sided
// p-value P(S ≥ pos) for S ~ Binomial(n, ½) (1 when n = 0). A difference
// that is not finite is an error.
//
// Reference: W. J. Conover, "Practical Nonparametric Statistics", 3rd ed.,
// Wiley, 1999, §3.4 (from memory).
func SignTest(d []float64) (pos, n int, p float64, err error) {
	if err := checkFinite(d); err != nil {
		return 0, 0, 0, err
	}
	for _, v := range d {
		if v > 0 {
			pos++
		}
		if v != 0 {
			n++
		}
	}
	if n == 0 {
		return 0, 0, 1, nil
	}
	// Σ_{k ≥ pos} C(n, k)/2ⁿ with log-binomials.
	for k := pos; k <= n; k++ {
		lc, _ := math.Lgamma(float64(n + 1))
		a, _ := math.Lgamma(float64(k + 1))
		b, _ := math.Lgamma(float64(n - k + 1))
		p += math.Exp(lc - a - b - float64(n)*math.Ln2)
	}
	return pos, n, math.Min(p, 1), nil
}

func checkFinite(d []float64) error {
	for i, v := range d {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("difference %d is %g, want a finite number", i, v)
		}
	}
	return nil
}

// Ranked is the distribution-free counterpart of Paired: the same paired
// differences dᵢ and the same one-sided decision rule at level 1 − c,
// fail ⇔ L₁ > max(0, MinEffect), with the Hodges–Lehmann estimate (the
// median of the Walsh averages (dᵢ + dⱼ)/2, i ≤ j) in place of the mean and
// the one-sided Walsh-average lower bound in place of the t bound:
//
//	L₁ = W₍M+1−k₎,  M = N(N + 1)/2,
//
// where W₍₁₎ ≤ … ≤ W₍M₎ are the sorted Walsh averages and k is the smallest
// w with P(W⁺ ≥ w) ≤ 1 − c under the null distribution of the signed-rank
// statistic for N untied, non-zero differences (exact up to
// ExactRankLimit, normal approximation above). The verdict reports
// Lo = L₁ and Hi = +Inf, the one-sided interval [L₁, +∞). Verdict.PValue is
// the one-sided signed-rank p-value of the differences shifted by
// δ' = max(0, MinEffect); since W⁺(d − δ') counts the Walsh averages above
// δ', L₁ > δ' exactly when W⁺(d − δ') ≥ k, that is when the exact p-value
// is at most 1 − c (for untied, non-zero shifted differences).
//
// References: J. L. Hodges, E. L. Lehmann, "Estimates of location based on
// rank tests", Ann. Math. Statist. 34(2):598–611, 1963; M. Hollander,
// D. A. Wolfe, "Nonparametric Statistical Methods", 2nd ed., Wiley, 1999,
// §3.2–3.3 (from memory).
type Ranked struct {
	// Confidence c in (0, 1); zero means 0.95.
	Confidence float64
	// MinEffect δ ≥ 0, as for Paired.
	MinEffect float64
	// HigherIsBetter, as for Paired.
	HigherIsBetter bool
}

// Compare judges candidate against baseline on the same seeds; errors and
// panics are as for Paired.Compare. With N so small that no bound reaches
// confidence c (N ≤ 4 at 95%), the bound is −Inf and the gate passes.
func (g Ranked) Compare(gate string, candidate, baseline []float64) (Verdict, error) {
	conf := mustGate(g.Confidence, g.MinEffect)
	d, err := differences(candidate, baseline, g.HigherIsBetter)
	if err != nil {
		return Verdict{}, err
	}
	n := len(d)
	walsh := make([]float64, 0, n*(n+1)/2)
	for i := range d {
		for j := i; j < n; j++ {
			walsh = append(walsh, (d[i]+d[j])/2)
		}
	}
	slices.Sort(walsh)
	m := len(walsh)
	est := walsh[m/2]
	if m%2 == 0 {
		est = (walsh[m/2-1] + walsh[m/2]) / 2
	}
	v := Verdict{Gate: gate, Test: "signed rank", Estimate: est, Lo: math.Inf(-1), Hi: math.Inf(1), Limit: g.MinEffect}
	if k := rankCritical(n, 1-conf); k <= m {
		v.Lo = walsh[m-k]
	}
	shift := math.Max(0, g.MinEffect)
	shifted := make([]float64, n)
	for i, x := range d {
		shifted[i] = x - shift
	}
	if _, _, v.PValue, err = SignedRankTest(shifted, RankAuto); err != nil {
		return Verdict{}, err
	}
	if v.Lo > shift {
		v.Reason = fmt.Sprintf("candidate is worse by %.4g (median of Walsh averages) over %d runs; its one-sided %g lower bound %.4g lies above the minimum effect %g (p = %.3g)",
			est, n, conf, v.Lo, g.MinEffect, v.PValue)
	} else {
		v.Pass = true
		v.Reason = fmt.Sprintf("no worsening beyond the minimum effect %g with confidence %g over %d runs: one-sided lower bound %.4g (p = %.3g)",
			g.MinEffect, conf, n, v.Lo, v.PValue)
	}
	return v, nil
}

// Validate reports invalid settings, as Paired.Validate does.
func (g Ranked) Validate() error { return validateGate(g.Confidence, g.MinEffect) }

// rankCritical returns the smallest w with P(W⁺ ≥ w) ≤ a for n untied,
// non-zero differences, or n(n+1)/2 + 1 when no w qualifies.
func rankCritical(n int, a float64) int {
	m := n * (n + 1) / 2
	if n > ExactRankLimit {
		nf := float64(n)
		mean := nf * (nf + 1) / 4
		sd := math.Sqrt(nf * (nf + 1) * (2*nf + 1) / 24)
		z := distuv.UnitNormal.Quantile(1 - a)
		// P(W⁺ ≥ w) ≈ 1 − Φ((w − ½ − mean)/sd) ≤ a.
		return min(int(math.Ceil(mean+0.5+z*sd)), m+1)
	}
	prob := make([]float64, m+1)
	prob[0] = 1
	reach := 0
	for r := 1; r <= n; r++ {
		for s := reach; s >= 0; s-- {
			prob[s+r] += prob[s] / 2
			prob[s] /= 2
		}
		reach += r
	}
	tail := 0.0
	w := m + 1
	for s := m; s >= 0; s-- {
		tail += prob[s]
		if tail > a {
			break
		}
		w = s
	}
	return w
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}
