package assign

import (
	"cmp"
	"container/heap"
	"math"
	"slices"
)

// Hypothesis is one full assignment and its cost.
type Hypothesis struct {
	Cost     float64
	RowToCol []int
}

// KBest returns up to k best assignments in non-decreasing order of cost
// (fewer when fewer feasible ones exist), each distinct, by Murty's
// partitioning. Assignments are complete in the sense of [Workspace.Solve]:
// every row is assigned when rows ≤ cols, every column when rows > cols.
// Equal costs come out in a deterministic but unspecified order. It returns
// ErrInfeasible when not even one assignment exists, and nil for k ≤ 0.
//
// Each Cost is the sum of the hypothesis's entries added in row order
// (rows left unassigned add nothing), and the list is non-decreasing in
// exactly those sums: the search ranks by totals whose rounding depends on
// the internal orientation and the path it took, so near-ties that differ
// in the last bits are put back in order by a stable sort before return.
// Equal assignments thus always cost the same bits, whatever the search.
//
// Subproblems wait in the heap under a lower bound and, once on top, are
// solved from their parent's duals and partial assignment with a single
// shortest augmenting path (Miller, Stone and Cox 1997), on the
// problem padded to square with zero-cost phantom rows; see the package
// documentation.
func KBest(cost []float64, rows, cols, k int) ([]Hypothesis, error) {
	if err := checkDims(cost, rows, cols, rows); err != nil {
		return nil, err
	}
	if err := checkEntries(cost, cols, false); err != nil {
		return nil, err
	}
	if k <= 0 {
		return nil, nil
	}
	if rows == 0 || cols == 0 {
		h := Hypothesis{RowToCol: make([]int, rows)}
		for i := range h.RowToCol {
			h.RowToCol[i] = -1
		}
		return []Hypothesis{h}, nil
	}
	r := newRanker(cost, rows, cols)
	out, err := r.run(k)
	if err != nil {
		return nil, err
	}
	for q := range out {
		out[q].Cost = rowSum(cost, cols, out[q].RowToCol)
	}
	slices.SortStableFunc(out, func(a, b Hypothesis) int { return cmp.Compare(a.Cost, b.Cost) })
	return out, nil
}

// rowSum is the sum of the entries of an assignment added in row order.
func rowSum(cost []float64, cols int, rowToCol []int) float64 {
	s := 0.0
	for i, j := range rowToCol {
		if j >= 0 {
			s += cost[i*cols+j]
		}
	}
	return s
}

// ranker holds the square padded problem and the heap of solved subproblems.
type ranker struct {
	cost       []float64 // the caller's matrix
	rows, cols int
	transposed bool
	nr         int       // real rows of the internal wide problem
	n          int       // side of the padded square problem
	base       []float64 // n×n: real rows, then zero-cost phantom rows
	scratch    []float64 // base with one node's constraints applied
	ws         Workspace
	queue      nodeHeap
	seq        int
}

// node is a subproblem. An unsolved node carries a lower bound on its
// optimum and is solved when it reaches the top of the heap; a solved node
// carries its optimum, assignment and duals.
type node struct {
	cost      float64 // optimum when solved, else a lower bound
	seq       int     // creation order, breaks ties deterministically
	solved    bool
	parent    *node // solved parent whose duals start the solve
	row       int   // real row freed from the parent's assignment
	col4row   []int // n entries, when solved
	u, v      []float64
	forced    []int32 // per real row: forced column or -1
	forbidden []int32 // flat (row, column) pairs
}

func newRanker(cost []float64, rows, cols int) *ranker {
	r := &ranker{cost: cost, rows: rows, cols: cols, transposed: rows > cols}
	r.nr, r.n = rows, cols
	if r.transposed {
		r.nr, r.n = cols, rows
	}
	n := r.n
	r.base = make([]float64, n*n) // phantom rows stay zero
	for i := 0; i < rows; i++ {
		for j := 0; j < cols; j++ {
			x := cost[i*cols+j]
			if r.transposed {
				r.base[j*n+i] = x
			} else {
				r.base[i*n+j] = x
			}
		}
	}
	r.scratch = make([]float64, n*n)
	return r
}

func (r *ranker) run(k int) ([]Hypothesis, error) {
	if err := r.start(); err != nil {
		return nil, err
	}
	var out []Hypothesis
	for len(out) < k && r.queue.Len() > 0 {
		best := heap.Pop(&r.queue).(*node)
		if !best.solved {
			if r.solve(best) {
				r.push(best)
			}
			continue
		}
		out = append(out, r.hypothesis(best))
		if len(out) < k {
			r.partition(best)
		}
	}
	return out, nil
}

// start solves the whole problem and queues it as the root.
func (r *ranker) start() error {
	n := r.n
	rowToCol := make([]int, n)
	if _, err := r.ws.Solve(r.base, n, n, rowToCol); err != nil {
		return err
	}
	root := &node{
		solved:  true,
		col4row: append([]int(nil), r.ws.col4row[:n]...),
		u:       append([]float64(nil), r.ws.u[:n]...),
		v:       append([]float64(nil), r.ws.v[:n]...),
		forced:  make([]int32, r.nr),
	}
	for i := range root.forced {
		root.forced[i] = -1
	}
	root.cost = r.total(root.col4row)
	r.push(root)
	return nil
}

func (r *ranker) push(nd *node) {
	nd.seq = r.seq
	r.seq++
	heap.Push(&r.queue, nd)
}

