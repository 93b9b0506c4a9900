package compare

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"trackgate/harness/mot"
	"trackgate/reference/assign"
)

// Options configures Align and Follow.
type Options struct {
	// Position lists the indices of the mean components that are
	// positions, e.g. [0, 2] for the state [x, ẋ, y, ẏ]. Distances are
	// Euclidean over these components.
	Position []int
	// Cutoff is c > 0, the distance (metres) at which a track stops
	// counting as following an object: every distance is capped at c.
	Cutoff float64
}

func (o Options) check() error {
	if len(o.Position) == 0 {
		return errors.New("compare: no position components to measure distances on")
	}
	for _, p := range o.Position {
		if p < 0 {
			return fmt.Errorf("compare: position component %d is negative", p)
		}
	}
	if !(o.Cutoff > 0) || math.IsInf(o.Cutoff, 0) {
		return fmt.Errorf("compare: cut-off %v must be finite and > 0", o.Cutoff)
	}
	return nil
}

// track is one named track over a run: its position at each step it exists.
type track struct {
	name  string
	first int
	pos   map[int][]float64
	steps []int // ascending
}

// collect turns frames into tracks in canonical order: by first step, then
// by position at that step (lexicographic), then by name. The order never
// depends on where a track sits in a frame and, unless two tracks start at
// the same step at the same position, not on its name, so permuting or
// relabelling tracks cannot change which of two equal-cost answers wins.
func collect(frames []mot.Frame, o Options, side string) ([]*track, []int, error) {
	byName := map[string]*track{}
	var list []*track
	stepSet := map[int]bool{}
	for fi, f := range frames {
		if stepSet[f.Step] {
			return nil, nil, fmt.Errorf("compare: %s frame %d: step %d appears twice", side, fi, f.Step)
		}
		stepSet[f.Step] = true
		for _, e := range f.Tracks {
			t := byName[e.Track]
			if t == nil {
				t = &track{name: e.Track, first: f.Step, pos: map[int][]float64{}}
				byName[e.Track] = t
				list = append(list, t)
			}
			if _, dup := t.pos[f.Step]; dup {
				return nil, nil, fmt.Errorf("compare: %s step %d: track %q appears twice", side, f.Step, e.Track)
			}
			p := make([]float64, len(o.Position))
			for i, c := range o.Position {
				if c >= len(e.Mean) {
					return nil, nil, fmt.Errorf("compare: %s step %d track %q: position component %d beyond a mean of length %d", side, f.Step, e.Track, c, len(e.Mean))
				}
				p[i] = e.Mean[c]
			}
			t.pos[f.Step] = p
			t.steps = append(t.steps, f.Step)
			if f.Step < t.first {
				t.first = f.Step
			}
		}
	}
	for _, t := range list {
		sort.Ints(t.steps)
	}
	sort.SliceStable(list, func(i, j int) bool {
		a, b := list[i], list[j]
		if a.first != b.first {
			return a.first < b.first
		}
		if c := cmpVec(a.pos[a.first], b.pos[b.first]); c != 0 {
			return c < 0
		}
		return a.name < b.name
	})
	steps := make([]int, 0, len(stepSet))
	for s := range stepSet {
		steps = append(steps, s)
	}
	sort.Ints(steps)
	return list, steps, nil
}

// cmpVec orders vectors lexicographically, NaN after every number.
func cmpVec(a, b []float64) int {
	for i := range a {
		x, y := a[i], b[i]
		switch {
		case x < y:
			return -1
		case x > y:
			return 1
		case math.IsNaN(x) && !math.IsNaN(y):
			return 1
		case !math.IsNaN(x) && math.IsNaN(y):
			return -1
		}
	}
	return 0
}

// capped returns min(d², c²) for the Euclidean distance d of a and b; a
// NaN distance counts as the cap. Products are rounded explicitly so no
// platform fuses them.
func capped(a, b []float64, c2 float64) float64 {
	s := 0.0
	for i := range a {
		d := a[i] - b[i]
		s += float64(d * d)
	}
	if !(s < c2) {
		return c2
	}
	return s
}

