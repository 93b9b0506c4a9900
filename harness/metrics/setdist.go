package metrics

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"trackgate/reference/assign"
)

// Params sets up a set distance.
type Params struct {
	// Order is p ≥ 1; zero means 2. OSPA also accepts +Inf.
	Order float64
	// Cutoff is c > 0, in the unit of the points (metres for positions).
	// There is no default: a zero cut-off panics.
	Cutoff float64
	// Components lists the indices of the vector components the Euclidean
	// distance is taken on, for example {0, 2} for the positions of a
	// [x, ẋ, y, ẏ] state. Nil means every component, and then all points
	// must have the same length.
	Components []int
}

// Validate reports parameters a set distance would reject: a cut-off that
// is not finite and positive, an order below 1 (or infinite, unless
// infinite is true, as OSPA allows), a negative component index, or a
// cut-off whose p-th power overflows. Callers that read parameters from a
// file check them with Validate; the distances panic on them.
func (p Params) Validate(infinite bool) error {
	if !(p.Cutoff > 0) || math.IsInf(p.Cutoff, 0) {
		return fmt.Errorf("cut-off is %g, want a finite positive number", p.Cutoff)
	}
	o := p.Order
	if o == 0 {
		o = 2
	}
	if !(o >= 1) || (math.IsInf(o, 1) && !infinite) {
		return fmt.Errorf("order is %g, want a finite number of at least 1", p.Order)
	}
	for _, c := range p.Components {
		if c < 0 {
			return fmt.Errorf("component index is %d, want a non-negative index", c)
		}
	}
	if !math.IsInf(o, 1) && math.IsInf(powp(p.Cutoff, o), 1) {
		return fmt.Errorf("cut-off %g to the power %g overflows", p.Cutoff, o)
	}
	return nil
}

// order returns p, panicking on invalid parameters.
func (p Params) order(infinite bool) float64 {
	if err := p.Validate(infinite); err != nil {
		panic("metrics: " + err.Error())
	}
	if p.Order == 0 {
		return 2
	}
	return p.Order
}

// powp returns x^p with the exact shortcuts for p = 1 and p = 2.
func powp(x, p float64) float64 {
	switch p {
	case 1:
		return x
	case 2:
		return float64(x * x)
	}
	return math.Pow(x, p)
}

// Workspace holds the scratch memory of the set distances. The zero value is
// ready to use; reuse one to compute distances without allocating once it
// has grown to the largest problem. It is not safe for concurrent use.
type Workspace struct {
	solver  assign.Workspace
	cost    []float64 // rows×cols min(d, c)^p, or bottleneck feasibility costs
	dist    []float64 // rows×cols min(d, c), for OSPA of order ∞
	levels  []float64 // sorted distinct cut-off distances
	match   []int     // truth index → estimate index, −1 if unmatched
	scratch []int
	xs, ys  [][]float64 // point views used by GOSPARun
}

// GOSPA is the generalised OSPA distance (α = 2) between a truth set and an
// estimate set, with its decomposition. The parts add in the p-th power:
// Power = Localisation + Missed + False.
type GOSPA struct {
	// Value is GOSPA(X, Y) = Power^(1/p).
	Value float64
	// Power is GOSPA(X, Y)ᵖ.
	Power float64
	// Localisation is Σ d(xᵢ, yⱼ)ᵖ over the matched pairs (d < c).
	Localisation float64
	// Missed is (cᵖ/2)·Misses and False is (cᵖ/2)·FalseTracks.
	Missed, False float64
	// Matched counts matched pairs, Misses the unmatched truth points and
	// FalseTracks the unmatched estimates.
	Matched, Misses, FalseTracks int
}

