package assign

import (
	"errors"
	"flag"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

var seedFlag = flag.Uint64("seed", 1, "seed for the randomised tests; 0 draws a random one")

// testRand returns the seeded source of the randomised tests and logs a
// seed other than the default.
func testRand(t testing.TB, stream uint64) *rand.Rand {
	t.Helper()
	seed := *seedFlag
	if seed == 0 {
		seed = rand.Uint64()
	}
	if seed != 1 {
		t.Logf("-seed=%d", seed)
	}
	return rand.New(rand.NewPCG(seed, stream))
}

var inf = math.Inf(1)

// published are the check matrices of CHECK-VALUES §4.2 (project notes,
// which cite the original sources listed per case). Every optimum is also
// recomputed by the independent oracle in TestPublishedOracle.
var published = []struct {
	name       string
	source     string
	rows, cols int
	cost       []float64
	min        float64
	minCols    []int // pinned only where the optimum is unique
	max        float64
	hasMax     bool
}{
	{"A1", "Wikipedia, \"Hungarian algorithm\", Example (stated optimum 15)", 3, 3,
		[]float64{8, 4, 7, 5, 2, 3, 9, 4, 8}, 15, []int{0, 2, 1}, 18, true},
	{"A2", "scipy.optimize.linear_sum_assignment documentation example (from memory of the notes)", 3, 3,
		[]float64{4, 1, 3, 2, 0, 5, 3, 2, 2}, 5, []int{1, 0, 2}, 11, true},
	{"A3", "H. A. Taha, Operations Research: An Introduction, assignment model, \"Mr. Klyne's children\"", 3, 3,
		[]float64{15, 10, 9, 9, 15, 10, 10, 12, 8}, 27, []int{1, 0, 2}, 38, true},
	{"A4", "hungarianalgorithm.com worked example, optimum 140", 4, 4,
		[]float64{82, 83, 69, 92, 77, 37, 49, 92, 11, 69, 5, 86, 8, 9, 98, 23}, 140, []int{2, 1, 0, 3}, 344, true},
	{"A5", "public library documentation example (secondary source), optimum 55", 4, 4,
		[]float64{10, 25, 15, 20, 15, 30, 5, 15, 35, 20, 12, 24, 17, 25, 24, 20}, 55, nil, 0, false},
	{"A6", "public library documentation example with negative costs, optimum -4", 3, 3,
		[]float64{5, 3, -1, 2, 4, -6, 9, 9, -9}, -4, nil, 0, false},
	{"A7", "public library documentation 6×6 example, optimum 13", 6, 6,
		[]float64{7, 2, 1, 9, 4, 4, 9, 6, 9, 5, 5, 2, 3, 8, 3, 1, 8, 9, 7, 9, 4, 2, 2, 3, 8, 4, 7, 4, 8, 2, 4, 2, 9, 3, 1, 9}, 13, nil, 0, false},
	{"A8", "scipy test suite (scipy/optimize/tests/test_linear_assignment.py)", 3, 3,
		[]float64{400, 150, 400, 400, 450, 600, 300, 225, 300}, 850, []int{1, 0, 2}, 1225, true},
	{"A9", "scipy test suite, rectangular 3×4 (two optima)", 3, 4,
		[]float64{400, 150, 400, 1, 400, 450, 600, 2, 300, 225, 300, 3}, 452, nil, 1225, true},
	{"A10", "scipy test suite", 3, 3,
		[]float64{10, 10, 8, 9, 8, 1, 9, 7, 4}, 18, []int{0, 2, 1}, 25, true},
	{"A11", "scipy test suite, rectangular 3×4 (two optima)", 3, 4,
		[]float64{10, 10, 8, 11, 9, 8, 1, 1, 9, 7, 4, 10}, 15, nil, 29, true},
	{"A12", "scipy test suite, +Inf forbidden entries", 3, 3,
		[]float64{10, inf, inf, inf, inf, 1, inf, 7, inf}, 18, []int{0, 2, 1}, 0, false},
	{"A13", "F. S. Hillier, G. J. Lieberman, Introduction to Operations Research, Job Shop Co. (forbidden cell as +Inf)", 3, 4,
		[]float64{13, 16, 12, 11, 15, inf, 13, 20, 5, 7, 10, 6}, 29, []int{3, 2, 0}, 0, false},
	{"A13'", "same, with the book's dummy row of zeros", 4, 4,
		[]float64{13, 16, 12, 11, 15, inf, 13, 20, 5, 7, 10, 6, 0, 0, 0, 0}, 29, []int{3, 2, 0, 1}, 0, false},
	{"A14", "tall 4×2, constructed in the project notes (COMP-own)", 4, 2,
		[]float64{1, 2, 0, 5, 3, 3, 4, 0.5}, 0.5, []int{-1, 0, -1, 1}, 9, true},
}

func TestSolvePublished(t *testing.T) {
	var w Workspace
	for _, tc := range published {
		t.Run(tc.name, func(t *testing.T) {
			got := make([]int, tc.rows)
			total, err := w.Solve(tc.cost, tc.rows, tc.cols, got)
			if err != nil {
				t.Fatalf("Solve(%s) error %v (source: %s)", tc.name, err, tc.source)
			}
			if !near(total, tc.min) {
				t.Errorf("Solve(%s) = %v, want %v (source: %s)", tc.name, total, tc.min, tc.source)
			}
			if msg := feasibleErr(tc.cost, tc.rows, tc.cols, got); msg != "" {
				t.Errorf("Solve(%s) assignment %v: %s", tc.name, got, msg)
			}
			if tc.minCols != nil {
				for i := range got {
					if got[i] != tc.minCols[i] {
						t.Errorf("Solve(%s) assignment = %v, want %v", tc.name, got, tc.minCols)
						break
					}
				}
			}
			checkCertificate(t, &w, tc.cost, tc.rows, tc.cols, got, total, false)
			if !tc.hasMax {
				return
			}
			total, err = w.SolveMax(tc.cost, tc.rows, tc.cols, got)
			if err != nil || !near(total, tc.max) {
				t.Errorf("SolveMax(%s) = %v, %v, want %v (source: CHECK-VALUES §4.2 max column)", tc.name, total, err, tc.max)
			}
			checkCertificate(t, &w, tc.cost, tc.rows, tc.cols, got, total, true)
		})
	}
}

// TestPublishedOracle confirms every published optimum with the independent
// dynamic programme, so that a transcription error in the table shows up as
// a disagreement between two sources rather than a solver failure.
func TestPublishedOracle(t *testing.T) {
	for _, tc := range published {
		if got := oracleMin(tc.cost, tc.rows, tc.cols); !near(got, tc.min) {
			t.Errorf("oracleMin(%s) = %v, want published %v", tc.name, got, tc.min)
		}
		if tc.hasMax {
			neg := make([]float64, len(tc.cost))
			for k, x := range tc.cost {
				neg[k] = -x
			}
			if got := -oracleMin(neg, tc.rows, tc.cols); !near(got, tc.max) {
				t.Errorf("max oracle(%s) = %v, want published %v", tc.name, got, tc.max)
			}
		}
	}
}

// TestDualsA1 compares the duals with the values worked out for A1 in
// CHECK-VALUES §4.3 (u = [6,2,6], v = [0,−4,−1] on the matrix shifted by its
// minimum m = 2; the solver folds the shift into the row duals, u + m). The
// values belong to Crouse's method without initialisation, hence NoInit.
func TestDualsA1(t *testing.T) {
	w := Workspace{NoInit: true}
	got := make([]int, 3)
	if _, err := w.Solve(published[0].cost, 3, 3, got); err != nil {
		t.Fatal(err)
	}
	u, v := w.Duals()
	wantU, wantV := []float64{8, 4, 8}, []float64{0, -4, -1}
	for i := range wantU {
		if u[i] != wantU[i] || v[i] != wantV[i] {
			t.Fatalf("Duals() = %v, %v, want %v, %v", u, v, wantU, wantV)
		}
	}
}

// checkCertificate verifies LP duality for the assignment problem:
// feasibility of the duals, complementary slackness, and equal objective
// values (strong duality). See D. F. Crouse, "On implementing 2D rectangular
// assignment algorithms", IEEE TAES 52(4), 2016 (the dual it maintains), and
// CHECK-VALUES §4.3 "Optimality certificate".
func checkCertificate(t *testing.T, w *Workspace, cost []float64, rows, cols int, rowToCol []int, total float64, maximise bool) {
	t.Helper()
	u, v := w.Duals()
	if len(u) != rows || len(v) != cols {
		t.Fatalf("Duals() lengths %d, %d, want %d, %d", len(u), len(v), rows, cols)
	}
	sign := 1.0
	if maximise {
		sign = -1
	}
	tol := 1e-9 * (1 + math.Abs(total))
	sum := 0.0
	for _, x := range u {
		sum += x
	}
	for _, x := range v {
		sum += x
	}
	if math.Abs(sum-total) > tol {
		t.Errorf("Σ duals = %v, want total %v", sum, total)
	}
	for i := 0; i < rows; i++ {
		for j := 0; j < cols; j++ {
			c := cost[i*cols+j]
			if math.IsInf(c, 0) {
				continue
			}
			slack := sign * (c - u[i] - v[j])
			if slack < -tol {
				t.Fatalf("dual infeasible at (%d,%d): cost %v, u %v, v %v", i, j, c, u[i], v[j])
			}
			if rowToCol[i] == j && math.Abs(slack) > tol {
				t.Fatalf("assigned pair (%d,%d) not tight: slack %v", i, j, slack)
			}
		}
	}
	// The longer side's duals carry the sign condition.
	assignedCol := make([]bool, cols)
	for _, j := range rowToCol {
		if j >= 0 {
			assignedCol[j] = true
		}
	}
	if rows == cols {
		return // no sign condition: every row and column is assigned
	}
	if rows < cols {
		for j, x := range v {
			if sign*x > tol || (!assignedCol[j] && x != 0) {
				t.Fatalf("column dual %d = %v breaks the sign condition (assigned %v)", j, x, assignedCol[j])
			}
		}
	} else {
		for i, x := range u {
			if sign*x > tol || (rowToCol[i] < 0 && x != 0) {
				t.Fatalf("row dual %d = %v breaks the sign condition", i, x)
			}
		}
	}
}

func TestSolveErrors(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name       string
		rows, cols int
		cost       []float64
		out        int
		max        bool
		wantInf    bool   // want ErrInfeasible
		wantText   string // else want an error containing this
		reason     string
	}{
		{"identity with column 0 forbidden", 3, 3, []float64{inf, 0, 0, inf, 1, 0, inf, 0, 1}, 3, false, true, "", "scipy 1.10.1 reports this infeasible (CHECK-VALUES §4.2)"},
		{"all forbidden", 2, 2, []float64{inf, inf, inf, inf}, 2, false, true, "", ""},
		{"one row forbidden", 2, 2, []float64{1, 2, inf, inf}, 2, false, true, "", ""},
		{"two rows share one column", 3, 3, []float64{1, 2, 3, 5, inf, inf, 4, inf, inf}, 3, false, true, "", "PERF-ANCHORS §1 infeasible probe"},
		{"tall with a forbidden column", 3, 2, []float64{1, inf, 2, inf, 3, inf}, 3, false, true, "", "every column must get a row"},
		{"NaN", 2, 2, []float64{1, nan, 2, 3}, 2, false, false, "row 0, column 1", ""},
		{"-Inf when minimising", 2, 2, []float64{1, 2, math.Inf(-1), 3}, 2, false, false, "row 1, column 0", ""},
		{"+Inf when maximising", 2, 2, []float64{1, inf, 2, 3}, 2, true, false, "-Inf (forbidden) when maximising", ""},
		{"short cost", 2, 2, []float64{1, 2, 3}, 2, false, false, "cost has 3 entries", ""},
		{"short rowToCol", 2, 2, []float64{1, 2, 3, 4}, 1, false, false, "rowToCol has length 1", ""},
		{"negative rows", -1, 2, nil, 0, false, false, "non-negative", ""},
	}
	var w Workspace
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			out := make([]int, tc.out)
			var err error
			if tc.max {
				_, err = w.SolveMax(tc.cost, tc.rows, tc.cols, out)
			} else {
				_, err = w.Solve(tc.cost, tc.rows, tc.cols, out)
			}
			switch {
			case tc.wantInf && !errors.Is(err, ErrInfeasible):
				t.Fatalf("error %v, want ErrInfeasible (%s)", err, tc.reason)
			case !tc.wantInf && (err == nil || errors.Is(err, ErrInfeasible) || !strings.Contains(err.Error(), tc.wantText)):
				t.Fatalf("error %v, want one containing %q", err, tc.wantText)
			}
			for i, j := range out {
				if j != -1 {
					t.Fatalf("rowToCol[%d] = %d after an error, want -1", i, j)
				}
			}
			if u, v := w.Duals(); u != nil || v != nil {
				t.Fatalf("Duals() after an error = %v, %v, want nil", u, v)
			}
		})
	}
}