// total is the cost of an internal assignment on the caller's matrix.
func (r *ranker) total(col4row []int) float64 {
	s := 0.0
	for i := 0; i < r.nr; i++ {
		s += r.base[i*r.n+col4row[i]]
	}
	return s
}

func (r *ranker) hypothesis(nd *node) Hypothesis {
	h := Hypothesis{Cost: nd.cost, RowToCol: make([]int, r.rows)}
	if r.transposed {
		for i := range h.RowToCol {
			h.RowToCol[i] = -1
		}
		for i := 0; i < r.nr; i++ {
			h.RowToCol[nd.col4row[i]] = i
		}
	} else {
		copy(h.RowToCol, nd.col4row[:r.nr])
	}
	return h
}

// constrain writes nd's constraints over the base matrix into scratch.
func (r *ranker) constrain(nd *node) []float64 {
	n := r.n
	c := r.scratch
	copy(c, r.base)
	inf := math.Inf(1)
	for t := 0; t+1 < len(nd.forbidden); t += 2 {
		c[int(nd.forbidden[t])*n+int(nd.forbidden[t+1])] = inf
	}
	for i, j := range nd.forced {
		if j >= 0 {
			r.force(c, i, int(j))
		}
	}
	return c
}

// partition splits the solution space of nd minus its own optimum into
// disjoint children (Murty 1968): child t forces the optimum's pairs in the
// free real rows before row t and forbids the pair in row t. Children are
// not solved here; each gets the lower bound
//
//	cost(nd) + min_{j≠c_t} c̄_{t j} + min_{i≠t} c̄_{i c_t}
//
// on the child's matrix, where c̄ are the reduced costs under nd's duals:
// the child's optimum is cost(nd) plus the reduced length of an alternating
// path that leaves row t by another column and enters column c_t from another
// row, and those two edges are distinct with non-negative reduced costs
// (after the bound of Miller, Stone and Cox 1997, whose details are from
// memory; here summed over both ends). A child whose bound is +Inf is
// infeasible and dropped.
func (r *ranker) partition(nd *node) {
	n := r.n
	inf := math.Inf(1)
	c := r.constrain(nd)
	forced := append([]int32(nil), nd.forced...)
	for t := 0; t < r.nr; t++ {
		if nd.forced[t] >= 0 {
			continue
		}
		ct := nd.col4row[t]
		rowSlack, colSlack := inf, inf
		row := c[t*n : t*n+n]
		for j, x := range row {
			if j != ct {
				if s := x - nd.u[t] - nd.v[j]; s < rowSlack {
					rowSlack = s
				}
			}
		}
		for i := 0; i < n; i++ {
			if i != t {
				if s := c[i*n+ct] - nd.u[i] - nd.v[ct]; s < colSlack {
					colSlack = s
				}
			}
		}
		if rowSlack < inf && colSlack < inf {
			bound := nd.cost + max(rowSlack, 0) + max(colSlack, 0)
			// A margin keeps rounding in the duals from lifting the
			// bound above the child's true optimum.
			bound -= 1e-9 * (1 + math.Abs(bound))
			r.push(&node{
				cost:      bound,
				parent:    nd,
				row:       t,
				forced:    append([]int32(nil), forced...),
				forbidden: append(append(make([]int32, 0, len(nd.forbidden)+2), nd.forbidden...), int32(t), int32(ct)),
			})
		}
		// Later children keep this pair: force it.
		r.force(c, t, ct)
		forced[t] = int32(ct)
	}
}

// solve finds the optimum of an unsolved child by one shortest augmenting
// path from its parent's duals and assignment with the freed row removed.
// The duals stay feasible because the child's costs are the parent's with
// some entries raised to +Inf, and the remaining assigned pairs are untouched
// and tight. It reports false when the child is infeasible.
func (r *ranker) solve(nd *node) bool {
	n := r.n
	c := r.constrain(nd)
	p := nd.parent
	ws := &r.ws
	ws.reset(n, n)
	copy(ws.u[:n], p.u)
	copy(ws.v[:n], p.v)
	copy(ws.col4row[:n], p.col4row)
	for i, j := range p.col4row {
		if i != nd.row {
			ws.row4col[j] = i
		}
	}
	ws.col4row[nd.row] = -1
	if !ws.augment(c, n, nd.row) {
		return false
	}
	nd.solved = true
	nd.parent = nil
	nd.col4row = append([]int(nil), ws.col4row[:n]...)
	nd.u = append([]float64(nil), ws.u[:n]...)
	nd.v = append([]float64(nil), ws.v[:n]...)
	nd.cost = r.total(nd.col4row)
	return true
}

// force forbids every pair in row i and column j except (i, j).
func (r *ranker) force(c []float64, i, j int) {
	n := r.n
	inf := math.Inf(1)
	keep := c[i*n+j]
	row := c[i*n : i*n+n]
	for jj := range row {
		row[jj] = inf
	}
	for ii := 0; ii < n; ii++ {
		c[ii*n+j] = inf
	}
	c[i*n+j] = keep
}

// nodeHeap orders solved subproblems by cost, then by creation order.
type nodeHeap []*node

func (h nodeHeap) Len() int { return len(h) }
func (h nodeHeap) Less(a, b int) bool {
	if h[a].cost != h[b].cost {
		return h[a].cost < h[b].cost
	}
	return h[a].seq < h[b].seq
}
func (h nodeHeap) Swap(a, b int) { h[a], h[b] = h[b], h[a] }
func (h *nodeHeap) Push(x any)   { *h = append(*h, x.(*node)) }
func (h *nodeHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	old[len(old)-1] = nil
	*h = old[:len(old)-1]
	return x
}
