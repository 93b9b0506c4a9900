package tracker

import (
	"cmp"
	"errors"
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"

	"trackgate/harness/mot"
	"trackgate/reference/assign"
	"trackgate/reference/kalman"
)

// cluster is one connected component of the gating graph.
type cluster struct {
	rows []int // rows of the scan's cost matrix, increasing
	cols []int // detection columns gated by any of the rows, increasing
	// hyps are the cluster's k best hypotheses; RowToCol indexes the
	// cluster's own matrix: j < len(cols) is cols[j], otherwise a miss.
	hyps []assign.Hypothesis
	// count bounds the number of association events of the cluster.
	count float64
	// events is the exact number of association events when exact.
	events float64
	// logZ is ln Σ exp(−(cost − best)) over all its events (exact) or an
	// upper bound (not exact).
	logZ  float64
	exact bool
}

// associate gates, clusters, ranks and updates one scan for the live
// objects ids with predicted states (xs, ps).
func (e *engine) associate(step int, ids []string, xs, ps [][]float64, scan mot.Scan) (Detail, error) {
	n, m := e.f.Dims()
	dets := scan.Detections
	detIDs := make([]int, len(dets))
	seen := make(map[int]bool, len(dets))
	for j, d := range dets {
		if d.ID < 0 || seen[d.ID] {
			return Detail{}, fmt.Errorf("tracker: step %d: detection %d: id %d is negative or repeated, want a unique id ≥ 0", step, j, d.ID)
		}
		seen[d.ID] = true
		if len(d.Z) != m {
			return Detail{}, fmt.Errorf("tracker: step %d: detection %d: measurement of length %d, want %d", step, d.ID, len(d.Z), m)
		}
		for i, v := range d.Z {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return Detail{}, fmt.Errorf("tracker: step %d: detection %d: z[%d] is %g, want a finite number", step, d.ID, i, v)
			}
		}
		detIDs[j] = d.ID
	}
	r := len(ids)
	cm := CostMatrix{
		Objects: append([]string(nil), ids...), Detections: detIDs,
		Gated: make([][]Entry, r), Miss: make([]float64, r),
	}
	projs := make([]kalman.Projection, r)
	// One backing array for every projection's buffers.
	pbuf := make([]float64, r*(m+2*m*m))
	for i := range projs {
		b := pbuf[i*(m+2*m*m):]
		projs[i].Zhat, projs[i].S, projs[i].L = b[:m:m], b[m:m+m*m:m+m*m], b[m+m*m:m+2*m*m:m+2*m*m]
	}

	// Detections sorted by their first coordinate: a detection outside
	// |z₀ − ẑ₀| ≤ √(γ S₀₀) cannot be in the gate, since d² ≥ ν₀²/S₀₀.
	order := make([]int, len(dets))
	for j := range order {
		order[j] = j
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(dets[a].Z[0], dets[b].Z[0]) })
	for i := 0; i < r; i++ {
		if err := e.f.ProjectTo(&projs[i], xs[i], ps[i]); err != nil {
			return Detail{}, fmt.Errorf("tracker: step %d: object %q: %w", step, ids[i], err)
		}
		cm.Miss[i] = e.missCost
		pr := &projs[i]
		// Widened by a relative 1e-9 so that rounding in the window never
		// drops a pair the full test d² ≤ γ would accept.
		half := float64(math.Sqrt(float64(e.gamma*pr.S[0])) * (1 + 1e-9))
		lo, hi := pr.Zhat[0]-half, pr.Zhat[0]+half
		a := sort.Search(len(order), func(q int) bool { return dets[order[q]].Z[0] >= lo })
		var g []Entry
		for q := a; q < len(order) && dets[order[q]].Z[0] <= hi; q++ {
			j := order[q]
			d2 := pr.Distance2(dets[j].Z)
			if d2 <= e.gamma {
				g = append(g, Entry{Col: j, Cost: -e.logPD - pr.LogLikelihood(d2) + e.logLambda})
			}
		}
		slices.SortFunc(g, func(a, b Entry) int { return cmp.Compare(a.Col, b.Col) })
		cm.Gated[i] = g
	}

	clusters := split(&cm)
	d := Detail{Step: step, Costs: cm, Clusters: len(clusters)}
	rowToDet := make([]int, r) // best association per row: column or -1
	for i := range rowToDet {
		rowToDet[i] = -1
	}
	coasting := make([]bool, r)
	local := make([]int, len(dets)) // detection column → cluster column, filled per cluster
	var feasible []*cluster
	for ci := range clusters {
		c := &clusters[ci]
		if err := e.rank(&cm, c, local); err != nil {
			if errors.Is(err, assign.ErrInfeasible) {
				for _, row := range c.rows {
					coasting[row] = true
					d.Coasting = append(d.Coasting, ids[row])
				}
				continue
			}
			return Detail{}, fmt.Errorf("tracker: step %d: %w", step, err)
		}
		feasible = append(feasible, c)
		for a, row := range c.rows {
			if col := c.hyps[0].RowToCol[a]; col < len(c.cols) {
				rowToDet[row] = c.cols[col]
			}
		}
		d.Cost += c.hyps[0].Cost
	}
	e.hypotheses(&d, feasible, rowToDet, detIDs, r)
	d.PerCluster = e.perCluster(clusters, detIDs)

	clusterOf := make([]int, r)
	for ci, c := range clusters {
		for _, row := range c.rows {
			clusterOf[row] = ci
		}
	}

	if e.force != nil {
		if err := e.applyForce(step, &cm, clusters, rowToDet); err != nil {
			return Detail{}, err
		}
	}

	// Updates with the best hypothesis (or the forced association).
	d.Objects = make([]ObjectDetail, r)
	per := 2 * (n + n*n)
	obuf := make([]float64, r*per)
	for i := 0; i < r; i++ {
		b := obuf[i*per : (i+1)*per : (i+1)*per]
		pm, pc := b[:n:n], b[n:n+n*n:n+n*n]
		um, uc := b[n+n*n:2*n+n*n:2*n+n*n], b[2*n+n*n:]
		copy(pm, xs[i])
		copy(pc, ps[i])
		copy(um, xs[i])
		copy(uc, ps[i])
		od := ObjectDetail{
			Object:    ids[i],
			PredMean:  pm,
			PredCov:   mot.Mat{Rows: n, Cols: n, Data: pc},
			Detection: mot.NoDetection, NIS: math.NaN(), Coasting: coasting[i],
			Mean: um,
			Cov:  mot.Mat{Rows: n, Cols: n, Data: uc},
		}
		od.Cluster = clusterOf[i]
		if j := rowToDet[i]; j >= 0 {
			res := e.f.UpdateTo(od.Mean, od.Cov.Data, xs[i], ps[i], &projs[i], dets[j].Z)
			od.Detection = dets[j].ID
			od.NIS = res.NIS
		}
		d.Objects[i] = od
	}
	return d, nil
}

