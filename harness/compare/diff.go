package compare

import (
	"fmt"
	"math"
	"sort"

	"trackgate/harness/mot"
)

// DiffKind says what kind of disagreement a Diff records.
type DiffKind int

const (
	// Value: two numbers disagree beyond their rule.
	Value DiffKind = iota
	// Shape: two vectors or matrices have different sizes; Want and Got
	// hold the sizes.
	Shape
	// Missing: something present in want is absent from got.
	Missing
	// Extra: something present in got is absent from want.
	Extra
	// Association: a track was updated with a different detection; Want
	// and Got hold the detection ids (mot.NoDetection for a miss).
	Association
)

func (k DiffKind) String() string {
	switch k {
	case Value:
		return "value"
	case Shape:
		return "shape"
	case Missing:
		return "missing"
	case Extra:
		return "extra"
	case Association:
		return "association"
	}
	return fmt.Sprintf("DiffKind(%d)", int(k))
}

// Diff is one disagreement.
type Diff struct {
	Kind DiffKind
	// Path locates the value, e.g. "step 17 / track ferry / mean[2]".
	Path string
	// Want and Got are the two values (sizes for Shape; 0 otherwise when
	// one side is absent).
	Want, Got float64
	// Rule is the rule that was exceeded (Value only).
	Rule Rule
	// Err is |Got − Want|: NaN when either is NaN, +Inf when an infinity
	// meets anything else.
	Err float64
	// Bound is Rule.Bound(Want, Got), the allowed absolute error.
	Bound float64
	// Excess is Err − Bound, how far the error exceeds the bound (+Inf
	// when Err is NaN or infinite).
	Excess float64
	// ULPs is the distance in units in the last place (math.MaxUint64 when
	// undefined).
	ULPs uint64
}

// String formats d on one line.
func (d Diff) String() string {
	switch d.Kind {
	case Value:
		return fmt.Sprintf("%s: want %v, got %v: error %.3g exceeds %.3g (%s) by %.3g",
			d.Path, d.Want, d.Got, d.Err, d.Bound, d.Rule, d.Excess)
	case Shape:
		return fmt.Sprintf("%s: want size %v, got size %v", d.Path, d.Want, d.Got)
	case Association:
		return fmt.Sprintf("%s: want detection %v, got detection %v", d.Path, d.Want, d.Got)
	}
	return fmt.Sprintf("%s: %s", d.Path, d.Kind)
}

// Result collects the disagreements of one comparison. The zero value is
// ready to use.
type Result struct {
	// Compared counts the number pairs checked.
	Compared int
	// Diffs lists every disagreement in the order found.
	Diffs []Diff
}

// OK reports whether no disagreement was found.
func (r *Result) OK() bool { return len(r.Diffs) == 0 }

// Worst returns up to n Value diffs sorted by decreasing Excess relative to
// Bound, then by path: the worst offenders for a report.
func (r *Result) Worst(n int) []Diff {
	var v []Diff
	for _, d := range r.Diffs {
		if d.Kind == Value {
			v = append(v, d)
		}
	}
	sev := func(d Diff) float64 {
		if math.IsNaN(d.Excess) || math.IsInf(d.Excess, 0) || d.Bound == 0 {
			return math.Inf(1)
		}
		return d.Excess / d.Bound
	}
	sort.SliceStable(v, func(i, j int) bool {
		si, sj := sev(v[i]), sev(v[j])
		if si != sj {
			return si > sj
		}
		return v[i].Path < v[j].Path
	})
	if len(v) > n {
		v = v[:n]
	}
	return v
}

// Float compares one pair under rule and records a Diff if they disagree.
// It reports whether they agreed.
func (r *Result) Float(path string, rule Rule, want, got float64) bool {
	r.Compared++
	ok, e, u := rule.measure(want, got)
	if ok {
		return true
	}
	b := rule.Bound(want, got)
	ex := e - b
	if math.IsNaN(e) || math.IsInf(e, 0) {
		ex = math.Inf(1)
	}
	r.Diffs = append(r.Diffs, Diff{Kind: Value, Path: path, Want: want, Got: got,
		Rule: rule, Err: e, Bound: b, Excess: ex, ULPs: u})
	return false
}

// Floats compares two vectors element by element; paths are name[i]. A
// length mismatch is one Shape diff and nothing else is compared.
func (r *Result) Floats(path string, rule Rule, want, got []float64) {
	if len(want) != len(got) {
		r.Diffs = append(r.Diffs, Diff{Kind: Shape, Path: path, Want: float64(len(want)), Got: float64(len(got))})
		return
	}
	for i := range want {
		r.Float(fmt.Sprintf("%s[%d]", path, i), rule, want[i], got[i])
	}
}