func TestSolveSpecial(t *testing.T) {
	// scipy 1.10.1 with maximize=True accepts −Inf as forbidden and
	// returns cols [0,1] for [[1,−Inf],[2,3]] (CHECK-VALUES §4.2).
	var w Workspace
	got := make([]int, 2)
	total, err := w.SolveMax([]float64{1, math.Inf(-1), 2, 3}, 2, 2, got)
	if err != nil || total != 4 || got[0] != 0 || got[1] != 1 {
		t.Errorf("SolveMax([[1,-Inf],[2,3]]) = %v, %v, %v; want [0 1], 4, nil", got, total, err)
	}
	// Empty matrices: 0×3 and 3×0 have the empty assignment (CHECK-VALUES §4.2).
	if r, total, err := Solve(nil, 0, 3); err != nil || len(r) != 0 || total != 0 {
		t.Errorf("Solve(0×3) = %v, %v, %v", r, total, err)
	}
	if r, total, err := Solve(nil, 3, 0); err != nil || len(r) != 3 || r[0] != -1 || r[2] != -1 || total != 0 {
		t.Errorf("Solve(3×0) = %v, %v, %v", r, total, err)
	}
	// A forbidden pair must not be taken even when it is the only cheap one:
	// big-M would "succeed" here (CHECK-VALUES §4.3 pitfalls).
	r, total, err := Solve([]float64{1, 2, 3, 5, inf, 9, 4, inf, 8}, 3, 3)
	if err != nil || !near(total, oracleMin([]float64{1, 2, 3, 5, inf, 9, 4, inf, 8}, 3, 3)) || r[1] == 1 || r[2] == 1 {
		t.Errorf("Solve(gated 3×3) = %v, %v, %v", r, total, err)
	}
}