// solveOpen assigns rows to columns where pairing saves cost: save[i*cols+j]
// < 0 is the change in cost from pairing i with j rather than leaving both
// alone, +Inf forbids the pair. Each row gets a private dummy column of
// cost 0, so any row may stay unpaired. It returns row→column (−1 when
// unpaired).
func solveOpen(save []float64, rows, cols int) ([]int, error) {
	if rows == 0 {
		return nil, nil
	}
	w := cols + rows
	cost := make([]float64, rows*w)
	for i := 0; i < rows; i++ {
		copy(cost[i*w:], save[i*cols:(i+1)*cols])
		for k := 0; k < rows; k++ {
			cost[i*w+cols+k] = math.Inf(1)
		}
		cost[i*w+cols+i] = 0
	}
	r2c, _, err := assign.Solve(cost, rows, w)
	if err != nil {
		return nil, fmt.Errorf("compare: assignment: %w", err)
	}
	for i, j := range r2c {
		if j >= cols {
			r2c[i] = -1
		}
	}
	return r2c, nil
}

// Alignment is the whole-run pairing of tracker tracks with reference
// tracks.
type Alignment struct {
	// Names maps each paired tracker track name to its reference track name.
	Names map[string]string
	// LoneTracker and LoneReference list, sorted, the tracks left unpaired.
	LoneTracker, LoneReference []string
	// Cost is the run's total cost under the pairing (see Align).
	Cost float64
}

// Align pairs tracker tracks (got) with reference tracks (want) by one
// optimal assignment over the whole run. With c = o.Cutoff and d_k the
// distance between the two tracks' positions at step k, a pairing costs
//
//	Σ_pairs Σ_{k: both exist} min(d_k², c²)
//	  + c²/2 · (number of (step, track) presences not covered by a pair at that step)
//
// that is, summed over steps, the squared GOSPA (p = 2, α = 2) of each
// step with the assignment held fixed over the run: a step where only one
// track of a pair exists, and every step of an unpaired track, costs c²/2,
// as a missed or false target does in GOSPA; a step where both exist at a
// distance ≥ c costs c², as leaving both unpaired would. Pairing reference
// track i with tracker track j therefore changes the cost by
//
//	Δ_ij = Σ_{k: both exist} (min(d_k², c²) − c²) ≤ 0,
//
// and the pairing minimises Σ Δ_ij (pairs with Δ_ij = 0, which never
// overlap within c, are not made). References: Rahmathullah,
// García-Fernández and Svensson (FUSION 2017), Proposition 1; the fixed
// assignment over time is the trajectory metric of García-Fernández,
// Rahmathullah and Svensson (IEEE TSP 2020) without switching cost (from
// memory).
//
// Bad input (a track twice in one frame, a step twice, a position index
// beyond a mean) is an error.
func Align(want, got []mot.Frame, o Options) (Alignment, error) {
	if err := o.check(); err != nil {
		return Alignment{}, err
	}
	ref, _, err := collect(want, o, "reference")
	if err != nil {
		return Alignment{}, err
	}
	trk, _, err := collect(got, o, "tracker")
	if err != nil {
		return Alignment{}, err
	}
	c2 := float64(o.Cutoff * o.Cutoff)
	rows, cols := len(ref), len(trk)
	save := make([]float64, rows*cols)
	for i, r := range ref {
		for j, t := range trk {
			s, overlap := 0.0, false
			for _, k := range r.steps {
				if p, ok := t.pos[k]; ok {
					overlap = true
					s += capped(r.pos[k], p, c2) - c2
				}
			}
			if !overlap || !(s < 0) {
				s = math.Inf(1)
			}
			save[i*cols+j] = s
		}
	}
	r2c, err := solveOpen(save, rows, cols)
	if err != nil {
		return Alignment{}, err
	}
	a := Alignment{Names: map[string]string{}}
	presences := 0
	for _, r := range ref {
		presences += len(r.steps)
	}
	for _, t := range trk {
		presences += len(t.steps)
	}
	a.Cost = float64(c2/2) * float64(presences)
	paired := make([]bool, cols)
	for i, j := range r2c {
		if j < 0 {
			a.LoneReference = append(a.LoneReference, ref[i].name)
			continue
		}
		paired[j] = true
		a.Names[trk[j].name] = ref[i].name
		a.Cost += save[i*cols+j]
	}
	for j, t := range trk {
		if !paired[j] {
			a.LoneTracker = append(a.LoneTracker, t.name)
		}
	}
	sort.Strings(a.LoneReference)
	sort.Strings(a.LoneTracker)
	return a, nil
}

