package assign

import (
	"errors"
	"fmt"
	"math"
)

// ErrInfeasible is returned when no assignment covers every row (rows ≤ cols)
// or every column (rows > cols) with finite cost.
var ErrInfeasible = errors.New("assign: no feasible assignment")

// Workspace holds the solver's scratch memory; reuse one to solve without
// allocating. The zero value is ready to use. Not safe for concurrent use.
type Workspace struct {
	buf       []float64 // transposed and/or negated costs, when needed
	u, v      []float64 // duals of the internal (wide, minimising) problem
	spc       []float64 // shortest path cost to each column
	path      []int     // row preceding each column on the shortest path
	col4row   []int
	row4col   []int
	remaining []int // columns not yet settled, settled ones at the tail
	rows      []int // rows visited by the current search

	du, dv []float64 // duals in the caller's orientation, built by Duals

	nr, nc     int // internal dimensions, nr ≤ nc
	transposed bool
	maximise   bool
	valid      bool

	// NoInit skips the column reduction that starts square problems.
	// The optimum is the same; it exists to measure the reduction.
	NoInit bool
}

// Solve minimises Σ cost[i*cols+rowToCol[i]] over assignments. cost is
// rows×cols row-major; +Inf marks a forbidden pair; NaN or -Inf entries are an
// error. When rows ≤ cols every row is assigned a distinct column; when
// rows > cols every column gets a distinct row and the other rows get -1.
// rowToCol must have length rows. Returns the total cost.
//
// On error rowToCol is filled with -1. A reused Workspace makes no
// allocations once it has grown to the problem size.
func (w *Workspace) Solve(cost []float64, rows, cols int, rowToCol []int) (float64, error) {
	return w.solve(cost, rows, cols, rowToCol, false)
}

// SolveMax maximises instead (−Inf marks forbidden; NaN and +Inf are errors).
func (w *Workspace) SolveMax(cost []float64, rows, cols int, rowToCol []int) (float64, error) {
	return w.solve(cost, rows, cols, rowToCol, true)
}

// Solve is a convenience that allocates.
func Solve(cost []float64, rows, cols int) (rowToCol []int, total float64, err error) {
	var w Workspace
	if rows < 0 {
		return nil, 0, checkDims(cost, rows, cols, 0)
	}
	rowToCol = make([]int, rows)
	total, err = w.Solve(cost, rows, cols, rowToCol)
	return rowToCol, total, err
}

// Duals returns the dual variables of the last successful Solve or SolveMax,
// in the caller's orientation: one value per row and one per column. For
// Solve they certify optimality:
//
//	cost[i][j] ≥ rowDual[i] + colDual[j]   for every finite entry,
//	cost[i][j] = rowDual[i] + colDual[j]   on every assigned pair,
//	Σ rowDual + Σ colDual = total,
//
// and, for a rectangular matrix, the duals of the longer side are ≤ 0 and
// exactly 0 where unassigned.
// For SolveMax every inequality is reversed (≤, duals of the longer side
// ≥ 0). The slices belong to the Workspace and are overwritten by its next
// call. Both are nil when the last call failed or there was none.
//
// These are the conditions of LP duality for the assignment problem; see
// CHECK-VALUES §4.3 of the project notes (the LP dual of the rectangular
// assignment problem; common practice).
func (w *Workspace) Duals() (rowDual, colDual []float64) {
	if !w.valid {
		return nil, nil
	}
	u, v := w.u[:w.nr], w.v[:w.nc]
	if w.transposed {
		u, v = v, u
	}
	w.du = grow(w.du, len(u))
	w.dv = grow(w.dv, len(v))
	for i, x := range u {
		if w.maximise {
			x = -x
		}
		w.du[i] = x
	}
	for j, x := range v {
		if w.maximise {
			x = -x
		}
		w.dv[j] = x
	}
	return w.du, w.dv
}

func checkDims(cost []float64, rows, cols, nout int) error {
	if rows < 0 || cols < 0 {
		return fmt.Errorf("assign: matrix is %d×%d; want non-negative dimensions", rows, cols)
	}
	if rows != 0 && cols > math.MaxInt/rows {
		return fmt.Errorf("assign: matrix is %d×%d; too large", rows, cols)
	}
	if len(cost) != rows*cols {
		return fmt.Errorf("assign: cost has %d entries; want rows×cols = %d×%d = %d", len(cost), rows, cols, rows*cols)
	}
	if nout != rows {
		return fmt.Errorf("assign: rowToCol has length %d; want rows = %d", nout, rows)
	}
	return nil
}

