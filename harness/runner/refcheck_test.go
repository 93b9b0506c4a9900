package runner

import (
	"fmt"
	"maps"
	"slices"
	"testing"

	"trackgate/harness/compare"
	"trackgate/harness/mot"
	"trackgate/harness/result"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
	"trackgate/reference/tracker"
)

// lane is one track's life in a hand-built run: from step born on, at
// each step its position (x, y) and the detection it took.
type lane struct {
	name string
	born int
	y    []float64 // per step from born; x is the step number
	det  []int     // per step from born; mot.NoDetection for a miss
}

// framesOf builds n frames from lanes, with associations reported when
// assoc is set, listing the tracks in the order of order (indices into
// lanes) at every step.
func framesOf(n int, lanes []lane, assoc bool, order []int) []mot.Frame {
	out := make([]mot.Frame, n)
	for k := range out {
		out[k].Step = k
		for _, i := range order {
			l := lanes[i]
			if k < l.born || k-l.born >= len(l.y) {
				continue
			}
			e := mot.Estimate{Track: l.name, Mean: []float64{float64(k), l.y[k-l.born]}}
			if assoc {
				e.Detection, e.HasDetection = l.det[k-l.born], true
			}
			out[k].Tracks = append(out[k].Tracks, e)
		}
	}
	return out
}

func rep(v float64, n int) []float64 { return slices.Repeat([]float64{v}, n) }

// detsOf numbers a path's detections: 100·base + step.
func detsOf(base, born, n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = 100*base + born + i
	}
	return out
}

// TestAlignRunAnchorsBeforeTheFirstChange: a tracker whose tracks swap
// paths (and detections) for good after a few identical steps keeps the
// names it had before the swap, although the whole-run pairing, dominated
// by the longer part after the swap, would give each track the other
// object. The pairing ignores the tracks' names and their order in a
// frame, and a track born later is paired on its own steps before its
// first change.
func TestAlignRunAnchorsBeforeTheFirstChange(t *testing.T) {
	const n = 8
	north, south, east := rep(10, n), rep(-10, n), rep(30, n-2)
	// The reference: three straight paths; east appears at step 2.
	ref := []lane{
		{"north", 0, north, detsOf(1, 0, n)},
		{"south", 0, south, detsOf(2, 0, n)},
		{"east", 2, east, detsOf(3, 2, n-2)},
	}
	// swapAt returns the values of a for steps before k (counted from
	// born) and those of b after.
	swapAt := func(k int, a, b []float64) []float64 { return append(slices.Clone(a[:k]), b[k:]...) }
	swapDet := func(k int, a, b []int) []int { return append(slices.Clone(a[:k]), b[k:]...) }
	cases := []struct {
		name  string
		lanes []lane
		order []int
		// want maps each tracker track to its partner ("" = unpaired).
		want map[string]string
		// wholeDiffers demands that compare.Align over the whole run
		// pair differently, so that the case shows the anchoring at work.
		wholeDiffers bool
	}{
		{
			name: "swap at step 1, kept",
			lanes: []lane{
				{"A", 0, swapAt(1, north, south), swapDet(1, ref[0].det, ref[1].det)},
				{"B", 0, swapAt(1, south, north), swapDet(1, ref[1].det, ref[0].det)},
				{"C", 2, east, ref[2].det},
			},
			order:        []int{0, 1, 2},
			want:         map[string]string{"A": "north", "B": "south", "C": "east"},
			wholeDiffers: true,
		},
		{
			name: "the same, renamed and listed in another order",
			lanes: []lane{
				{"zz-9", 0, swapAt(1, north, south), swapDet(1, ref[0].det, ref[1].det)},
				{"aa-1", 0, swapAt(1, south, north), swapDet(1, ref[1].det, ref[0].det)},
				{"mm-5", 2, east, ref[2].det},
			},
			order:        []int{2, 1, 0},
			want:         map[string]string{"zz-9": "north", "aa-1": "south", "mm-5": "east"},
			wholeDiffers: true,
		},
		{
			name: "a track born later swaps with an older one",
			lanes: []lane{
				{"A", 0, north, ref[0].det},
				// B follows south for steps 0..2, then east's path.
				{"B", 0, append(slices.Clone(south[:3]), east[1:]...), append(slices.Clone(ref[1].det[:3]), ref[2].det[1:]...)},
				// C follows east at step 2, then south's path.
				{"C", 2, swapAt(1, east, south[2:]), swapDet(1, ref[2].det, ref[1].det[2:])},
			},
			order:        []int{1, 2, 0},
			want:         map[string]string{"A": "north", "B": "south", "C": "east"},
			wholeDiffers: true,
		},
		{
			name: "no change: the whole run pairs",
			lanes: []lane{
				{"A", 0, north, ref[0].det},
				{"B", 0, south, ref[1].det},
				{"C", 2, east, ref[2].det},
			},
			order: []int{0, 1, 2},
			want:  map[string]string{"A": "north", "B": "south", "C": "east"},
		},
		{
			name: "a changed detection on the same path (a miss instead of a hit) anchors, the pairing is unchanged",
			lanes: []lane{
				{"A", 0, north, append([]int{100, mot.NoDetection}, ref[0].det[2:]...)},
				{"B", 0, south, ref[1].det},
				{"C", 2, east, ref[2].det},
			},
			order: []int{0, 1, 2},
			want:  map[string]string{"A": "north", "B": "south", "C": "east"},
		},
	}
	want := framesOf(n, ref, true, []int{0, 1, 2})
	steps := make([]tracker.Detail, n)
	for k := range steps {
		steps[k].Margin = 5 // no ambiguous step
	}
	opts := compare.Options{Position: []int{1}, Cutoff: 5}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			got := framesOf(n, tc.lanes, true, tc.order)
			names, err := alignRun(want, got, steps, 0.5, opts)
			if err != nil {
				t.Fatal(err)
			}
			if !maps.Equal(names, tc.want) {
				t.Errorf("pairing %v, want %v", names, tc.want)
			}
			whole, err := compare.Align(want, got, opts)
			if err != nil {
				t.Fatal(err)
			}
			if tc.wholeDiffers == maps.Equal(whole.Names, tc.want) {
				t.Errorf("whole-run pairing %v: the case no longer shows what it is meant to (whole run differs: %v)", whole.Names, tc.wholeDiffers)
			}
		})
	}
}

