package assign

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// TestKBestPublished checks the ranked totals of CHECK-VALUES §5.2 (project
// notes: exhaustive enumeration cross-checked with a Murty partitioning over
// scipy 1.10.1 subproblem solves). The matrices are those of §4.2. Each list
// is also recomputed here by the independent enumeration oracle.
func TestKBestPublished(t *testing.T) {
	byName := map[string]int{}
	for i, tc := range published {
		byName[tc.name] = i
	}
	ranked := []struct {
		name string
		want []float64
	}{
		{"A1", []float64{15, 16, 16, 17, 18, 18}},
		{"A2", []float64{5, 6, 6, 7, 9, 11}},
		{"A3", []float64{27, 30, 30, 34, 37, 38}},
		{"A4", []float64{140, 142, 147, 161, 166, 181, 183, 188}},
		{"A8", []float64{850, 1025, 1050, 1150, 1150, 1225}},
		{"A9", []float64{452, 452, 553, 626, 627, 627, 701, 702}},
		{"A10", []float64{18, 20, 22, 23, 24, 25}},
		{"A13", []float64{29, 31, 32, 33, 33, 33, 34, 34}},
	}
	for _, tc := range ranked {
		t.Run(tc.name, func(t *testing.T) {
			p := published[byName[tc.name]]
			all := enumerate(p.cost, p.rows, p.cols)
			for i, want := range tc.want {
				if !near(all[i].Cost, want) {
					t.Fatalf("oracle rank %d = %v, want published %v", i, all[i].Cost, want)
				}
			}
			got, err := KBest(p.cost, p.rows, p.cols, len(tc.want))
			if err != nil {
				t.Fatal(err)
			}
			if len(got) != len(tc.want) {
				t.Fatalf("KBest(%s, %d) returned %d hypotheses", tc.name, len(tc.want), len(got))
			}
			for i, h := range got {
				if !near(h.Cost, tc.want[i]) {
					t.Errorf("KBest(%s)[%d].Cost = %v, want %v", tc.name, i, h.Cost, tc.want[i])
				}
			}
			checkRanking(t, p.cost, p.rows, p.cols, got)
		})
	}
}

// TestKBestTraceA1 follows the partition trace of CHECK-VALUES §5.2 for A1:
// the second and third hypotheses are the two assignments of cost 16
// ({(0,1),(1,2),(2,0)} and {(0,2),(1,0),(2,1)}), the fourth is
// {(0,1),(1,0),(2,2)} at 17, and all 3! = 6 permutations appear.
func TestKBestTraceA1(t *testing.T) {
	got, err := KBest(published[0].cost, 3, 3, 10)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 6 {
		t.Fatalf("KBest(A1, 10) returned %d hypotheses, want all 6", len(got))
	}
	key := func(h Hypothesis) string { return fmt.Sprint(h.RowToCol) }
	if key(got[0]) != "[0 2 1]" || key(got[3]) != "[1 0 2]" {
		t.Errorf("ranks 1 and 4 = %v, %v, want [0 2 1], [1 0 2]", got[0].RowToCol, got[3].RowToCol)
	}
	pair := map[string]bool{key(got[1]): true, key(got[2]): true}
	if !pair["[1 2 0]"] || !pair["[2 0 1]"] {
		t.Errorf("ranks 2 and 3 = %v, %v, want [1 2 0] and [2 0 1]", got[1].RowToCol, got[2].RowToCol)
	}
}

// checkRanking verifies what any ranking must satisfy: non-decreasing cost,
// each cost equal to its recomputed sum, each assignment feasible and no
// assignment repeated.
func checkRanking(t *testing.T, cost []float64, rows, cols int, hs []Hypothesis) {
	t.Helper()
	seen := map[string]bool{}
	for i, h := range hs {
		if msg := feasibleErr(cost, rows, cols, h.RowToCol); msg != "" {
			t.Fatalf("hypothesis %d %v: %s", i, h.RowToCol, msg)
		}
		if s := recompute(cost, cols, h.RowToCol); !near(s, h.Cost) {
			t.Fatalf("hypothesis %d cost %v, its entries sum to %v", i, h.Cost, s)
		}
		if i > 0 && h.Cost < hs[i-1].Cost-1e-9*(1+math.Abs(h.Cost)) {
			t.Fatalf("hypothesis %d cost %v below hypothesis %d cost %v", i, h.Cost, i-1, hs[i-1].Cost)
		}
		k := fmt.Sprint(h.RowToCol)
		if seen[k] {
			t.Fatalf("hypothesis %d %v repeated", i, h.RowToCol)
		}
		seen[k] = true
	}
}