// checkEntries rejects NaN and the infinity that cannot mean "forbidden".
func checkEntries(cost []float64, cols int, maximise bool) error {
	for k, x := range cost {
		if x == x && !math.IsInf(x, 0) {
			continue
		}
		bad := math.IsNaN(x) || (math.IsInf(x, -1) && !maximise) || (math.IsInf(x, 1) && maximise)
		if !bad {
			continue
		}
		want := "a finite number or +Inf (forbidden) when minimising"
		if maximise {
			want = "a finite number or -Inf (forbidden) when maximising"
		}
		return fmt.Errorf("assign: cost[%d] (row %d, column %d) is %v; want %s", k, k/cols, k%cols, x, want)
	}
	return nil
}

func grow[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n)
	}
	return s[:n]
}

func (w *Workspace) solve(cost []float64, rows, cols int, rowToCol []int, maximise bool) (float64, error) {
	w.valid = false
	for i := range rowToCol {
		rowToCol[i] = -1
	}
	if err := checkDims(cost, rows, cols, len(rowToCol)); err != nil {
		return 0, err
	}
	if err := checkEntries(cost, cols, maximise); err != nil {
		return 0, err
	}
	w.transposed = rows > cols
	w.maximise = maximise
	nr, nc := rows, cols
	if w.transposed {
		nr, nc = cols, rows
	}
	w.reset(nr, nc)
	if nr == 0 {
		w.valid = true
		return 0, nil
	}

	c := cost
	if w.transposed || maximise {
		w.buf = grow(w.buf, nr*nc)
		c = w.buf
		sign := 1.0
		if maximise {
			sign = -1
		}
		if w.transposed {
			for i := 0; i < rows; i++ {
				src := cost[i*cols : i*cols+cols]
				for j, x := range src {
					c[j*nc+i] = sign * x
				}
			}
		} else {
			for k, x := range cost {
				c[k] = sign * x
			}
		}
	}
	if nr == nc && !w.NoInit {
		w.reduceColumns(c, nc)
	} else if !w.NoInit {
		w.reduceRows(c, nr, nc)
	} else {
		m := math.Inf(1)
		for _, x := range c {
			if x < m {
				m = x
			}
		}
		if math.IsInf(m, 1) {
			return 0, ErrInfeasible
		}
		u := w.u[:nr]
		for i := range u {
			u[i] = m
		}
	}
	for cur := 0; cur < nr; cur++ {
		if w.col4row[cur] >= 0 {
			continue
		}
		if !w.augment(c, nc, cur) {
			return 0, ErrInfeasible
		}
	}

	total := 0.0
	if w.transposed {
		for j, i := range w.col4row[:nr] {
			rowToCol[i] = j
		}
	} else {
		copy(rowToCol, w.col4row[:nr])
	}
	for i, j := range rowToCol {
		if j >= 0 {
			total += cost[i*cols+j]
		}
	}
	w.valid = true
	return total, nil
}

// reset sizes the scratch slices for an nr×nc internal problem and clears
// the assignment and the duals.
func (w *Workspace) reset(nr, nc int) {
	w.nr, w.nc = nr, nc
	w.u = grow(w.u, nr)
	w.v = grow(w.v, nc)
	w.spc = grow(w.spc, nc)
	w.path = grow(w.path, nc)
	w.col4row = grow(w.col4row, nr)
	w.row4col = grow(w.row4col, nc)
	w.remaining = grow(w.remaining, nc)
	if cap(w.rows) < nr {
		w.rows = make([]int, 0, nr)
	}
	clear(w.u)
	clear(w.v)
	for i := range w.col4row {
		w.col4row[i] = -1
	}
	for j := range w.row4col {
		w.row4col[j] = -1
	}
}

