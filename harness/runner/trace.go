package runner

import (
	"trackgate/harness/mot"
	"trackgate/harness/result"
)

// trace collects what the plots of one run need: truth, detections,
// reference and tracker positions (the first two position components) with
// 2-sigma ellipses, and the association timeline.
func (s *settings) trace(j *job) *result.Trace {
	pos := j.sc.pos
	tr := &result.Trace{}
	point := func(k int, x []float64) result.Point {
		p := result.Point{Step: k}
		if len(pos) > 0 && pos[0] < len(x) {
			p.X = x[pos[0]]
		}
		if len(pos) > 1 && pos[1] < len(x) {
			p.Y = x[pos[1]]
		}
		return p
	}
	// Truth.
	idx := map[string]int{}
	for k, t := range j.run.Truth {
		for _, o := range t.Objects {
			i, ok := idx[o.Object]
			if !ok {
				i = len(tr.Truth)
				idx[o.Object] = i
				tr.Truth = append(tr.Truth, result.Path{ID: o.Object})
			}
			tr.Truth[i].Points = append(tr.Truth[i].Points, point(k, o.X))
		}
	}
	// Detections, where the measured components are the positions.
	rows := measuredPositions(j.sc.spec.Model.H, pos)
	tr.Detections = make([][]result.Point, len(j.run.Scans))
	for k, sc := range j.run.Scans {
		tr.Detections[k] = []result.Point{}
		if rows == nil {
			continue
		}
		for _, d := range sc.Detections {
			p := result.Point{Step: k, X: d.Z[rows[0]]}
			if len(rows) > 1 {
				p.Y = d.Z[rows[1]]
			}
			tr.Detections[k] = append(tr.Detections[k], p)
		}
	}
	tr.Reference = paths(j.ex.Frames, pos)
	tr.Tracker = paths(j.res.Frames, pos)
	tr.Associations = s.timeline(j)
	return tr
}

// measuredPositions returns, for the first (up to two) position components,
// the measurement rows of H that observe them alone, or nil when not every
// one of them is measured directly.
func measuredPositions(h mot.Mat, pos []int) []int {
	var rows []int
	for _, p := range pos[:min(2, len(pos))] {
		found := -1
		for r := 0; r < h.Rows; r++ {
			if h.At(r, p) == 1 {
				found = r
			}
		}
		if found < 0 {
			return nil
		}
		rows = append(rows, found)
	}
	return rows
}

// paths turns frames into one path per track name, in order of first
// appearance, with 2-sigma ellipses where covariances are known.
func paths(frames []mot.Frame, pos []int) []result.Path {
	var out []result.Path
	idx := map[string]int{}
	for _, f := range frames {
		for _, t := range f.Tracks {
			i, ok := idx[t.Track]
			if !ok {
				i = len(out)
				idx[t.Track] = i
				out = append(out, result.Path{ID: t.Track})
			}
			p := result.Point{Step: f.Step}
			if len(pos) > 0 {
				p.X = t.Mean[pos[0]]
			}
			if len(pos) > 1 {
				p.Y = t.Mean[pos[1]]
			}
			if t.Cov.Rows > 0 && len(pos) > 0 {
				a := pos[0]
				e := [3]float64{4 * t.Cov.At(a, a), 0, 0}
				if len(pos) > 1 {
					b := pos[1]
					e[1], e[2] = 4*t.Cov.At(a, b), 4*t.Cov.At(b, b)
				}
				p.Ellipse = &e
			}
			out[i].Points = append(out[i].Points, p)
		}
	}
	return out
}

// timeline says per step whether the tracker's associations agreed with
// the reference's, over the tracks that report one (as the verdicts
// judge them). Where the reference check judged the run, its labels are
// taken (see refJudgement): after a tie the tracker resolved the other
// way the check compares with the reference's run down the tracker's
// branch, so a step that agrees with the branch is "same" although it
// differs from the reference's own run. Otherwise each step is compared
// with the reference's own run: "same"; "tie" when every cluster of the
// reference's step that holds an object whose association changed has a
// margin within the ambiguity threshold (the rule the verdicts apply,
// partsTied); "differs" otherwise. A step without per-cluster structure
// is judged by the scan's margin, which clusterParts then stands for.
func (s *settings) timeline(j *job) []string {
	if !j.res.Tracker.Association || j.names == nil {
		return nil
	}
	out := make([]string, len(j.res.Frames))
	if rj := judgementOf(j); rj != nil {
		for k := range out {
			out[k] = rj.steps[k].label
		}
		return out
	}
	for k, f := range j.res.Frames {
		d := &j.ex.Steps[k]
		v := newView(d, f, j.names)
		var changed []string
		for _, od := range d.Objects {
			i, ok := v.byObj[od.Object]
			if ok && f.Tracks[i].HasDetection && f.Tracks[i].Detection != od.Detection {
				changed = append(changed, od.Object)
			}
		}
		switch {
		case len(changed) == 0:
			out[k] = "same"
		case partsTied(d, changed, j.sc.tie):
			out[k] = "tie"
		default:
			out[k] = "differs"
		}
	}
	return out
}