// TestAlignRunWithoutAssociations: a tracker that reports no detections
// cannot show a changed association, so its tracks are paired over the
// whole run when no step is ambiguous, and before the first ambiguous step
// otherwise.
func TestAlignRunWithoutAssociations(t *testing.T) {
	const n = 6
	north, south := rep(10, n), rep(-10, n)
	ref := []lane{{"north", 0, north, detsOf(1, 0, n)}, {"south", 0, south, detsOf(2, 0, n)}}
	swapped := []lane{
		{"A", 0, append(slices.Clone(north[:1]), south[1:]...), nil},
		{"B", 0, append(slices.Clone(south[:1]), north[1:]...), nil},
	}
	want := framesOf(n, ref, true, []int{0, 1})
	got := framesOf(n, swapped, false, []int{0, 1})
	opts := compare.Options{Position: []int{1}, Cutoff: 5}
	for _, tc := range []struct {
		tieAt int // −1: none
		want  map[string]string
	}{
		{-1, map[string]string{"A": "south", "B": "north"}},
		{1, map[string]string{"A": "north", "B": "south"}},
	} {
		t.Run(fmt.Sprintf("tie at %d", tc.tieAt), func(t *testing.T) {
			steps := make([]tracker.Detail, n)
			for k := range steps {
				steps[k].Margin = 5
				if k == tc.tieAt {
					steps[k].Margin = 0.1
				}
			}
			names, err := alignRun(want, got, steps, 0.5, opts)
			if err != nil {
				t.Fatal(err)
			}
			if !maps.Equal(names, tc.want) {
				t.Errorf("pairing %v, want %v", names, tc.want)
			}
		})
	}
}

// TestAlignRunBadInput: a track listed twice in one frame is an error, not
// a panic, whether it comes before or after the anchor.
func TestAlignRunBadInput(t *testing.T) {
	const n = 4
	ref := []lane{{"north", 0, rep(10, n), detsOf(1, 0, n)}}
	want := framesOf(n, ref, true, []int{0})
	steps := make([]tracker.Detail, n)
	for k := range steps {
		steps[k].Margin = 5
	}
	opts := compare.Options{Position: []int{1}, Cutoff: 5}
	for _, at := range []int{0, 3} {
		got := framesOf(n, []lane{{"A", 0, rep(10, n), detsOf(1, 0, n)}}, true, []int{0})
		got[at].Tracks = append(got[at].Tracks, got[at].Tracks[0])
		if _, err := alignRun(want, got, steps, 0.5, opts); err == nil {
			t.Errorf("track twice at step %d: no error", at)
		}
	}
}

// refObj is one object at one step of a hand-built reference check: what
// the reference did and what the tracker did.
type refObj struct {
	name  string
	det   int     // the reference's detection
	gated []int   // the detections in the reference's gate
	mean  float64 // the reference's estimate (one component)
	tdet  int     // the tracker's detection
	tmean float64 // the tracker's estimate
}

