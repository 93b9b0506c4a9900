package metrics

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

type pts = [][]float64

// Point sets of CHECK-VALUES §1.3 (2-D, Euclidean d).
var (
	g1x = pts{{0, 0}, {10, 0}}
	g1y = pts{{1, 0}, {10, 2}}
	g2x = pts{{0, 0}, {10, 0}, {20, 0}}
	g2y = pts{{0, 1}, {10, 0.5}, {50, 50}}
	g3x = pts{{0, 0}, {6, 8}}
	g3y = pts{{0, 3}, {5, 8}, {4, 4}}
	g4x = pts{{0, 0}, {2, 0}}
	g4y = pts{{1, 0}, {3.5, 0}}
	g5y = pts{{1, 1}, {2, 2}, {3, 3}}
	g6x = pts{{0, 0}, {1, 1}, {5, 5}}
	g6y = pts{{0.5, 0}}
)

// TestGOSPAWorked checks GOSPA (α = 2) against CHECK-VALUES §1.3, whose
// values are [COMP-own] brute force over injections and over partial
// matchings, and scipy 1.10.1 linear_sum_assignment [COMP-lib]; metric from
// Rahmathullah, García-Fernández, Svensson, "Generalized optimal
// sub-pattern assignment metric", FUSION 2017, Definition 1 and
// Proposition 1. Each row is also worked by hand in its comment.
func TestGOSPAWorked(t *testing.T) {
	tests := []struct {
		name         string
		x, y         pts
		c, p         float64
		value, power float64
		loc          float64
		miss, falseN int
	}{
		// d = 1 and 2, both < 5: 1² + 2² = 5, GOSPA = √5.
		{"G1 p2", g1x, g1y, 5, 2, 2.236067977500, 5, 5, 0, 0},
		// 1 + 2 = 3.
		{"G1 p1", g1x, g1y, 5, 1, 3, 3, 3, 0, 0},
		// Pairs at d = 0 and 0.5 (1 + 0.25 = 1.25); (20,0) and (50,50) are
		// 58.3 apart: one miss and one false track, 2·25/2 = 25; total 26.25.
		{"G2 p2", g2x, g2y, 5, 2, 5.123475382980, 26.25, 1.25, 1, 1},
		// 1 + 0.5 + 2·4/2 = 5.5.
		{"G2 p1", g2x, g2y, 4, 1, 5.5, 5.5, 1.5, 1, 1},
		// (0,0)–(0,3): 9, (6,8)–(5,8): 1, (4,4) false: 25/2; 9 + 1 + 12.5 = 22.5.
		{"G3 p2 c5", g3x, g3y, 5, 2, 4.743416490253, 22.5, 10, 0, 1},
		// 3 + 1 + 4/2 = 6.
		{"G3 p1 c4", g3x, g3y, 4, 1, 6, 6, 4, 0, 1},
		// c = 2: only (6,8)–(5,8) is closer than c: 1 + 4/2·(1 miss + 2 false) = 7.
		{"G3 p2 c2", g3x, g3y, 2, 2, 2.645751311065, 7, 1, 1, 2},
		// Greedy trap: (0,0)–(1,0) and (2,0)–(3.5,0): 1 + 2.25 = 3.25.
		{"G4 p2", g4x, g4y, 3, 2, 1.802775637732, 3.25, 3.25, 0, 0},
		// Empty truth: 3 false tracks, 3·25/2 = 37.5.
		{"G5 p2", nil, g5y, 5, 2, 6.123724356958, 37.5, 0, 0, 3},
		// 3·4/2 = 6.
		{"G5 p1", nil, g5y, 4, 1, 6, 6, 0, 0, 3},
		// (0,0)–(0.5,0): 0.25, two misses: 25; 25.25.
		{"G6 p2", g6x, g6y, 5, 2, 5.024937810560, 25.25, 0.25, 2, 0},
		// 0.5 + 2·5/2 = 5.5.
		{"G6 p1", g6x, g6y, 5, 1, 5.5, 5.5, 0.5, 2, 0},
	}
	var w Workspace
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			g, err := w.GOSPA(tt.x, tt.y, Params{Order: tt.p, Cutoff: tt.c})
			if err != nil {
				t.Fatal(err)
			}
			if !closeRel(g.Value, tt.value, 1e-11) || !closeRel(g.Power, tt.power, 1e-12) {
				t.Errorf("GOSPA = %.12g (power %.12g), want %.12g (power %.12g)", g.Value, g.Power, tt.value, tt.power)
			}
			if !closeRel(g.Localisation, tt.loc, 1e-12) || g.Misses != tt.miss || g.FalseTracks != tt.falseN {
				t.Errorf("split = loc %g, %d missed, %d false; want %g, %d, %d", g.Localisation, g.Misses, g.FalseTracks, tt.loc, tt.miss, tt.falseN)
			}
			cp := math.Pow(tt.c, tt.p)
			if !closeRel(g.Missed, cp/2*float64(tt.miss), 1e-12) || !closeRel(g.False, cp/2*float64(tt.falseN), 1e-12) {
				t.Errorf("missed part %g, false part %g; want %g, %g", g.Missed, g.False, cp/2*float64(tt.miss), cp/2*float64(tt.falseN))
			}
			// Symmetry of the value (the split swaps misses and false tracks).
			h, _ := w.GOSPA(tt.y, tt.x, Params{Order: tt.p, Cutoff: tt.c})
			if !closeRel(h.Value, g.Value, 1e-12) || h.Misses != g.FalseTracks || h.FalseTracks != g.Misses {
				t.Errorf("swapped = %+v, want value %g with misses and false tracks swapped", h, g.Value)
			}
		})
	}
}