// Mat compares two matrices entry by entry; paths are name[i,j]. A shape
// mismatch is one Shape diff (sizes as rows·cols).
func (r *Result) Mat(path string, rule Rule, want, got mot.Mat) {
	if want.Rows != got.Rows || want.Cols != got.Cols || len(want.Data) != len(got.Data) {
		r.Diffs = append(r.Diffs, Diff{Kind: Shape, Path: path,
			Want: float64(want.Rows * want.Cols), Got: float64(got.Rows * got.Cols)})
		return
	}
	for i := 0; i < want.Rows; i++ {
		for j := 0; j < want.Cols; j++ {
			r.Float(fmt.Sprintf("%s[%d,%d]", path, i, j), rule, want.At(i, j), got.At(i, j))
		}
	}
}

// Absent records a Missing (in want only) or Extra (in got only) diff.
func (r *Result) Absent(path string, kind DiffKind) {
	r.Diffs = append(r.Diffs, Diff{Kind: kind, Path: path})
}

// Frames compares a tracker's frames with reference frames step by step.
// names maps a tracker track name to the reference track name it was aligned
// with (see Align); a tracker track not in names, or whose reference track
// is absent at a step, is Extra there, and a reference track no tracker
// track stands for at a step is Missing. Means are compared under p.Mean;
// covariances under p.Cov when both sides report one (Rows > 0); detection
// ids exactly when both sides report an association (an Association diff;
// whether a changed association is a near-tie is for the caller to judge).
// Within a step, value diffs and Missing come in reference order, then
// Extra in tracker order. When names maps two tracker tracks present at a
// step to one reference track, the first is compared and the second is
// Extra. Frames are matched by Step; paths read
// "step 17 / track ferry / mean[2]".
func Frames(p Profile, want, got []mot.Frame, names map[string]string) Result {
	var res Result
	gotByStep := map[int]mot.Frame{}
	for _, f := range got {
		gotByStep[f.Step] = f
	}
	seen := map[int]bool{}
	for _, wf := range want {
		seen[wf.Step] = true
		gf, ok := gotByStep[wf.Step]
		if !ok {
			res.Absent(fmt.Sprintf("step %d", wf.Step), Missing)
			continue
		}
		byRef := map[string]mot.Estimate{}
		for _, e := range gf.Tracks {
			if ref, ok := names[e.Track]; ok {
				if _, taken := byRef[ref]; !taken {
					byRef[ref] = e
				}
			}
		}
		wantNames := map[string]bool{}
		for _, w := range wf.Tracks {
			wantNames[w.Track] = true
			base := fmt.Sprintf("step %d / track %s", wf.Step, w.Track)
			g, ok := byRef[w.Track]
			if !ok {
				res.Absent(base, Missing)
				continue
			}
			res.Floats(base+" / mean", p.Mean, w.Mean, g.Mean)
			if w.HasDetection && g.HasDetection && w.Detection != g.Detection {
				res.Diffs = append(res.Diffs, Diff{Kind: Association, Path: base + " / detection",
					Want: float64(w.Detection), Got: float64(g.Detection)})
			}
			if w.Cov.Rows > 0 && g.Cov.Rows > 0 {
				res.Mat(base+" / cov", p.Cov, w.Cov, g.Cov)
			}
		}
		for _, e := range gf.Tracks {
			ref, ok := names[e.Track]
			switch {
			case !ok:
				res.Absent(fmt.Sprintf("step %d / tracker track %s", wf.Step, e.Track), Extra)
			case !wantNames[ref]:
				res.Absent(fmt.Sprintf("step %d / track %s", wf.Step, ref), Extra)
			case byRef[ref].Track != e.Track:
				// names is not one-to-one: a second track for the same
				// reference track is not compared but reported.
				res.Absent(fmt.Sprintf("step %d / tracker track %s", wf.Step, e.Track), Extra)
			}
		}
	}
	for _, gf := range got {
		if !seen[gf.Step] {
			res.Absent(fmt.Sprintf("step %d", gf.Step), Extra)
		}
	}
	return res
}

// Metrics compares named metric values under p.Metric, in sorted name
// order; paths read "metric gospa".
func Metrics(p Profile, want, got map[string]float64) Result {
	var res Result
	names := make([]string, 0, len(want)+len(got))
	for k := range want {
		names = append(names, k)
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			names = append(names, k)
		}
	}
	sort.Strings(names)
	for _, k := range names {
		w, wok := want[k]
		g, gok := got[k]
		path := "metric " + k
		switch {
		case !gok:
			res.Absent(path, Missing)
		case !wok:
			res.Absent(path, Extra)
		default:
			res.Float(path, p.Metric, w, g)
		}
	}
	return res
}
