package assign

import (
	"math"
	"math/bits"
	"math/rand/v2"
	"sort"
)

// The oracles below are independent of the solver: a subset dynamic
// programme for the optimum and an exhaustive enumeration for the ranking.
// Both work on the wide orientation and transpose tall inputs.

// wideView returns the matrix with rows ≤ cols and whether it was transposed.
func wideView(cost []float64, rows, cols int) ([]float64, int, int, bool) {
	if rows <= cols {
		return cost, rows, cols, false
	}
	t := make([]float64, len(cost))
	for i := 0; i < rows; i++ {
		for j := 0; j < cols; j++ {
			t[j*rows+i] = cost[i*cols+j]
		}
	}
	return t, cols, rows, true
}

// oracleMin is the optimum by dynamic programming over the set of used
// columns (a Held–Karp style recursion, common practice): best[mask] is the
// cheapest way to assign the first popcount(mask) rows to the columns in
// mask. It returns +Inf when no finite assignment exists.
func oracleMin(cost []float64, rows, cols int) float64 {
	c, nr, nc, _ := wideView(cost, rows, cols)
	if nr == 0 {
		return 0
	}
	inf := math.Inf(1)
	best := make([]float64, 1<<nc)
	for m := range best {
		best[m] = inf
	}
	best[0] = 0
	for m := 0; m < len(best); m++ {
		if math.IsInf(best[m], 1) {
			continue
		}
		i := bits.OnesCount(uint(m))
		if i >= nr {
			continue
		}
		for j := 0; j < nc; j++ {
			if m&(1<<j) != 0 {
				continue
			}
			x := best[m] + c[i*nc+j]
			if x < best[m|1<<j] {
				best[m|1<<j] = x
			}
		}
	}
	res := inf
	for m, x := range best {
		if bits.OnesCount(uint(m)) == nr && x < res {
			res = x
		}
	}
	return res
}

// enumerate lists every finite-cost complete assignment in the caller's
// orientation, sorted by cost.
func enumerate(cost []float64, rows, cols int) []Hypothesis {
	c, nr, nc, tr := wideView(cost, rows, cols)
	var out []Hypothesis
	pick := make([]int, nr)
	used := make([]bool, nc)
	var rec func(i int, s float64)
	rec = func(i int, s float64) {
		if i == nr {
			h := Hypothesis{Cost: 0, RowToCol: make([]int, rows)}
			if tr {
				for k := range h.RowToCol {
					h.RowToCol[k] = -1
				}
				for k, j := range pick {
					h.RowToCol[j] = k
				}
			} else {
				copy(h.RowToCol, pick)
			}
			h.Cost = recompute(cost, cols, h.RowToCol)
			out = append(out, h)
			return
		}
		for j := 0; j < nc; j++ {
			if used[j] || math.IsInf(c[i*nc+j], 1) {
				continue
			}
			used[j] = true
			pick[i] = j
			rec(i+1, s+c[i*nc+j])
			used[j] = false
		}
	}
	rec(0, 0)
	sort.SliceStable(out, func(a, b int) bool { return out[a].Cost < out[b].Cost })
	return out
}

// recompute sums the assigned entries in row order.
func recompute(cost []float64, cols int, rowToCol []int) float64 {
	s := 0.0
	for i, j := range rowToCol {
		if j >= 0 {
			s += cost[i*cols+j]
		}
	}
	return s
}

// randomMatrix draws a rows×cols matrix. With integer set, entries are small
// integers in [0, 4) so that ties are frequent; a fraction pInf of entries is
// +Inf.
func randomMatrix(rng *rand.Rand, rows, cols int, integer bool, pInf float64) []float64 {
	c := make([]float64, rows*cols)
	for k := range c {
		switch {
		case rng.Float64() < pInf:
			c[k] = math.Inf(1)
		case integer:
			c[k] = float64(rng.IntN(4))
		default:
			c[k] = rng.Float64()*20 - 5
		}
	}
	return c
}

// feasibleErr checks the shape of an assignment: distinct columns, the
// smaller side fully covered, no forbidden pair. It returns "" when valid.
func feasibleErr(cost []float64, rows, cols int, rowToCol []int) string {
	if len(rowToCol) != rows {
		return "wrong length"
	}
	seen := make([]bool, cols)
	n := 0
	for i, j := range rowToCol {
		if j < 0 {
			continue
		}
		if j >= cols {
			return "column out of range"
		}
		if seen[j] {
			return "column used twice"
		}
		seen[j] = true
		if math.IsInf(cost[i*cols+j], 0) {
			return "forbidden pair used"
		}
		n++
	}
	if n != min(rows, cols) {
		return "smaller side not fully covered"
	}
	return ""
}

func near(a, b float64) bool {
	if math.IsInf(a, 0) || math.IsInf(b, 0) {
		return a == b
	}
	return math.Abs(a-b) <= 1e-9*(1+math.Max(math.Abs(a), math.Abs(b)))
}