// TestGOSPATie is CHECK-VALUES §1.3 case G1-tie: at c = 2, d((10,0),(10,2))
// equals c, so matching that pair and leaving it unmatched both cost 4. The
// package counts a pair at d = c as a miss and a false track.
func TestGOSPATie(t *testing.T) {
	var w Workspace
	g, err := w.GOSPA(g1x, g1y, Params{Order: 2, Cutoff: 2})
	if err != nil {
		t.Fatal(err)
	}
	want := GOSPA{Value: math.Sqrt(5), Power: 5, Localisation: 1, Missed: 2, False: 2, Matched: 1, Misses: 1, FalseTracks: 1}
	if !closeRel(g.Value, want.Value, 1e-12) || g.Power != 5 || g.Localisation != 1 || g.Matched != 1 || g.Misses != 1 || g.FalseTracks != 1 {
		t.Errorf("GOSPA at the tie = %+v, want %+v", g, want)
	}
	if m := w.Matches(); len(m) != 2 || m[0] != 0 || m[1] != -1 {
		t.Errorf("Matches() = %v, want [0 -1]", m)
	}
}

// TestOSPAWorked checks OSPA against CHECK-VALUES §2.2 ([COMP-own] brute
// force over injections) for D. Schuhmacher, B.-T. Vo, B.-N. Vo, "A
// consistent metric for performance evaluation of multi-object filters",
// IEEE Trans. SP 56(8), 2008, with hand derivations beside each row.
func TestOSPAWorked(t *testing.T) {
	inf := math.Inf(1)
	tests := []struct {
		name            string
		x, y            pts
		c, p            float64
		value, loc, crd float64
	}{
		// (1 + 4)/2 = 2.5 → √2.5.
		{"G1 p2", g1x, g1y, 5, 2, 1.581138830084, 1.581138830084, 0},
		// (1 + 2)/2.
		{"G1 p1", g1x, g1y, 5, 1, 1.5, 1.5, 0},
		// max(1, 2).
		{"G1 inf", g1x, g1y, 5, inf, 2, 0, 0},
		// (1 + 0.25 + 25)/3 = 8.75 (the far pair is cut off at c).
		{"G2 p2", g2x, g2y, 5, 2, 2.958039891550, 2.958039891550, 0},
		// (1 + 0.5 + 4)/3 = 11/6.
		{"G2 p1", g2x, g2y, 4, 1, 1.833333333333, 1.833333333333, 0},
		// The far pair reaches the cut-off: max = 5.
		{"G2 inf", g2x, g2y, 5, inf, 5, 0, 0},
		// (9 + 1 + 25)/3 = 35/3; loc (10/3), card (25/3).
		{"G3 p2", g3x, g3y, 5, 2, 3.415650255320, 1.825741858351, 2.886751345948},
		// (3 + 1 + 4)/3 = 8/3; loc 4/3, card 4/3.
		{"G3 p1", g3x, g3y, 4, 1, 2.666666666667, 1.333333333333, 1.333333333333},
		// m ≠ n.
		{"G3 inf", g3x, g3y, 5, inf, 5, 0, 0},
		// (1 + 2.25)/2 = 1.625.
		{"G4 p2", g4x, g4y, 3, 2, 1.274754878398, 1.274754878398, 0},
		// Bottleneck: max(1, 1.5) = 1.5 beats max(1, 2.5).
		{"G4 inf", g4x, g4y, 5, inf, 1.5, 0, 0},
		// Empty against three points: c.
		{"G5 p2", nil, g5y, 5, 2, 5, 0, 5},
		{"G5 p1", nil, g5y, 5, 1, 5, 0, 5},
		{"G5 inf", nil, g5y, 5, inf, 5, 0, 0},
		// (0.25 + 2·25)/3; loc √(0.25/3), card √(50/3).
		{"G6 p2", g6x, g6y, 5, 2, 4.092676385936, 0.288675134595, 4.082482904639},
		// (0.5 + 10)/3 = 3.5; loc 0.5/3, card 10/3.
		{"G6 p1", g6x, g6y, 5, 1, 3.5, 0.166666666667, 3.333333333333},
		// Both empty: 0 by convention.
		{"empty p2", nil, nil, 5, 2, 0, 0, 0},
		{"empty inf", nil, nil, 5, inf, 0, 0, 0},
	}
	var w Workspace
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			for _, swap := range []bool{false, true} {
				x, y := tt.x, tt.y
				if swap {
					x, y = y, x
				}
				o, err := w.OSPA(x, y, Params{Order: tt.p, Cutoff: tt.c})
				if err != nil {
					t.Fatal(err)
				}
				if !closeRel(o.Value, tt.value, 1e-11) || !closeRel(o.Localisation, tt.loc, 1e-11) || !closeRel(o.Cardinality, tt.crd, 1e-11) {
					t.Errorf("OSPA(swap=%v) = %+v, want %.12g (loc %.12g, card %.12g)", swap, o, tt.value, tt.loc, tt.crd)
				}
			}
		})
	}
}