// TestSolveOracle compares the solver with the subset dynamic programme on
// seeded random matrices of every shape up to 8×8, real and small-integer
// costs (many ties), with and without forbidden entries, so that a share of
// them is infeasible.
func TestSolveOracle(t *testing.T) {
	rng := testRand(t, 1)
	var w Workspace
	var feasible, infeasible int
	for trial := 0; trial < 6000; trial++ {
		rows, cols := 1+rng.IntN(8), 1+rng.IntN(8)
		pInf := [...]float64{0, 0, 0.2, 0.5, 0.8}[trial%5]
		c := randomMatrix(rng, rows, cols, trial%2 == 0, pInf)
		want := oracleMin(c, rows, cols)
		got := make([]int, rows)
		w.NoInit = trial%3 == 0
		total, err := w.Solve(c, rows, cols, got)
		if math.IsInf(want, 1) {
			infeasible++
			if !errors.Is(err, ErrInfeasible) {
				t.Fatalf("trial %d: Solve(%d×%d %v) = %v, %v, want ErrInfeasible", trial, rows, cols, c, total, err)
			}
			continue
		}
		feasible++
		if err != nil || !near(total, want) {
			t.Fatalf("trial %d: Solve(%d×%d %v) = %v, %v, want %v", trial, rows, cols, c, total, err, want)
		}
		if msg := feasibleErr(c, rows, cols, got); msg != "" {
			t.Fatalf("trial %d: assignment %v: %s", trial, got, msg)
		}
		if !near(recompute(c, cols, got), total) {
			t.Fatalf("trial %d: returned total %v, assignment sums to %v", trial, total, recompute(c, cols, got))
		}
		checkCertificate(t, &w, c, rows, cols, got, total, false)
	}
	if feasible < 3000 || infeasible < 300 {
		t.Fatalf("only %d feasible and %d infeasible cases; the generator no longer covers both", feasible, infeasible)
	}
}