// refStep is one step: the reference's margin, its two best hypotheses'
// associations (nil: only the best), and the objects.
type refStep struct {
	margin float64
	second []int // per object, the second best hypothesis's detection
	objs   []refObj
}

// refJob builds the job of a hand-built run; the tracker calls the track
// of object o "trk-o" and reports associations when assoc is set.
func refJob(steps []refStep, assoc bool) *job {
	j := &job{sc: &scen{tie: 0.5, profile: compare.BitExact()}, names: map[string]string{}}
	j.res.Tracker.Association = assoc
	for k, st := range steps {
		d := tracker.Detail{Step: k, Margin: st.margin}
		cols := map[int]int{}
		best := tracker.Hypothesis{}
		f := mot.Frame{Step: k}
		for _, o := range st.objs {
			d.Objects = append(d.Objects, tracker.ObjectDetail{Object: o.name, Detection: o.det, Mean: []float64{o.mean}})
			d.Costs.Objects = append(d.Costs.Objects, o.name)
			var row []tracker.Entry
			for _, g := range o.gated {
				c, ok := cols[g]
				if !ok {
					c = len(d.Costs.Detections)
					cols[g] = c
					d.Costs.Detections = append(d.Costs.Detections, g)
				}
				row = append(row, tracker.Entry{Col: c, Cost: 1})
			}
			d.Costs.Gated = append(d.Costs.Gated, row)
			d.Costs.Miss = append(d.Costs.Miss, 2)
			best.Assoc = append(best.Assoc, o.det)
			e := mot.Estimate{Track: "trk-" + o.name, Mean: []float64{o.tmean}, Detection: mot.NoDetection}
			if assoc {
				e.Detection, e.HasDetection = o.tdet, true
			}
			f.Tracks = append(f.Tracks, e)
			j.names["trk-"+o.name] = o.name
		}
		best.Prob = 0.6
		d.Hypotheses = []tracker.Hypothesis{best}
		if st.second != nil {
			d.Hypotheses = append(d.Hypotheses, tracker.Hypothesis{Prob: 0.3, Assoc: st.second})
		}
		j.ex.Steps = append(j.ex.Steps, d)
		j.res.Frames = append(j.res.Frames, f)
	}
	return j
}

// same is an object the tracker handles as the reference does.
func same(name string, det int, gated ...int) refObj {
	return refObj{name: name, det: det, gated: gated, mean: float64(det), tdet: det, tmean: float64(det)}
}

// took is an object to which the tracker gave detection tdet instead,
// with the estimate that goes with it.
func took(name string, det, tdet int, gated ...int) refObj {
	return refObj{name: name, det: det, gated: gated, mean: float64(det), tdet: tdet, tmean: float64(tdet)}
}