// TestGOSPAIdentityWithOSPA checks CHECK-VALUES §1.3, "Identity check": for
// α = 1, GOSPA = max(|X|, |Y|)^(1/p)·OSPA. With α = 2 and |X| = |Y| the
// cardinality term vanishes, so GOSPA = n^(1/p)·OSPA (hand derivation from
// the two definitions); checked on random equal-size sets.
func TestGOSPAIdentityWithOSPA(t *testing.T) {
	r := testRand(t, 3)
	var w Workspace
	for i := 0; i < 500; i++ {
		n := 1 + r.IntN(6)
		x, y := randomSet(r, n, 2, 10), randomSet(r, n, 2, 10)
		p := Params{Order: float64(1 + r.IntN(3)), Cutoff: 1 + 4*r.Float64()}
		g, _ := w.GOSPA(x, y, p)
		o, _ := w.OSPA(x, y, p)
		if want := math.Pow(float64(n), 1/p.Order) * o.Value; !closeRel(g.Value, want, 1e-9) {
			t.Fatalf("GOSPA %g, n^(1/p)·OSPA %g", g.Value, want)
		}
	}
}

func randomSet(r *rand.Rand, n, dim int, scale float64) pts {
	s := make(pts, n)
	for i := range s {
		s[i] = make([]float64, dim)
		for k := range s[i] {
			s[i][k] = scale * r.Float64()
		}
	}
	return s
}

func dist(x, y []float64) float64 {
	var s float64
	for k := range x {
		s += (x[k] - y[k]) * (x[k] - y[k])
	}
	return math.Sqrt(s)
}