// TestInvariances checks properties that hold for any assignment problem
// (common practice): adding a constant to one row (or, when every column is
// assigned, to one column) shifts the optimum by that constant; permuting
// rows or columns permutes the assignment; maximising equals minimising the
// negated matrix.
func TestInvariances(t *testing.T) {
	rng := testRand(t, 2)
	var w Workspace
	for trial := 0; trial < 1500; trial++ {
		rows, cols := 1+rng.IntN(8), 1+rng.IntN(8)
		c := randomMatrix(rng, rows, cols, trial%2 == 0, [...]float64{0, 0.3}[trial%2])
		base := make([]int, rows)
		opt, err := w.Solve(c, rows, cols, base)
		if err != nil {
			continue
		}

		// Row shift: only for a row that is always assigned (rows ≤ cols).
		k := float64(rng.IntN(7) - 3)
		if rows <= cols {
			r := rng.IntN(rows)
			d := append([]float64(nil), c...)
			for j := 0; j < cols; j++ {
				d[r*cols+j] += k
			}
			if _, got, err := Solve(d, rows, cols); err != nil || !near(got, opt+k) {
				t.Fatalf("row %d + %v: optimum %v, %v, want %v", r, k, got, err, opt+k)
			}
		}
		if rows >= cols {
			col := rng.IntN(cols)
			d := append([]float64(nil), c...)
			for i := 0; i < rows; i++ {
				d[i*cols+col] += k
			}
			if _, got, err := Solve(d, rows, cols); err != nil || !near(got, opt+k) {
				t.Fatalf("column %d + %v: optimum %v, %v, want %v", col, k, got, err, opt+k)
			}
		}

		// Row permutation: permuted problem has the same optimum, and
		// the original assignment, permuted, is optimal for it.
		perm := rng.Perm(rows)
		p := make([]float64, len(c))
		for i := 0; i < rows; i++ {
			copy(p[i*cols:(i+1)*cols], c[perm[i]*cols:(perm[i]+1)*cols])
		}
		gotP, got, err := Solve(p, rows, cols)
		if err != nil || !near(got, opt) {
			t.Fatalf("row permutation %v: optimum %v, %v, want %v", perm, got, err, opt)
		}
		moved := make([]int, rows)
		for i := range moved {
			moved[i] = base[perm[i]]
		}
		if !near(recompute(p, cols, moved), got) || feasibleErr(p, rows, cols, gotP) != "" {
			t.Fatalf("row permutation %v: permuted assignment %v costs %v, want %v", perm, moved, recompute(p, cols, moved), got)
		}

		// Maximisation equals minimisation of the negation.
		neg := make([]float64, len(c))
		for i, x := range c {
			neg[i] = -x
		}
		mx := make([]int, rows)
		gotMax, err := w.SolveMax(neg, rows, cols, mx)
		if err != nil || !near(gotMax, -opt) {
			t.Fatalf("SolveMax(−C) = %v, %v, want %v", gotMax, err, -opt)
		}
		checkCertificate(t, &w, neg, rows, cols, mx, gotMax, true)
	}
}