// GOSPA returns the GOSPA distance of order p and cut-off c with α = 2
// between truth and est, computed by optimal assignment on the costs
// min(d, c)ᵖ (see the package documentation). It returns an error when a
// point is too short for the chosen components or has a non-finite
// component there; it panics on invalid parameters. After a successful call
// Matches reports the matching.
func (w *Workspace) GOSPA(truth, est [][]float64, p Params) (GOSPA, error) {
	order := p.order(false)
	cp := powp(p.Cutoff, order)
	m, n := len(truth), len(est)
	w.match = grow(w.match, m)
	for i := range w.match {
		w.match[i] = -1
	}
	if err := w.fill(truth, est, "truth", "estimate", p, order, false); err != nil {
		return GOSPA{}, err
	}
	var g GOSPA
	if m > 0 && n > 0 {
		w.scratch = grow(w.scratch, m)
		if _, err := w.solver.Solve(w.cost, m, n, w.scratch); err != nil {
			return GOSPA{}, fmt.Errorf("metrics: GOSPA assignment: %w", err)
		}
		for i, j := range w.scratch {
			// A pair at d ≥ c costs exactly cᵖ, the price of one miss and
			// one false track: count it as those.
			if j >= 0 && w.cost[i*n+j] < cp {
				w.match[i] = j
				g.Localisation += w.cost[i*n+j]
				g.Matched++
			}
		}
	}
	g.Misses = m - g.Matched
	g.FalseTracks = n - g.Matched
	g.Missed = cp / 2 * float64(g.Misses)
	g.False = cp / 2 * float64(g.FalseTracks)
	g.Power = g.Localisation + g.Missed + g.False
	g.Value = root(g.Power, order)
	return g, nil
}

// Matches returns, for each truth point of the last successful GOSPA call,
// the index of the estimate it was matched with (d < c), or −1; after a
// failed GOSPA call every entry is −1. The slice belongs to the Workspace
// and is overwritten by its next GOSPA call.
func (w *Workspace) Matches() []int { return w.match }

// OSPA is the OSPA distance between two sets and its split into
// localisation and cardinality parts, Valueᵖ = Localisationᵖ + Cardinalityᵖ.
// For p = ∞ the split is not defined and both parts are zero.
type OSPA struct {
	Value        float64
	Localisation float64
	Cardinality  float64
}

// OSPA returns the OSPA distance of order p (which may be +Inf) and cut-off
// c between x and y, with OSPA(∅, ∅) = 0 and OSPA(∅, Y) = c for Y ≠ ∅. It
// is symmetric in its arguments. Errors and panics are as for GOSPA.
func (w *Workspace) OSPA(x, y [][]float64, p Params) (OSPA, error) {
	order := p.order(true)
	xname, yname := "first", "second"
	if len(x) > len(y) {
		x, y = y, x
		xname, yname = yname, xname
	}
	m, n := len(x), len(y)
	inf := math.IsInf(order, 1)
	if err := w.fill(x, y, xname, yname, p, order, inf); err != nil {
		return OSPA{}, err
	}
	switch {
	case n == 0:
		return OSPA{}, nil
	case inf && m != n:
		return OSPA{Value: p.Cutoff}, nil
	case inf:
		v, err := w.bottleneck(n)
		return OSPA{Value: v}, err
	}
	var sum float64
	if m > 0 {
		w.scratch = grow(w.scratch, m)
		if _, err := w.solver.Solve(w.cost, m, n, w.scratch); err != nil {
			return OSPA{}, fmt.Errorf("metrics: OSPA assignment: %w", err)
		}
		for i, j := range w.scratch {
			sum += w.cost[i*n+j]
		}
	}
	card := powp(p.Cutoff, order) * float64(n-m)
	nf := float64(n)
	return OSPA{
		Value:        root((sum+card)/nf, order),
		Localisation: root(sum/nf, order),
		Cardinality:  root(card/nf, order),
	}, nil
}

// bottleneck returns min over permutations π of maxᵢ dist[i][π(i)] for the
// n×n cut-off distances in w.dist: a binary search over the distinct
// distances for the smallest level t at which the pairs with d ≤ t admit a
// perfect matching (found with the assignment solver, +Inf forbidding the
// other pairs).
func (w *Workspace) bottleneck(n int) (float64, error) {
	w.levels = append(w.levels[:0], w.dist...)
	slices.Sort(w.levels)
	w.levels = slices.Compact(w.levels)
	w.cost = grow(w.cost, n*n)
	w.scratch = grow(w.scratch, n)
	lo, hi := 0, len(w.levels)-1 // the largest level is always feasible
	for lo < hi {
		mid := (lo + hi) / 2
		t := w.levels[mid]
		for k, d := range w.dist {
			if d <= t {
				w.cost[k] = 0
			} else {
				w.cost[k] = math.Inf(1)
			}
		}
		_, err := w.solver.Solve(w.cost, n, n, w.scratch)
		switch {
		case err == nil:
			hi = mid
		case errors.Is(err, assign.ErrInfeasible):
			lo = mid + 1
		default:
			return 0, fmt.Errorf("metrics: OSPA bottleneck assignment: %w", err)
		}
	}
	return w.levels[lo], nil
}

