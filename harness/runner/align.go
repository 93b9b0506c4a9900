package runner

import (
	"trackgate/harness/compare"
	"trackgate/harness/mot"
	"trackgate/reference/tracker"
)

// alignRun pairs the tracker's tracks (got) with the tracks of want (the
// reference's run, or blessed output), anchored on the steps before the
// first changed association or ambiguous step.
//
// compare.Align pairs tracks by their positions over a span of steps. Over
// the whole run that goes wrong as soon as the two runs part: after a
// swapped association (a tie resolved the other way, or a harmful swap) a
// tracker's track follows the path the other object took in want, and if
// that part of the run is the longer one, a whole-run pairing swaps the two
// names back to the very first step, so that the identical steps before
// the swap look like the divergence. The pairing is therefore made only on
// the steps where both runs took the same decisions. With P_s the pairing
// by compare.Align over steps 0..s−1, the anchor h is the first step s
// such that
//
//   - the reference's margin at s is within the ambiguity threshold tie
//     (so a tracker that does not report associations is anchored before
//     the first step where it may rightly choose otherwise), or
//   - under P_s some track whose partner is present at s reported a
//     detection other than its partner's (a changed association of any
//     kind, harmful or not),
//
// and n (the whole run) when there is none. The tracks present before h
// are paired by P_h; the tracks left unpaired (those that appear at h or
// later, or stayed apart) are then paired over the whole run among
// themselves. Since P_s is built from positions and the test compares
// detection ids, both are blind to the tracks' names and to the order of
// tracks in a frame, and a track born at step b takes part in P_s from
// s = b+1 on, so that its own first swap is found like any other.
//
// P_s is computed again only when the set of tracks seen before s has grown
// since the last computation, and before a change is declared; between
// those points every paired track agrees with its partner step by step, and
// each added step of near-identical positions adds the largest possible
// gain, −c², to every existing pair, which keeps the pairing optimal.
func alignRun(want, got []mot.Frame, steps []tracker.Detail, tie float64, opts compare.Options) (map[string]string, error) {
	n := min(len(want), len(got), len(steps))
	end := n
	for k := 0; k < n; k++ {
		if isTie(steps[k].Margin, tie) {
			end = k
			break
		}
	}
	h, names, err := anchorStep(want[:n], got[:n], end, opts)
	if err != nil {
		return nil, err
	}
	if h == n {
		return names, nil
	}
	if names == nil {
		names = map[string]string{}
	}
	used := map[string]bool{}
	for _, r := range names {
		used[r] = true
	}
	w := withoutTracks(want[:n], func(r string) bool { return used[r] })
	g := withoutTracks(got[:n], func(t string) bool { _, ok := names[t]; return ok })
	al, err := compare.Align(w, g, opts)
	if err != nil {
		return nil, err
	}
	for t, r := range al.Names {
		names[t] = r
	}
	return names, nil
}

// anchorStep returns the anchor h ≤ end of alignRun and the pairing P_h
// (nil when h is 0).
func anchorStep(want, got []mot.Frame, end int, opts compare.Options) (int, map[string]string, error) {
	// seen[s] counts the distinct tracks (of both sides) present in steps
	// 0..s−1.
	seen := make([]int, end+1)
	names := map[[2]string]bool{}
	for s := 0; s < end; s++ {
		for _, t := range want[s].Tracks {
			names[[2]string{"w", t.Track}] = true
		}
		for _, t := range got[s].Tracks {
			names[[2]string{"g", t.Track}] = true
		}
		seen[s+1] = len(names)
	}
	pairing := func(s int) (map[string]string, error) {
		if s == 0 {
			return nil, nil
		}
		al, err := compare.Align(want[:s], got[:s], opts)
		return al.Names, err
	}
	var p map[string]string // P_at
	at := 0
	for s := 0; s < end; s++ {
		if seen[s] > seen[at] {
			var err error
			if p, err = pairing(s); err != nil {
				return 0, nil, err
			}
			at = s
		}
		if !changedAt(want[s], got[s], p) {
			continue
		}
		if at != s {
			var err error
			if p, err = pairing(s); err != nil {
				return 0, nil, err
			}
			at = s
			if !changedAt(want[s], got[s], p) {
				continue
			}
		}
		return s, p, nil
	}
	if at != end {
		var err error
		if p, err = pairing(end); err != nil {
			return 0, nil, err
		}
	}
	if p == nil {
		p = map[string]string{}
	}
	return end, p, nil
}

// changedAt reports whether, under the pairing names (tracker track →
// want track), some track of g that reported a detection is paired with a
// track of w that reported another one.
func changedAt(w, g mot.Frame, names map[string]string) bool {
	if len(names) == 0 {
		return false
	}
	det := make(map[string]int, len(w.Tracks))
	for _, t := range w.Tracks {
		if t.HasDetection {
			det[t.Track] = t.Detection
		}
	}
	for _, t := range g.Tracks {
		if !t.HasDetection {
			continue
		}
		r, ok := names[t.Track]
		if !ok {
			continue
		}
		if d, ok := det[r]; ok && d != t.Detection {
			return true
		}
	}
	return false
}

// withoutTracks copies frames without the tracks drop names.
func withoutTracks(frames []mot.Frame, drop func(string) bool) []mot.Frame {
	out := make([]mot.Frame, len(frames))
	for i, f := range frames {
		out[i].Step = f.Step
		for _, t := range f.Tracks {
			if !drop(t.Track) {
				out[i].Tracks = append(out[i].Tracks, t)
			}
		}
	}
	return out
}