// TestReferenceCheckEntangled: after a tie resolved the other way, a
// changed association of an object that shares a cluster (through a chain
// of gated or reported detections) with a stopped object is a tie, not a
// regression, whatever the reference run's margin; an object of another
// cluster is still judged by the margin, and an entangled object that keeps
// the reference's association is still compared.
func TestReferenceCheckEntangled(t *testing.T) {
	// Step 0: p and q swap detections 1 and 2 at a tie (margin 0.2 ≤ 0.5);
	// r (detection 3) and s (detection 9) are left alone.
	tieStep := refStep{margin: 0.2, second: []int{2, 1, 3, 9}, objs: []refObj{
		took("p", 1, 2, 1, 2), took("q", 2, 1, 1, 2), same("r", 3, 3), same("s", 9, 9),
	}}
	type want struct {
		status  result.Status
		first   int      // step of the first regression, −1 for none
		kind    string   // its kind
		objects []string // its objects
		ties    map[string]int
	}
	cases := []struct {
		name  string
		assoc bool
		step1 refStep
		want  want
	}{
		{
			name:  "r shares detection 12 with q, s is in a cluster of its own",
			assoc: true,
			step1: refStep{margin: 3, objs: []refObj{
				same("p", 11, 11, 12), same("q", 12, 12), took("r", 13, 12, 12, 13), took("s", 20, 21, 20, 21),
			}},
			want: want{result.Fail, 1, "association", []string{"s"}, map[string]int{"p": 0, "q": 0, "r": 1}},
		},
		{
			name:  "only the entangled object changes",
			assoc: true,
			step1: refStep{margin: 3, objs: []refObj{
				same("p", 11, 11, 12), same("q", 12, 12), took("r", 13, 12, 12, 13), same("s", 20, 20, 21),
			}},
			want: want{result.Tie, -1, "", nil, map[string]int{"p": 0, "q": 0, "r": 1}},
		},
		{
			name:  "joined through a middle object that keeps its association",
			assoc: true,
			step1: refStep{margin: 3, objs: []refObj{
				same("p", 11, 11), same("q", 12, 12, 13), same("r", 13, 13, 14), took("s", 15, 14, 14, 15),
			}},
			want: want{result.Tie, -1, "", nil, map[string]int{"p": 0, "q": 0, "s": 1}},
		},
		{
			name:  "joined only through the detection the tracker gave a stopped object",
			assoc: true,
			step1: refStep{margin: 3, objs: []refObj{
				same("p", 11, 11), took("q", 12, 14, 12), same("r", 13, 13), took("s", 15, 16, 14, 15, 16),
			}},
			want: want{result.Tie, -1, "", nil, map[string]int{"p": 0, "q": 0, "s": 1}},
		},
		{
			name:  "an entangled object that keeps its association is still compared",
			assoc: true,
			step1: refStep{margin: 3, objs: []refObj{
				same("p", 11, 11, 12), same("q", 12, 12), {name: "r", det: 13, gated: []int{12, 13}, mean: 13, tdet: 13, tmean: 13.5}, same("s", 20, 20),
			}},
			want: want{result.Fail, 1, "estimate", []string{"r"}, map[string]int{"p": 0, "q": 0}},
		},
		{
			name:  "without associations: an entangled estimate difference is a tie, a lone one a regression",
			assoc: false,
			step1: refStep{margin: 3, objs: []refObj{
				same("p", 11, 11, 12), same("q", 12, 12), took("r", 13, 12, 12, 13), took("s", 20, 21, 20, 21),
			}},
			want: want{result.Fail, 1, "estimate", []string{"s"}, map[string]int{"p": 0, "q": 0, "r": 1}},
		},
	}
	s := &settings{maxDiffs: 10}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			j := refJob([]refStep{tieStep, tc.step1}, tc.assoc)
			c := s.checkReference(j)
			if c.Status != tc.want.status {
				t.Errorf("status %s, want %s (%s)", c.Status, tc.want.status, c.Message)
			}
			switch {
			case tc.want.first < 0 && c.First != nil:
				t.Errorf("first regression at step %d (%s %v: %s), want none", c.First.Step, c.First.Kind, c.First.Objects, c.First.Message)
			case tc.want.first >= 0 && c.First == nil:
				t.Errorf("no regression, want one at step %d", tc.want.first)
			case tc.want.first >= 0:
				if c.First.Step != tc.want.first || c.First.Kind != tc.want.kind || !slices.Equal(c.First.Objects, tc.want.objects) {
					t.Errorf("first regression at step %d, %s, objects %v; want step %d, %s, %v", c.First.Step, c.First.Kind, c.First.Objects, tc.want.first, tc.want.kind, tc.want.objects)
				}
			}
			if !maps.Equal(j.ties, tc.want.ties) {
				t.Errorf("first tie per object %v, want %v", j.ties, tc.want.ties)
			}
		})
	}
}

// BenchmarkAlignRun measures the anchored pairing of a tracker that agrees
// with the reference (so that the anchor search runs to the end of the
// run, computing the pairing again at every step where tracks appear),
// beside one whole-run compare.Align, on two stock scenarios.
func BenchmarkAlignRun(b *testing.B) {
	for _, name := range []string{"scale-container-yard", "lifecycle-warehouse-forklifts"} {
		spec, err := scenario.Load(scenarioFile(name))
		if err != nil {
			b.Fatal(err)
		}
		objs := make([]mot.Object, len(spec.Objects))
		for i, o := range spec.Objects {
			objs[i] = o.Object
		}
		ex, err := tracker.RunAll(tracker.Config{Model: spec.Model, Objects: objs}, sim.Run(spec, 0))
		if err != nil {
			b.Fatal(err)
		}
		got := make([]mot.Frame, len(ex.Frames))
		for k, f := range ex.Frames {
			got[k] = mot.Frame{Step: f.Step, Tracks: slices.Clone(f.Tracks)}
			for i := range got[k].Tracks {
				got[k].Tracks[i].Track = "trk-" + got[k].Tracks[i].Track
			}
		}
		pos := make([]int, spec.Model.MeasDim)
		for i := range pos {
			pos[i] = i
		}
		opts := compare.Options{Position: pos, Cutoff: 10}
		b.Run(name+"/anchored", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				names, err := alignRun(ex.Frames, got, ex.Steps, 1e-9, opts)
				if err != nil || len(names) == 0 {
					b.Fatal(err, len(names))
				}
			}
		})
		b.Run(name+"/whole-run", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := compare.Align(ex.Frames, got, opts); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