// TestSolveAllocs proves that a reused Workspace solves without allocating,
// in every orientation and sense.
func TestSolveAllocs(t *testing.T) {
	rng := testRand(t, 3)
	for _, sh := range [][2]int{{30, 30}, {20, 45}, {45, 20}} {
		rows, cols := sh[0], sh[1]
		c := randomMatrix(rng, rows, cols, false, 0.3)
		var w Workspace
		out := make([]int, rows)
		if _, err := w.Solve(c, rows, cols, out); err != nil {
			t.Fatal(err)
		}
		if n := testing.AllocsPerRun(20, func() { w.Solve(c, rows, cols, out) }); n != 0 {
			t.Errorf("Solve %d×%d: %v allocations per run, want 0", rows, cols, n)
		}
		if n := testing.AllocsPerRun(20, func() { w.SolveMax(c[:0:0], 0, cols, nil); w.Solve(c, rows, cols, out) }); n != 0 {
			t.Errorf("Solve after an empty call %d×%d: %v allocations per run, want 0", rows, cols, n)
		}
	}
}

// TestDeterministic: same input, same workspace history or not, same output.
func TestDeterministic(t *testing.T) {
	rng := testRand(t, 4)
	c := randomMatrix(rng, 40, 40, true, 0.2)
	a, ta, ea := Solve(c, 40, 40)
	var w Workspace
	w.Solve(randomMatrix(rng, 7, 50, false, 0), 7, 50, make([]int, 7))
	b := make([]int, 40)
	tb, eb := w.Solve(c, 40, 40, b)
	if ea != nil || eb != nil || ta != tb {
		t.Fatalf("totals %v, %v (errors %v, %v)", ta, tb, ea, eb)
	}
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("assignments differ: %v and %v", a, b)
		}
	}
}