// perCluster describes each cluster on its own: its rows, gated
// detections, margin and k best hypotheses with the cluster's posterior.
// A cluster without hypotheses coasts. The slices of all clusters share
// three backing arrays.
func (e *engine) perCluster(clusters []cluster, detIDs []int) []ClusterDetail {
	out := make([]ClusterDetail, len(clusters))
	var nDet, nHyp, nAssoc int
	for ci := range clusters {
		c := &clusters[ci]
		q := min(e.k, len(c.hyps))
		nDet += len(c.cols)
		nHyp += q
		nAssoc += q * len(c.rows)
	}
	dets := make([]int, nDet)
	hyps := make([]Hypothesis, nHyp)
	assoc := make([]int, nAssoc)
	for ci := range clusters {
		c := &clusters[ci]
		cd := ClusterDetail{Rows: c.rows, Margin: math.Inf(1), Coasting: len(c.hyps) == 0, Exhaustive: c.exact}
		cd.Detections, dets = dets[:len(c.cols):len(c.cols)], dets[len(c.cols):]
		for a, j := range c.cols {
			cd.Detections[a] = detIDs[j]
		}
		if cd.Coasting {
			out[ci] = cd
			continue
		}
		best := c.hyps[0].Cost
		cd.Cost = best
		if len(c.hyps) > 1 {
			cd.Margin = c.hyps[1].Cost - best
		}
		list := c.hyps[:min(e.k, len(c.hyps))]
		norm := c.logZ
		if !c.exact {
			norm = logSumExp(list, best)
		}
		cd.Hypotheses, hyps = hyps[:len(list):len(list)], hyps[len(list):]
		nr := len(c.rows)
		for q, h := range list {
			var a []int
			a, assoc = assoc[:nr:nr], assoc[nr:]
			for i, col := range h.RowToCol {
				a[i] = mot.NoDetection
				if col < len(c.cols) {
					a[i] = detIDs[c.cols[col]]
				}
			}
			cd.Hypotheses[q] = Hypothesis{Cost: h.Cost, Prob: math.Exp(-(h.Cost - best) - norm), Assoc: a}
		}
		out[ci] = cd
	}
	return out
}