// fill checks the points and writes the m×n costs min(d, c)ᵖ into w.cost,
// or, when dist is set, the cut-off distances min(d, c) into w.dist.
func (w *Workspace) fill(xs, ys [][]float64, xname, yname string, p Params, order float64, dist bool) error {
	width := -1
	if err := checkPoints(xname, xs, p.Components, &width); err != nil {
		return err
	}
	if err := checkPoints(yname, ys, p.Components, &width); err != nil {
		return err
	}
	m, n := len(xs), len(ys)
	cp := powp(p.Cutoff, order)
	c2 := float64(p.Cutoff * p.Cutoff)
	if dist {
		w.dist = grow(w.dist, m*n)
	} else {
		w.cost = grow(w.cost, m*n)
	}
	// Planar positions, the common case, take a loop without the
	// component indirection.
	a, b, planar := 0, 1, width == 2 && p.Components == nil
	if len(p.Components) == 2 {
		a, b, planar = p.Components[0], p.Components[1], true
	}
	for i, x := range xs {
		var out []float64
		if dist {
			out = w.dist[i*n : i*n+n]
		} else {
			out = w.cost[i*n : i*n+n]
		}
		for j, y := range ys {
			var d2 float64
			if planar {
				dx, dy := x[a]-y[a], x[b]-y[b]
				d2 = float64(dx*dx) + float64(dy*dy)
			} else {
				d2 = sqDist(x, y, p.Components)
			}
			switch {
			case dist:
				out[j] = math.Min(math.Sqrt(d2), p.Cutoff)
			case d2 >= c2:
				out[j] = cp
			case order == 2:
				out[j] = d2
			default:
				out[j] = math.Min(powp(math.Sqrt(d2), order), cp)
			}
		}
	}
	return nil
}

// sqDist is the squared Euclidean distance on the chosen components.
func sqDist(x, y []float64, comps []int) float64 {
	var s float64
	if comps == nil {
		for k := range x {
			d := x[k] - y[k]
			s += float64(d * d)
		}
		return s
	}
	for _, k := range comps {
		d := x[k] - y[k]
		s += float64(d * d)
	}
	return s
}

// PointError reports a point a set distance cannot use.
type PointError struct {
	// Set is "truth" or "estimate" for GOSPA, "first" or "second" for OSPA.
	Set string
	// Index is the position of the point in its set.
	Index int
	// Problem says what is wrong and what was expected.
	Problem string
}

func (e *PointError) Error() string {
	return fmt.Sprintf("%s point %d: %s", e.Set, e.Index, e.Problem)
}

// checkPoints reports a point too short for the components, of a length
// different from the others when all components are used, or with a
// non-finite coordinate.
func checkPoints(set string, pts [][]float64, comps []int, width *int) error {
	need := 0
	for _, c := range comps {
		need = max(need, c+1)
	}
	for i, x := range pts {
		if comps == nil {
			if *width < 0 {
				*width = len(x)
			}
			if len(x) != *width {
				return &PointError{Set: set, Index: i, Problem: fmt.Sprintf("has %d components, want %d like the first point", len(x), *width)}
			}
			for k, v := range x {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return &PointError{Set: set, Index: i, Problem: fmt.Sprintf("component %d is %g, want a finite number", k, v)}
				}
			}
			continue
		}
		if len(x) < need {
			return &PointError{Set: set, Index: i, Problem: fmt.Sprintf("has %d components, want at least %d for components %v", len(x), need, comps)}
		}
		for _, k := range comps {
			if v := x[k]; math.IsNaN(v) || math.IsInf(v, 0) {
				return &PointError{Set: set, Index: i, Problem: fmt.Sprintf("component %d is %g, want a finite number", k, v)}
			}
		}
	}
	return nil
}

// root returns x^(1/p), exactly for p = 1 and with Sqrt for p = 2.
func root(x, p float64) float64 {
	switch p {
	case 1:
		return x
	case 2:
		return math.Sqrt(x)
	}
	return math.Pow(x, 1/p)
}

func grow[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n)
	}
	return s[:n]
}