// TestKBestOracle ranks seeded random problems (square, wide, tall, with
// ties and forbidden entries) and compares the costs with the sorted list of
// all assignment costs from exhaustive enumeration.
func TestKBestOracle(t *testing.T) {
	rng := testRand(t, 5)
	for trial := 0; trial < 1200; trial++ {
		rows, cols := 1+rng.IntN(5), 1+rng.IntN(5)
		if trial%7 == 0 {
			rows, cols = 6, 1+rng.IntN(6)
		}
		c := randomMatrix(rng, rows, cols, trial%2 == 0, [...]float64{0, 0.25, 0.5}[trial%3])
		all := enumerate(c, rows, cols)
		k := 1 + rng.IntN(len(all)+3)
		got, err := KBest(c, rows, cols, k)
		if len(all) == 0 {
			if !errors.Is(err, ErrInfeasible) || len(got) != 0 {
				t.Fatalf("trial %d: KBest(infeasible %d×%d) = %v, %v, want ErrInfeasible", trial, rows, cols, got, err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("trial %d: KBest(%d×%d %v, %d): %v", trial, rows, cols, c, k, err)
		}
		want := min(k, len(all))
		if len(got) != want {
			t.Fatalf("trial %d: KBest(%d×%d %v, %d) returned %d hypotheses, want %d", trial, rows, cols, c, k, len(got), want)
		}
		for i, h := range got {
			if !near(h.Cost, all[i].Cost) {
				t.Fatalf("trial %d: KBest(%d×%d %v)[%d].Cost = %v, want %v", trial, rows, cols, c, i, h.Cost, all[i].Cost)
			}
		}
		checkRanking(t, c, rows, cols, got)
	}
}

// TestKBestFirstIsOptimum: on larger problems the first hypothesis equals
// Solve's optimum and the ranking is well formed.
func TestKBestFirstIsOptimum(t *testing.T) {
	rng := testRand(t, 6)
	for _, sh := range [][2]int{{12, 12}, {8, 15}, {15, 8}} {
		c := randomMatrix(rng, sh[0], sh[1], true, 0.3)
		_, opt, err := Solve(c, sh[0], sh[1])
		if err != nil {
			t.Fatal(err)
		}
		got, err := KBest(c, sh[0], sh[1], 60)
		if err != nil || len(got) != 60 || !near(got[0].Cost, opt) {
			t.Fatalf("KBest(%v) = %d hypotheses, first %v, err %v; want 60, %v", sh, len(got), got[0].Cost, err, opt)
		}
		checkRanking(t, c, sh[0], sh[1], got)
	}
}

func TestKBestEdges(t *testing.T) {
	if got, err := KBest([]float64{1, 2, 3, 4}, 2, 2, 0); err != nil || got != nil {
		t.Errorf("KBest(k=0) = %v, %v, want nil, nil", got, err)
	}
	if got, err := KBest(nil, 2, 0, 3); err != nil || len(got) != 1 || got[0].RowToCol[1] != -1 {
		t.Errorf("KBest(2×0) = %v, %v, want the one empty assignment", got, err)
	}
	if _, err := KBest([]float64{1, math.NaN(), 3, 4}, 2, 2, 3); err == nil {
		t.Errorf("KBest(NaN) succeeded, want an error")
	}
	if _, err := KBest([]float64{1, 2, 3}, 2, 2, 3); err == nil {
		t.Errorf("KBest(short cost) succeeded, want an error")
	}
}

// TestInputsUnchanged: neither solver writes to the caller's matrix.
func TestInputsUnchanged(t *testing.T) {
	rng := testRand(t, 7)
	for _, sh := range [][2]int{{5, 5}, {3, 6}, {6, 3}} {
		c := randomMatrix(rng, sh[0], sh[1], true, 0.2)
		keep := append([]float64(nil), c...)
		var w Workspace
		w.Solve(c, sh[0], sh[1], make([]int, sh[0]))
		w.SolveMax(c[:0:0], 0, 0, nil)
		KBest(c, sh[0], sh[1], 20)
		for k := range c {
			if c[k] != keep[k] && !(math.IsNaN(c[k]) && math.IsNaN(keep[k])) {
				t.Fatalf("%v: cost[%d] changed from %v to %v", sh, k, keep[k], c[k])
			}
		}
	}
}

// FuzzKBest decodes bytes into a small matrix (with +Inf entries) and a k,
// and compares the ranking with exhaustive enumeration.
func FuzzKBest(f *testing.F) {
	f.Add([]byte{3, 3, 7, 8, 4, 7, 5, 2, 3, 9, 4, 8})
	f.Add([]byte{2, 4, 3, 255, 1, 2, 255, 255, 3, 0, 0})
	f.Add([]byte{5, 2, 9, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 3 {
			return
		}
		rows, cols, k := int(data[0]%6), int(data[1]%6), int(data[2]%40)
		data = data[3:]
		c := make([]float64, rows*cols)
		for i := range c {
			if i < len(data) {
				if data[i] >= 240 {
					c[i] = inf
				} else {
					c[i] = float64(data[i] % 8)
				}
			}
		}
		got, err := KBest(c, rows, cols, k)
		if k == 0 {
			if err != nil || got != nil {
				t.Fatalf("KBest(k=0) = %v, %v", got, err)
			}
			return
		}
		all := enumerate(c, rows, cols)
		if len(all) == 0 {
			if !errors.Is(err, ErrInfeasible) {
				t.Fatalf("KBest(%d×%d %v) = %v, %v, want ErrInfeasible", rows, cols, c, got, err)
			}
			return
		}
		if err != nil || len(got) != min(k, len(all)) {
			t.Fatalf("KBest(%d×%d %v, %d) = %d hypotheses, %v; want %d", rows, cols, c, k, len(got), err, min(k, len(all)))
		}
		for i, h := range got {
			if !near(h.Cost, all[i].Cost) {
				t.Fatalf("KBest(%d×%d %v)[%d].Cost = %v, want %v", rows, cols, c, i, h.Cost, all[i].Cost)
			}
		}
		checkRanking(t, c, rows, cols, got)
	})
}

// TestPartitionTrace checks one partition step against the traces of
// CHECK-VALUES §5.2 (project notes, COMP-own): the children of the first
// node, in partition order, and the infeasible last child that is dropped.
func TestPartitionTrace(t *testing.T) {
	tests := []struct {
		name string
		want []float64
	}{
		// A1: forbid (0,0) → 16; force (0,0), forbid (1,2) → 18; third infeasible.
		{"A1", []float64{16, 18}},
		// A4: forbid (0,2) → 142; force (0,2), forbid (1,1) → 181;
		// force (0,2),(1,1), forbid (2,0) → 200; fourth infeasible.
		{"A4", []float64{142, 181, 200}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var p = published[0]
			for _, q := range published {
				if q.name == tc.name {
					p = q
				}
			}
			r := newRanker(p.cost, p.rows, p.cols)
			if err := r.start(); err != nil {
				t.Fatal(err)
			}
			root := r.queue[0]
			r.queue = r.queue[:0]
			r.partition(root)
			children := append(nodeHeap(nil), r.queue...)
			sort.Slice(children, func(a, b int) bool { return children[a].seq < children[b].seq })
			if len(children) != len(tc.want) {
				t.Fatalf("%d children queued, want %d", len(children), len(tc.want))
			}
			for k, nd := range children {
				bound := nd.cost
				if !r.solve(nd) {
					t.Fatalf("child %d infeasible, want cost %v", k, tc.want[k])
				}
				if !near(nd.cost, tc.want[k]) || bound > nd.cost {
					t.Errorf("child %d: cost %v (bound %v), want %v", k, nd.cost, bound, tc.want[k])
				}
			}
		})
	}
}

// TestBoundsBelowOptimum: every queued child's lower bound is at most its
// optimum, and a child dropped as infeasible has no finite completion (the
// oracle enumerates the child's matrix), on seeded random problems.
func TestBoundsBelowOptimum(t *testing.T) {
	rng := testRand(t, 8)
	for trial := 0; trial < 400; trial++ {
		rows, cols := 1+rng.IntN(6), 1+rng.IntN(6)
		c := randomMatrix(rng, rows, cols, trial%2 == 0, 0.3)
		r := newRanker(c, rows, cols)
		if r.start() != nil {
			continue
		}
		root := r.queue[0]
		r.queue = r.queue[:0]
		r.partition(root)
		queued := map[int]bool{}
		for _, nd := range append(nodeHeap(nil), r.queue...) {
			queued[nd.row] = true
			bound := nd.cost
			if !r.solve(nd) {
				continue // a bound can be finite for an infeasible child
			}
			if bound > nd.cost {
				t.Fatalf("trial %d: child of row %d bound %v above optimum %v", trial, nd.row, bound, nd.cost)
			}
		}
		// A dropped child must be infeasible: check by enumeration on
		// the padded matrix with the child's constraints.
		forced := map[int]int{}
		for i := 0; i < r.nr; i++ {
			j := root.col4row[i]
			if !queued[i] {
				m := append([]float64(nil), r.base...)
				m[i*r.n+j] = inf
				for fi, fj := range forced {
					for k := 0; k < r.n; k++ {
						if k != fj {
							m[fi*r.n+k] = inf
						}
						if k != fi {
							m[k*r.n+fj] = inf
						}
					}
				}
				if len(enumerate(m, r.n, r.n)) != 0 {
					t.Fatalf("trial %d: child of row %d dropped but feasible", trial, i)
				}
			}
			forced[i] = j
		}
	}
}

// TestKBestDeterministic: the same input gives the same ranking, ties
// included, call after call.
func TestKBestDeterministic(t *testing.T) {
	rng := testRand(t, 9)
	c := randomMatrix(rng, 7, 9, true, 0.2)
	a, errA := KBest(c, 7, 9, 50)
	b, errB := KBest(c, 7, 9, 50)
	if errA != nil || errB != nil || len(a) != len(b) {
		t.Fatalf("KBest twice: %d, %d hypotheses, errors %v, %v", len(a), len(b), errA, errB)
	}
	for i := range a {
		if a[i].Cost != b[i].Cost || fmt.Sprint(a[i].RowToCol) != fmt.Sprint(b[i].RowToCol) {
			t.Fatalf("rank %d differs: %v and %v", i, a[i], b[i])
		}
	}
}

// TestKBestExactOrder ranks tie-heavy matrices whose entries are decimal
// fractions (0.1, 0.2, 0.3, 0.7 and their sums are not exact in binary, so
// equal assignments summed in different orders differ in the last bits) and
// checks that each hypothesis's Cost is, bit for bit, the sum of its entries
// added in row order and that those sums never decrease down the list. The
// criterion is the definition of a ranked list (Murty 1968: the k-th
// assignment costs no less than the (k−1)-th), applied to the float sum a
// caller recomputes; the enumeration oracle checks the list is the k best.
func TestKBestExactOrder(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 12))
	vals := []float64{0.1, 0.2, 0.3, 0.7, 1e-13, 0.1 + 0.2}
	shapes := [][2]int{{3, 3}, {4, 4}, {5, 5}, {3, 6}, {4, 7}, {5, 7}, {6, 3}, {6, 4}, {2, 5}}
	for trial := 0; trial < 450; trial++ {
		sh := shapes[trial%len(shapes)]
		rows, cols := sh[0], sh[1]
		c := make([]float64, rows*cols)
		for q := range c {
			if trial%3 == 0 && rng.Float64() < 0.2 {
				c[q] = math.Inf(1)
				continue
			}
			c[q] = vals[rng.IntN(len(vals))] * float64(1+rng.IntN(3))
		}
		k := 5 + rng.IntN(40)
		got, err := KBest(c, rows, cols, k)
		if errors.Is(err, ErrInfeasible) {
			continue
		}
		if err != nil {
			t.Fatal(err)
		}
		for i, h := range got {
			s := recompute(c, cols, h.RowToCol)
			if math.Float64bits(s) != math.Float64bits(h.Cost) {
				t.Fatalf("trial %d (%d×%d): hypothesis %d %v has Cost %v, its row-order sum is %v", trial, rows, cols, i, h.RowToCol, h.Cost, s)
			}
			if i > 0 && s < got[i-1].Cost {
				t.Fatalf("trial %d (%d×%d): hypothesis %d costs %v < %v of hypothesis %d (by %g)", trial, rows, cols, i, s, got[i-1].Cost, i-1, got[i-1].Cost-s)
			}
		}
		all := enumerate(c, rows, cols)
		for i, h := range got {
			if !near(h.Cost, all[i].Cost) {
				t.Fatalf("trial %d: rank %d costs %v, the oracle's %v", trial, i, h.Cost, all[i].Cost)
			}
		}
	}
}
