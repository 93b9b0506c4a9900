package runner

import (
	"trackgate/harness/compare"
	"trackgate/harness/mot"
	"trackgate/reference/tracker"
)

// alignRun pairs the tracker's tracks (got) with the tracks of want (the
// reference's run, or blessed output) over the whole run, anchored before
// the first ambiguous step.
//
// compare.Align pairs tracks by their positions over the whole run. After a
// tie resolved the other way, a tracker's track may legitimately follow
// the path the other object took in want, and a pairing by the whole run
// would then swap the two names back to the very first step. So the
// tracks present before the first step k* whose reference margin is within
// the ambiguity threshold are paired on steps 0..k*−1 only, where both
// runs took the same decisions; the tracks left unpaired (those that appear
// at k* or later, or stayed apart) are then paired over the whole run among
// themselves. Without an ambiguous step this is compare.Align over the
// whole run.
func alignRun(want, got []mot.Frame, steps []tracker.Detail, tie float64, opts compare.Options) (map[string]string, error) {
	n := min(len(want), len(got), len(steps))
	first := n
	for k := 0; k < n; k++ {
		if isTie(steps[k].Margin, tie) {
			first = k
			break
		}
	}
	if first == n {
		al, err := compare.Align(want[:n], got[:n], opts)
		return al.Names, err
	}
	names := map[string]string{}
	if first > 0 {
		al, err := compare.Align(want[:first], got[:first], opts)
		if err != nil {
			return nil, err
		}
		for t, r := range al.Names {
			names[t] = r
		}
	}
	used := map[string]bool{}
	for _, r := range names {
		used[r] = true
	}
	keep := func(frames []mot.Frame, drop func(string) bool) []mot.Frame {
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
	w := keep(want[:n], func(r string) bool { return used[r] })
	g := keep(got[:n], func(t string) bool { _, ok := names[t]; return ok })
	al, err := compare.Align(w, g, opts)
	if err != nil {
		return nil, err
	}
	for t, r := range al.Names {
		names[t] = r
	}
	return names, nil
}