// augment assigns the free row cur along a shortest augmenting path in the
// reduced costs c[i][j] − u[i] − v[j] (Crouse 2016, pp. 1685–1686), then
// updates the duals so that they stay feasible and become tight on the new
// assignment. It reports false, leaving the state unchanged, when every
// column reachable from cur is forbidden.
//
// Precondition: c[i][j] − u[i] − v[j] ≥ 0 for every finite entry, with
// equality on assigned pairs.
func (w *Workspace) augment(c []float64, nc, cur int) bool {
	u := w.u
	v := w.v[:nc]
	spc := w.spc[:nc]
	path := w.path[:nc]
	row4col := w.row4col[:nc]
	col4row := w.col4row
	rem := w.remaining[:nc]
	inf := math.Inf(1)
	for it := range rem {
		rem[it] = nc - 1 - it
	}
	for j := range spc {
		spc[j] = inf
	}
	visited := w.rows[:0]
	num := nc
	minVal := 0.0
	i := cur
	sink := -1
	for sink < 0 {
		visited = append(visited, i)
		lowest, index := scanRow(c[i*nc:][:nc], v, spc, path, row4col, rem[:num], minVal-u[i], i)
		if index < 0 || lowest == inf {
			w.rows = visited
			return false
		}
		minVal = lowest
		j := rem[index]
		if row4col[j] < 0 {
			sink = j
		} else {
			i = row4col[j]
		}
		num--
		rem[index], rem[num] = rem[num], rem[index]
	}
	w.rows = visited

	u[cur] += minVal
	for _, i := range visited[1:] {
		u[i] += minVal - spc[col4row[i]]
	}
	for _, j := range rem[num:] {
		v[j] -= minVal - spc[j]
	}
	for j := sink; ; {
		i := path[j]
		row4col[j] = i
		col4row[i], j = j, col4row[i]
		if i == cur {
			break
		}
	}
	return true
}

// reduceColumns starts a square n×n problem with the column reduction of
// Jonker and Volgenant (1987; details from memory): each column dual is its
// column minimum, row duals are 0, and columns are visited from last to first,
// each taken by the row holding its minimum when that row is still free.
// Reduced costs stay non-negative and the assigned pairs are tight, which is
// the precondition of augment; rows left free are assigned by augment. A
// column without a finite entry gets dual 0. JV's reduction transfer, which
// follows in the paper, made uniform random problems slower here (measured,
// see BENCHMARKS.md) and is left out.
func (w *Workspace) reduceColumns(c []float64, n int) {
	inf := math.Inf(1)
	v := w.v[:n]
	arg := w.path[:n] // scratch: row holding each column minimum
	for j := range v {
		v[j] = inf
		arg[j] = -1
	}
	for i := 0; i < n; i++ {
		row := c[i*n : i*n+n]
		for j, x := range row {
			if x < v[j] {
				v[j] = x
				arg[j] = i
			}
		}
	}
	col4row, row4col := w.col4row[:n], w.row4col[:n]
	for j := n - 1; j >= 0; j-- {
		i := arg[j]
		if i < 0 {
			v[j] = 0
			continue
		}
		if col4row[i] < 0 {
			col4row[i] = j
			row4col[j] = i
		}
	}
}

// reduceRows starts a wide nr×nc problem (nr < nc): each row dual is its row
// minimum and the row takes that column when it is still free. Column duals
// stay 0, so the sign condition of the rectangular dual (v_j ≤ 0, and 0 on
// unassigned columns) holds from the start. A row without a finite entry is
// left to augment, which reports the problem infeasible.
func (w *Workspace) reduceRows(c []float64, nr, nc int) {
	inf := math.Inf(1)
	u := w.u[:nr]
	col4row, row4col := w.col4row[:nr], w.row4col[:nc]
	for i := range u {
		row := c[i*nc : i*nc+nc]
		best, arg := inf, -1
		for j, x := range row {
			if x < best {
				best, arg = x, j
			}
		}
		if arg < 0 {
			u[i] = 0
			continue
		}
		u[i] = best
		if row4col[arg] < 0 {
			col4row[i] = arg
			row4col[arg] = i
		}
	}
}

// scanRow relaxes the unsettled columns rem through row i, whose entries
// are row, at path cost base + row[j] − v[j], and returns the smallest path
// cost among them and its position in rem (−1 when rem is empty). On ties it
// prefers a free column, which scipy's implementation of Crouse's method
// notes matters for small integer costs (CHECK-VALUES §4.3). It is kept apart from augment so that the
// loop's few values stay in registers.
func scanRow(row, v, spc []float64, path, row4col, rem []int, base float64, i int) (float64, int) {
	n := len(row)
	v, spc, path, row4col = v[:n], spc[:n], path[:n], row4col[:n]
	lowest := math.Inf(1)
	index := -1
	for it, j := range rem {
		r := base + row[j] - v[j]
		s := spc[j]
		if r < s {
			path[j] = i
			spc[j] = r
			s = r
		}
		if s < lowest || (s == lowest && row4col[j] < 0) {
			lowest = s
			index = it
		}
	}
	return lowest, index
}