// SwitchKind says which side of a pairing changed.
type SwitchKind int

const (
	// TrackSwitch: a tracker track starts following a different
	// reference track.
	TrackSwitch SwitchKind = iota
	// ObjectSwitch: a reference track starts being followed by a
	// different tracker track.
	ObjectSwitch
)

func (k SwitchKind) String() string {
	if k == TrackSwitch {
		return "track switch"
	}
	return "object switch"
}

// Switch is one identity switch.
type Switch struct {
	Step int
	Kind SwitchKind
	// Subject is the track whose partner changed (a tracker track for
	// TrackSwitch, a reference track for ObjectSwitch); From and To are the
	// previous and the new partner.
	Subject, From, To string
}

// Lone is a track that follows nothing (or is followed by nothing) at one
// step.
type Lone struct {
	Step  int
	Track string
	// Reference is true for a reference track no tracker track follows
	// (a missed object), false for a tracker track that follows no
	// reference track (a false track).
	Reference bool
}

// Following is the step-by-step matching of a run.
type Following struct {
	// Pairs holds, per step in ascending order, the map tracker track →
	// reference track of that step's matching.
	Pairs []StepPairs
	// Switches lists identity switches by step, kind, subject.
	Switches []Switch
	// Lone lists unmatched tracks by step, side (tracker first), name.
	Lone []Lone
}

// StepPairs is the matching of one step.
type StepPairs struct {
	Step  int
	Pairs map[string]string
}