// split returns the connected components of the gating graph of cm, in
// order of their first row.
func split(cm *CostMatrix) []cluster {
	r := len(cm.Objects)
	parent := make([]int, r)
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	owner := make([]int, len(cm.Detections))
	for j := range owner {
		owner[j] = -1
	}
	for i := 0; i < r; i++ {
		for _, e := range cm.Gated[i] {
			if o := owner[e.Col]; o < 0 {
				owner[e.Col] = i
			} else if a, b := find(o), find(i); a != b {
				if a < b {
					parent[b] = a
				} else {
					parent[a] = b
				}
			}
		}
	}
	index := make(map[int]int)
	var out []cluster
	for i := 0; i < r; i++ {
		root := find(i)
		ci, ok := index[root]
		if !ok {
			ci = len(out)
			index[root] = ci
			out = append(out, cluster{})
		}
		out[ci].rows = append(out[ci].rows, i)
	}
	for j, o := range owner {
		if o >= 0 {
			ci := index[find(o)]
			out[ci].cols = append(out[ci].cols, j)
		}
	}
	return out
}

// rank fills c.hyps, c.count, c.logZ and c.exact.
// local is scratch of one entry per detection column.
func (e *engine) rank(cm *CostMatrix, c *cluster, local []int) error {
	nr, nd := len(c.rows), len(c.cols)
	cols := nd + nr
	for a, j := range c.cols {
		local[j] = a
	}
	cost := make([]float64, nr*cols)
	for i := range cost {
		cost[i] = math.Inf(1)
	}
	missOK := !math.IsInf(e.missCost, 1)
	c.count = 1
	for a, row := range c.rows {
		for _, en := range cm.Gated[row] {
			cost[a*cols+local[en.Col]] = en.Cost
		}
		cost[a*cols+nd+a] = cm.Miss[row]
		choices := float64(len(cm.Gated[row]))
		if missOK {
			choices++
		}
		c.count *= choices
	}
	// At least two, so that the margin is known even when k = 1, and one
	// more than needed, so that a short list proves itself complete.
	kr := max(e.k, 2) + 1
	var hyps []assign.Hypothesis
	if nr == 1 {
		// One object: its hypotheses are its finite entries in order.
		hyps = rankSingle(cost, cols, kr)
	} else {
		// KBest costs each hypothesis as the sum of its entries added in
		// row order, and orders the list by exactly those sums, so that
		// equal events cost the same bits.
		var err error
		if hyps, err = assign.KBest(cost, nr, cols, kr); err != nil {
			return err
		}
	}
	if len(hyps) == 0 {
		return assign.ErrInfeasible
	}
	c.hyps = hyps
	best := hyps[0].Cost
	switch {
	case len(hyps) < kr:
		// Murty stopped early: the list is every feasible event.
		c.logZ, c.exact, c.events = logSumExp(hyps, best), true, float64(len(hyps))
	case e.enumLimit > 0 && c.count <= float64(e.enumLimit):
		c.logZ, c.events = enumerate(cost, nr, nd, best)
		c.exact = true
	default:
		z := math.Exp(logSumExp(hyps, best))
		last := hyps[len(hyps)-1].Cost - best
		z += float64(math.Max(0, c.count-float64(len(hyps))) * math.Exp(-last))
		c.logZ = math.Log(z)
	}
	return nil
}