// bruteGOSPAPower enumerates every partial matching γ and returns
// min Σ_γ dᵖ + (cᵖ/2)(m + n − 2|γ|): Proposition 1 of Rahmathullah et al.
// (FUSION 2017) for α = 2, with the plain distance and no assignment solver.
func bruteGOSPAPower(x, y pts, c, p float64) float64 {
	cp := math.Pow(c, p)
	dp := powDist(x, y, p, math.Inf(1))
	used := make([]bool, len(y))
	best := math.Inf(1)
	var rec func(i int, acc float64, matched int)
	rec = func(i int, acc float64, matched int) {
		if i == len(x) {
			best = math.Min(best, acc+cp/2*float64(len(x)+len(y)-2*matched))
			return
		}
		rec(i+1, acc, matched) // xᵢ unmatched
		for j := range y {
			if !used[j] {
				used[j] = true
				rec(i+1, acc+dp[i][j], matched+1)
				used[j] = false
			}
		}
	}
	rec(0, 0, 0)
	return best
}

// bruteGOSPADefinition enumerates every injection π of the smaller set
// into the larger and returns min Σ d⁽ᶜ⁾ᵖ + (cᵖ/α)·(n − m) with α = 2:
// Definition 1 of Rahmathullah et al. (FUSION 2017). Agreement with
// bruteGOSPAPower checks Proposition 1 (the partial-matching form), which
// CHECK-VALUES §1.2 states from memory.
func bruteGOSPADefinition(x, y pts, c, p float64) float64 {
	if len(x) > len(y) {
		x, y = y, x
	}
	cp := math.Pow(c, p)
	dp := powDist(x, y, p, c)
	used := make([]bool, len(y))
	best := math.Inf(1)
	var rec func(i int, acc float64)
	rec = func(i int, acc float64) {
		if i == len(x) {
			best = math.Min(best, acc)
			return
		}
		for j := range y {
			if !used[j] {
				used[j] = true
				rec(i+1, acc+dp[i][j])
				used[j] = false
			}
		}
	}
	rec(0, 0)
	return best + cp/2*float64(len(y)-len(x))
}

// powDist returns min(d(xᵢ, yⱼ), c)ᵖ for every pair.
func powDist(x, y pts, p, c float64) [][]float64 {
	out := make([][]float64, len(x))
	for i := range x {
		out[i] = make([]float64, len(y))
		for j := range y {
			out[i][j] = math.Pow(math.Min(dist(x[i], y[j]), c), p)
		}
	}
	return out
}

// bruteOSPA enumerates every injection of the smaller set into the larger:
// the definition of Schuhmacher, Vo, Vo (2008), including p = ∞.
func bruteOSPA(x, y pts, c, p float64) float64 {
	if len(x) > len(y) {
		x, y = y, x
	}
	m, n := len(x), len(y)
	if n == 0 {
		return 0
	}
	if math.IsInf(p, 1) && m != n {
		return c
	}
	used := make([]bool, n)
	best := math.Inf(1)
	var rec func(i int, acc float64)
	rec = func(i int, acc float64) {
		if i == m {
			best = math.Min(best, acc)
			return
		}
		for j := range y {
			if !used[j] {
				used[j] = true
				d := math.Min(dist(x[i], y[j]), c)
				if math.IsInf(p, 1) {
					rec(i+1, math.Max(acc, d))
				} else {
					rec(i+1, acc+math.Pow(d, p))
				}
				used[j] = false
			}
		}
	}
	rec(0, 0)
	if math.IsInf(p, 1) {
		return best
	}
	return math.Pow((best+math.Pow(c, p)*float64(n-m))/float64(n), 1/p)
}