// Follow matches tracker tracks with reference tracks step by step, the way
// the CLEAR MOT metrics build their correspondences (K. Bernardin and R.
// Stiefelhagen, "Evaluating multiple object tracking performance: the
// CLEAR MOT metrics", EURASIP J. Image and Video Processing, 2008, §2.1):
//
//  1. every pair of the previous step whose two tracks both exist at this
//     step at a distance d < c is kept, even when another matching would
//     now be cheaper;
//  2. the tracks left over are matched by the assignment minimising
//     Σ_pairs d² + c²/2 · (unmatched tracks among them) over pairs at
//     distance d < c — the optimal assignment of their GOSPA (p = 2,
//     α = 2; Rahmathullah, García-Fernández and Svensson, FUSION 2017,
//     Proposition 1).
//
// Pairs at distance ≥ c are never matched. "Previous step" is the step
// before in the union of both sides' steps; at the first step, and for
// tracks whose pair was broken, only rule 2 applies. Because of rule 1 two
// tracks that pass close to each other (within c) keep their partners
// rather than swapping whenever the estimates happen to be nearer the
// other object, so such crossings count no switch.
//
// An identity switch is counted, as in CLEAR MOT's mismatch count (§2.1,
// same reference), whenever a tracker track is matched to a reference
// track other than the one it was last matched to (TrackSwitch), and
// whenever a reference track is matched to a tracker track other than the
// one last matched to it (ObjectSwitch); steps without a match in between
// do not reset the memory.
func Follow(want, got []mot.Frame, o Options) (Following, error) {
	if err := o.check(); err != nil {
		return Following{}, err
	}
	ref, rsteps, err := collect(want, o, "reference")
	if err != nil {
		return Following{}, err
	}
	trk, gsteps, err := collect(got, o, "tracker")
	if err != nil {
		return Following{}, err
	}
	steps := append(slices.Clone(rsteps), gsteps...)
	sort.Ints(steps)
	steps = slices.Compact(steps)
	c2 := float64(o.Cutoff * o.Cutoff)
	var out Following
	lastRef := map[string]string{} // tracker track → reference track last followed
	lastTrk := map[string]string{} // reference track → tracker track last following it
	for _, k := range steps {
		var rs, ts []*track
		for _, r := range ref {
			if _, ok := r.pos[k]; ok {
				rs = append(rs, r)
			}
		}
		for _, t := range trk {
			if _, ok := t.pos[k]; ok {
				ts = append(ts, t)
			}
		}
		var prev map[string]string
		if n := len(out.Pairs); n > 0 {
			prev = out.Pairs[n-1].Pairs
		}
		r2c, err := matchStep(rs, ts, k, prev, c2)
		if err != nil {
			return Following{}, err
		}
		sp := StepPairs{Step: k, Pairs: map[string]string{}}
		matched := make([]bool, len(ts))
		var sw []Switch
		for i, j := range r2c {
			r := rs[i].name
			if j < 0 {
				out.Lone = append(out.Lone, Lone{Step: k, Track: r, Reference: true})
				continue
			}
			t := ts[j].name
			matched[j] = true
			sp.Pairs[t] = r
			if prev, ok := lastRef[t]; ok && prev != r {
				sw = append(sw, Switch{Step: k, Kind: TrackSwitch, Subject: t, From: prev, To: r})
			}
			if prev, ok := lastTrk[r]; ok && prev != t {
				sw = append(sw, Switch{Step: k, Kind: ObjectSwitch, Subject: r, From: prev, To: t})
			}
			lastRef[t], lastTrk[r] = r, t
		}
		for j, t := range ts {
			if !matched[j] {
				out.Lone = append(out.Lone, Lone{Step: k, Track: t.name})
			}
		}
		sort.Slice(sw, func(a, b int) bool {
			if sw[a].Kind != sw[b].Kind {
				return sw[a].Kind < sw[b].Kind
			}
			return sw[a].Subject < sw[b].Subject
		})
		out.Switches = append(out.Switches, sw...)
		out.Pairs = append(out.Pairs, sp)
	}
	sort.SliceStable(out.Lone, func(a, b int) bool {
		x, y := out.Lone[a], out.Lone[b]
		if x.Step != y.Step {
			return x.Step < y.Step
		}
		if x.Reference != y.Reference {
			return !x.Reference
		}
		return x.Track < y.Track
	})
	return out, nil
}

// matchStep matches the reference tracks rs with the tracker tracks ts at
// step k (rule 1 and 2 of Follow): the pairs of prev (tracker → reference)
// still closer than the cut-off are kept, the rest are assigned optimally.
// It returns, for each of rs, its index in ts or −1.
func matchStep(rs, ts []*track, k int, prev map[string]string, c2 float64) ([]int, error) {
	r2c := make([]int, len(rs))
	for i := range r2c {
		r2c[i] = -1
	}
	takenT := make([]bool, len(ts))
	if len(prev) > 0 {
		row := make(map[string]int, len(rs))
		for i, r := range rs {
			row[r.name] = i
		}
		for j, t := range ts {
			r, was := prev[t.name]
			if !was {
				continue
			}
			i, ok := row[r]
			if !ok {
				continue
			}
			if capped(rs[i].pos[k], t.pos[k], c2) < c2 {
				r2c[i], takenT[j] = j, true
			}
		}
	}
	var freeR, freeT []int
	for i := range rs {
		if r2c[i] < 0 {
			freeR = append(freeR, i)
		}
	}
	for j := range ts {
		if !takenT[j] {
			freeT = append(freeT, j)
		}
	}
	save := make([]float64, len(freeR)*len(freeT))
	for a, i := range freeR {
		for b, j := range freeT {
			s := capped(rs[i].pos[k], ts[j].pos[k], c2) - c2
			if !(s < 0) {
				s = math.Inf(1)
			}
			save[a*len(freeT)+b] = s
		}
	}
	sub, err := solveOpen(save, len(freeR), len(freeT))
	if err != nil {
		return nil, err
	}
	for a, b := range sub {
		if b >= 0 {
			r2c[freeR[a]] = freeT[b]
		}
	}
	return r2c, nil
}