// rankSingle ranks the finite entries of a one-row matrix, cheapest first
// (ties by column), keeping at most k.
func rankSingle(cost []float64, cols, k int) []assign.Hypothesis {
	idx := make([]int, 0, cols)
	for j := 0; j < cols; j++ {
		if !math.IsInf(cost[j], 1) {
			idx = append(idx, j)
		}
	}
	hyps := make([]assign.Hypothesis, len(idx))
	for q, j := range idx {
		hyps[q] = assign.Hypothesis{Cost: cost[j], RowToCol: idx[q : q+1 : q+1]}
	}
	slices.SortFunc(hyps, func(a, b assign.Hypothesis) int {
		if c := cmp.Compare(a.Cost, b.Cost); c != 0 {
			return c
		}
		return cmp.Compare(a.RowToCol[0], b.RowToCol[0])
	})
	if len(hyps) > k {
		hyps = hyps[:k]
	}
	return hyps
}

// logSumExp returns ln Σ exp(−(h.Cost − best)).
func logSumExp(hyps []assign.Hypothesis, best float64) float64 {
	var s float64
	for _, h := range hyps {
		s += math.Exp(-(h.Cost - best))
	}
	return math.Log(s)
}

// enumerate returns ln Σ exp(−(cost − best)) over every feasible event of
// the nr × (nd + nr) augmented matrix, by depth-first search, and the
// number of events.
func enumerate(cost []float64, nr, nd int, best float64) (logZ, events float64) {
	cols := nd + nr
	used := make([]bool, nd)
	var s float64
	var walk func(row int, acc float64)
	walk = func(row int, acc float64) {
		if row == nr {
			s += math.Exp(-(acc - best))
			events++
			return
		}
		for j := 0; j < nd; j++ {
			if c := cost[row*cols+j]; !used[j] && !math.IsInf(c, 1) {
				used[j] = true
				walk(row+1, acc+c)
				used[j] = false
			}
		}
		if c := cost[row*cols+nd+row]; !math.IsInf(c, 1) {
			walk(row+1, acc+c)
		}
	}
	walk(0, 0)
	return math.Log(s), events
}

// pick chooses rank Rank of cluster Cluster in a combined hypothesis.
type pick struct{ cluster, rank int }

type combo struct {
	delta float64
	picks []pick // clusters not at their best, in cluster order
}

// hypotheses combines the clusters' ranked lists into the scan's k best and
// fills the probabilities, margin and covered mass of d.
func (e *engine) hypotheses(d *Detail, cl []*cluster, rowToDet, detIDs []int, r int) {
	list := []combo{{}}
	type cand struct {
		delta      float64
		from, rank int
	}
	var cands []cand
	for ci, c := range cl {
		if len(c.hyps) < 2 {
			continue
		}
		// Both lists are sorted, so candidate (gi, rk) is beaten by every
		// (gi', rk') with gi' ≤ gi and rk' ≤ rk: only (gi+1)(rk+1) ≤ k can
		// be among the k best.
		cands = cands[:0]
		for gi, g := range list {
			for rk, h := range c.hyps {
				if (gi+1)*(rk+1) > e.k {
					break
				}
				cands = append(cands, cand{g.delta + (h.Cost - c.hyps[0].Cost), gi, rk})
			}
		}
		slices.SortFunc(cands, func(a, b cand) int {
			if c := cmp.Compare(a.delta, b.delta); c != 0 {
				return c
			}
			if c := cmp.Compare(a.from, b.from); c != 0 {
				return c
			}
			return cmp.Compare(a.rank, b.rank)
		})
		if len(cands) > e.k {
			cands = cands[:e.k]
		}
		next := make([]combo, len(cands))
		for q, cd := range cands {
			p := list[cd.from].picks
			if cd.rank > 0 {
				p = append(append([]pick(nil), p...), pick{ci, cd.rank})
			}
			next[q] = combo{delta: cd.delta, picks: p}
		}
		list = next
	}

	exhaustive := true
	var logZ float64
	events := 1.0
	for _, c := range cl {
		exhaustive = exhaustive && c.exact
		logZ += c.logZ
		events *= c.events
	}
	var listed float64
	for _, g := range list {
		listed += math.Exp(-g.delta)
	}
	norm := logZ
	if !exhaustive {
		norm = math.Log(listed)
	}
	d.Hypotheses = make([]Hypothesis, len(list))
	for q, g := range list {
		assoc := make([]int, r)
		for i, j := range rowToDet {
			assoc[i] = mot.NoDetection
			if j >= 0 {
				assoc[i] = detIDs[j]
			}
		}
		for _, p := range g.picks {
			c := cl[p.cluster]
			for a, row := range c.rows {
				assoc[row] = mot.NoDetection
				if col := c.hyps[p.rank].RowToCol[a]; col < len(c.cols) {
					assoc[row] = detIDs[c.cols[col]]
				}
			}
		}
		prob := math.Exp(-g.delta - norm)
		d.Hypotheses[q] = Hypothesis{Cost: d.Cost + g.delta, Prob: prob, Assoc: assoc}
	}
	d.BestProb = d.Hypotheses[0].Prob
	d.Exhaustive = exhaustive
	// logZ is exact when exhaustive and an upper bound otherwise.
	d.CoveredMass = math.Min(1, math.Exp(math.Log(listed)-logZ))
	if exhaustive && float64(len(list)) == events {
		d.CoveredMass = 1 // every event is listed
	}
	// The second best differs from the best in exactly one cluster.
	d.Margin = math.Inf(1)
	for _, c := range cl {
		if len(c.hyps) > 1 {
			d.Margin = math.Min(d.Margin, c.hyps[1].Cost-c.hyps[0].Cost)
		}
	}
}