// TestAgainstBruteForce compares both metrics with exhaustive enumeration
// on seeded random sets of 0–6 points in 1 to 3 dimensions.
func TestAgainstBruteForce(t *testing.T) {
	r := testRand(t, 1)
	orders := []float64{1, 2, 3, 1.5, math.Inf(1)}
	var w Workspace
	for i := 0; i < 3000; i++ {
		dim := 1 + r.IntN(3)
		x, y := randomSet(r, r.IntN(7), dim, 10), randomSet(r, r.IntN(7), dim, 10)
		c := 0.5 + 6*r.Float64()
		p := orders[r.IntN(len(orders))]
		params := Params{Order: p, Cutoff: c}
		o, err := w.OSPA(x, y, params)
		if err != nil {
			t.Fatal(err)
		}
		if want := bruteOSPA(x, y, c, p); !closeRel(o.Value, want, 1e-9) {
			t.Fatalf("case %d: OSPA(%v, %v, c=%g, p=%g) = %.15g, brute force %.15g", i, x, y, c, p, o.Value, want)
		}
		if math.IsInf(p, 1) {
			continue
		}
		g, err := w.GOSPA(x, y, params)
		if err != nil {
			t.Fatal(err)
		}
		want := bruteGOSPAPower(x, y, c, p)
		if !closeRel(g.Power, want, 1e-9) {
			t.Fatalf("case %d: GOSPA^p(%v, %v, c=%g, p=%g) = %.15g, brute force %.15g", i, x, y, c, p, g.Power, want)
		}
		if def := bruteGOSPADefinition(x, y, c, p); !closeRel(def, want, 1e-9) {
			t.Fatalf("case %d: Definition 1 gives %.15g, Proposition 1 %.15g", i, def, want)
		}
		checkSplit(t, g, len(x), len(y), c, p)
		if !closeRel(math.Pow(o.Localisation, p)+math.Pow(o.Cardinality, p), math.Pow(o.Value, p), 1e-9) {
			t.Fatalf("OSPA split %+v does not add up in the p-th power", o)
		}
	}
}

// checkSplit checks GOSPAᵖ = loc + missed + false, the counts, and that the
// matching Matches reports realises the localisation part with d < c.
func checkSplit(t *testing.T, g GOSPA, m, n int, c, p float64) {
	t.Helper()
	if !closeRel(g.Localisation+g.Missed+g.False, g.Power, 1e-12) || !closeRel(math.Pow(g.Value, p), g.Power, 1e-9) {
		t.Fatalf("GOSPA parts %+v do not add up", g)
	}
	if g.Matched+g.Misses != m || g.Matched+g.FalseTracks != n {
		t.Fatalf("GOSPA counts %+v inconsistent with |X| = %d, |Y| = %d", g, m, n)
	}
	cp := math.Pow(c, p)
	if !closeRel(g.Missed, cp/2*float64(g.Misses), 1e-12) || !closeRel(g.False, cp/2*float64(g.FalseTracks), 1e-12) {
		t.Fatalf("GOSPA missed/false parts %+v, want cᵖ/2 per point", g)
	}
}

// TestMetricAxioms checks identity, symmetry and the triangle inequality on
// seeded random triples, for GOSPA (α = 2 is within the metric range
// 0 < α ≤ 2 of Rahmathullah et al. 2017, Proposition 1) and for OSPA
// (Schuhmacher, Vo, Vo 2008, Section III), including p = ∞.
func TestMetricAxioms(t *testing.T) {
	r := testRand(t, 99)
	var w Workspace
	orders := []float64{1, 2, 2.5, math.Inf(1)}
	const tol = 1e-9
	for i := 0; i < 2000; i++ {
		p := Params{Order: orders[r.IntN(len(orders))], Cutoff: 0.5 + 5*r.Float64()}
		sets := [3]pts{}
		for k := range sets {
			sets[k] = randomSet(r, r.IntN(6), 2, 8)
		}
		metrics := []struct {
			name string
			f    func(a, b pts) float64
		}{
			{"OSPA", func(a, b pts) float64 { o, _ := w.OSPA(a, b, p); return o.Value }},
		}
		if !math.IsInf(p.Order, 1) {
			metrics = append(metrics, struct {
				name string
				f    func(a, b pts) float64
			}{"GOSPA", func(a, b pts) float64 { g, _ := w.GOSPA(a, b, p); return g.Value }})
		}
		for _, mt := range metrics {
			x, y, z := sets[0], sets[1], sets[2]
			if d := mt.f(x, x); d != 0 {
				t.Fatalf("%s(X, X) = %g, want 0", mt.name, d)
			}
			// Reordering a set does not change it.
			if len(x) > 1 {
				rev := append(pts(nil), x...)
				rev[0], rev[len(rev)-1] = rev[len(rev)-1], rev[0]
				if d := mt.f(x, rev); d != 0 {
					t.Fatalf("%s(X, reordered X) = %g, want 0", mt.name, d)
				}
			}
			dxy, dyx := mt.f(x, y), mt.f(y, x)
			if dxy != dyx && !closeRel(dxy, dyx, tol) {
				t.Fatalf("%s not symmetric: %g vs %g", mt.name, dxy, dyx)
			}
			// Random sets of continuous points are distinct with probability
			// one unless both are empty.
			if (len(x) > 0 || len(y) > 0) && !(dxy > 0) {
				t.Fatalf("%s(X, Y) = %g for distinct sets %v, %v", mt.name, dxy, x, y)
			}
			if dxz, dzy := mt.f(x, z), mt.f(z, y); dxy > dxz+dzy+tol*(1+dxy) {
				t.Fatalf("%s triangle inequality: d(X,Y) = %g > d(X,Z) + d(Z,Y) = %g", mt.name, dxy, dxz+dzy)
			}
		}
	}
}