// FuzzSolve decodes bytes into a small matrix (with +Inf entries) and checks
// the solver against the oracle: it never panics, the cost is the optimum
// and the assignment is feasible.
func FuzzSolve(f *testing.F) {
	f.Add([]byte{3, 3, 8, 4, 7, 5, 2, 3, 9, 4, 8})
	f.Add([]byte{2, 4, 255, 1, 2, 255, 255, 3, 0, 0})
	f.Add([]byte{4, 1, 9, 255, 3, 7})
	f.Add([]byte{0, 5})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 2 {
			return
		}
		rows, cols := int(data[0]%8), int(data[1]%8)
		data = data[2:]
		c := make([]float64, rows*cols)
		for k := range c {
			if k < len(data) {
				b := data[k]
				if b >= 240 {
					c[k] = inf
				} else {
					c[k] = float64(int(b)-60) / 4
				}
			}
		}
		got, total, err := Solve(c, rows, cols)
		want := oracleMin(c, rows, cols)
		if math.IsInf(want, 1) {
			if !errors.Is(err, ErrInfeasible) {
				t.Fatalf("Solve(%d×%d %v) = %v, %v, want ErrInfeasible", rows, cols, c, total, err)
			}
			return
		}
		if err != nil || !near(total, want) {
			t.Fatalf("Solve(%d×%d %v) = %v, %v, want %v", rows, cols, c, total, err, want)
		}
		if msg := feasibleErr(c, rows, cols, got); msg != "" {
			t.Fatalf("Solve(%d×%d %v) assignment %v: %s", rows, cols, c, got, msg)
		}
	})
}