// applyForce replaces the best association of every cluster that holds an
// object named in e.force by the forced one, in rowToDet (detection
// column per row, −1 for a miss). A cluster is forced whole or not at all,
// and the forced event must be feasible: every detection inside the
// object's gate and taken once, a miss only when its cost is finite.
func (e *engine) applyForce(step int, cm *CostMatrix, clusters []cluster, rowToDet []int) error {
	row := make(map[string]int, len(cm.Objects))
	for i, o := range cm.Objects {
		row[o] = i
	}
	for _, o := range slices.Sorted(maps.Keys(e.force)) {
		if _, ok := row[o]; !ok {
			return fmt.Errorf("tracker: step %d: forced object %q is not live, want one of the scan's objects", step, o)
		}
	}
	col := make(map[int]int, len(cm.Detections))
	for j, id := range cm.Detections {
		col[id] = j
	}
	for _, c := range clusters {
		named := 0
		for _, r := range c.rows {
			if _, ok := e.force[cm.Objects[r]]; ok {
				named++
			}
		}
		if named == 0 {
			continue
		}
		if named != len(c.rows) {
			var objs []string
			for _, r := range c.rows {
				objs = append(objs, cm.Objects[r])
			}
			return fmt.Errorf("tracker: step %d: the association is forced for %d of the %d objects of the cluster %v, want all or none", step, named, len(c.rows), objs)
		}
		used := map[int]string{}
		for _, r := range c.rows {
			o := cm.Objects[r]
			det := e.force[o]
			if det == mot.NoDetection {
				if math.IsInf(cm.Miss[r], 1) {
					return fmt.Errorf("tracker: step %d: object %q is forced to miss, but a miss is impossible (P_D = 1)", step, o)
				}
				rowToDet[r] = -1
				continue
			}
			j, ok := col[det]
			if !ok {
				return fmt.Errorf("tracker: step %d: object %q is forced to detection %d, which is not in the scan", step, o, det)
			}
			if !slices.ContainsFunc(cm.Gated[r], func(en Entry) bool { return en.Col == j }) {
				return fmt.Errorf("tracker: step %d: object %q is forced to detection %d, which is outside its gate", step, o, det)
			}
			if other, dup := used[det]; dup {
				return fmt.Errorf("tracker: step %d: detection %d is forced on both %q and %q, want it taken once", step, det, other, o)
			}
			used[det] = o
			rowToDet[r] = j
		}
	}
	return nil
}