// TestComponents checks that distances on chosen components of longer
// state vectors equal those on the extracted points.
func TestComponents(t *testing.T) {
	r := testRand(t, 5)
	var w Workspace
	for i := 0; i < 200; i++ {
		xs, ys := randomSet(r, r.IntN(5), 4, 10), randomSet(r, r.IntN(5), 4, 10)
		pick := func(s pts) pts {
			out := make(pts, len(s))
			for k, v := range s {
				out[k] = []float64{v[0], v[2]}
			}
			return out
		}
		p := Params{Order: 2, Cutoff: 3, Components: []int{0, 2}}
		g1, err := w.GOSPA(xs, ys, p)
		if err != nil {
			t.Fatal(err)
		}
		g2, _ := w.GOSPA(pick(xs), pick(ys), Params{Order: 2, Cutoff: 3})
		if g1 != g2 {
			t.Fatalf("GOSPA on components {0,2} = %+v, on extracted points %+v", g1, g2)
		}
	}
}

func TestSetDistanceErrors(t *testing.T) {
	var w Workspace
	p := Params{Cutoff: 5}
	cases := []struct {
		name string
		x, y pts
		p    Params
	}{
		{"ragged", pts{{0, 0}}, pts{{1, 1, 1}}, p},
		{"nan truth", pts{{0, math.NaN()}}, pts{{1, 1}}, p},
		{"inf estimate", pts{{0, 0}}, pts{{math.Inf(-1), 1}}, p},
		{"short for components", pts{{0, 0, 0}}, pts{{1}}, Params{Cutoff: 5, Components: []int{0, 2}}},
	}
	for _, c := range cases {
		if _, err := w.GOSPA(c.x, c.y, c.p); err == nil {
			t.Errorf("%s: GOSPA returned no error", c.name)
		}
		if _, err := w.OSPA(c.x, c.y, c.p); err == nil {
			t.Errorf("%s: OSPA returned no error", c.name)
		}
	}
	// Components that skip a bad coordinate ignore it.
	if _, err := w.GOSPA(pts{{0, math.NaN(), 0}}, pts{{1, 0, 1}}, Params{Cutoff: 5, Components: []int{0, 2}}); err != nil {
		t.Errorf("NaN outside the chosen components: %v", err)
	}
	for _, bad := range []Params{{}, {Cutoff: -1}, {Cutoff: math.Inf(1)}, {Cutoff: 1, Order: 0.5}, {Cutoff: 1, Order: math.NaN()}, {Cutoff: 1, Components: []int{-1}}, {Cutoff: 1e200, Order: 3}} {
		if err := bad.Validate(true); err == nil {
			t.Errorf("Params%+v.Validate() = nil, want an error", bad)
		}
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("GOSPA with %+v did not panic", bad)
				}
			}()
			w.GOSPA(g1x, g1y, bad)
		}()
	}
	inf := Params{Cutoff: 1, Order: math.Inf(1)}
	if inf.Validate(false) == nil || inf.Validate(true) != nil || (Params{Cutoff: 1}).Validate(false) != nil {
		t.Error("Validate does not tell GOSPA's and OSPA's orders apart")
	}
	func() {
		defer func() {
			if recover() == nil {
				t.Error("GOSPA with p = ∞ did not panic")
			}
		}()
		w.GOSPA(g1x, g1y, Params{Cutoff: 1, Order: math.Inf(1)})
	}()
}

