package runner

import (
	"fmt"
	"maps"
	"slices"
	"testing"

	"trackgate/harness/compare"
	"trackgate/harness/mot"
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