// TestWorkspaceAllocs checks that a reused Workspace computes GOSPA and
// OSPA without allocating.
func TestWorkspaceAllocs(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 8))
	x, y := randomSet(r, 30, 2, 100), randomSet(r, 25, 2, 100)
	var w Workspace
	p := Params{Order: 2, Cutoff: 10}
	w.GOSPA(x, y, p)
	w.OSPA(x, y, p)
	w.OSPA(x[:len(y)], y, Params{Order: math.Inf(1), Cutoff: 10})
	if a := testing.AllocsPerRun(20, func() { w.GOSPA(x, y, p) }); a != 0 {
		t.Errorf("GOSPA allocates %g times per call with a reused workspace", a)
	}
	if a := testing.AllocsPerRun(20, func() { w.OSPA(x, y, p) }); a != 0 {
		t.Errorf("OSPA allocates %g times per call with a reused workspace", a)
	}
}

// FuzzGOSPA compares GOSPA and OSPA with brute force on small sets decoded
// from the fuzz input: 1-D points from bytes, at most 5 per set.
func FuzzGOSPA(f *testing.F) {
	f.Add([]byte{3, 2, 10, 20, 30, 11, 40}, uint8(5), uint8(2))
	f.Add([]byte{0, 3, 1, 2, 3}, uint8(1), uint8(1))
	f.Add([]byte{2, 2, 0, 2, 1, 3}, uint8(1), uint8(3))
	f.Fuzz(func(t *testing.T, data []byte, cb, pb uint8) {
		if len(data) < 2 {
			return
		}
		m, n := int(data[0]%6), int(data[1]%6)
		data = data[2:]
		if len(data) < m+n {
			return
		}
		x, y := make(pts, m), make(pts, n)
		for i := range x {
			x[i] = []float64{float64(data[i])}
		}
		for j := range y {
			y[j] = []float64{float64(data[m+j])}
		}
		c := 1 + float64(cb%50)
		p := 1 + float64(pb%3)
		var w Workspace
		g, err := w.GOSPA(x, y, Params{Order: p, Cutoff: c})
		if err != nil {
			t.Fatal(err)
		}
		if want := bruteGOSPAPower(x, y, c, p); !closeRel(g.Power, want, 1e-9) {
			t.Fatalf("GOSPA^p(%v, %v, c=%g, p=%g) = %g, brute force %g", x, y, c, p, g.Power, want)
		}
		checkSplit(t, g, m, n, c, p)
		o, err := w.OSPA(x, y, Params{Order: p, Cutoff: c})
		if err != nil {
			t.Fatal(err)
		}
		if want := bruteOSPA(x, y, c, p); !closeRel(o.Value, want, 1e-9) {
			t.Fatalf("OSPA(%v, %v, c=%g, p=%g) = %g, brute force %g", x, y, c, p, o.Value, want)
		}
	})
}

// BenchmarkGOSPA100 is GOSPA between 100 truth objects and 100 tracks in
// 2-D with a reused workspace: tracks are the objects displaced by unit
// Gaussian noise and shuffled, over a 1 km square, p = 2. With c = 20 m
// nearly every cross pair is cut off; with c = 2 km none is.
func BenchmarkGOSPA100(b *testing.B) {
	r := rand.New(rand.NewPCG(100, 100))
	truth := randomSet(r, 100, 2, 1000)
	tracks := make(pts, len(truth))
	for i, x := range truth {
		tracks[i] = []float64{x[0] + r.NormFloat64(), x[1] + r.NormFloat64()}
	}
	r.Shuffle(len(tracks), func(i, j int) { tracks[i], tracks[j] = tracks[j], tracks[i] })
	for _, c := range []float64{20, 2000} {
		b.Run(fmt.Sprintf("c=%g", c), func(b *testing.B) {
			var w Workspace
			p := Params{Order: 2, Cutoff: c}
			b.ReportAllocs()
			for b.Loop() {
				if _, err := w.GOSPA(truth, tracks, p); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
