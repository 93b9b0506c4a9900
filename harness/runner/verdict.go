package runner

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"

	"trackgate/harness/compare"
	"trackgate/harness/mot"
	"trackgate/harness/result"
	"trackgate/reference/kalman"
	"trackgate/reference/tracker"
)

// builder collects the outcome of one check.
type builder struct {
	c     result.Check
	max   int
	notes []string
}

func newBuilder(name string, max int) *builder {
	return &builder{c: result.Check{Name: name, Status: result.Pass}, max: max}
}

// fail records a regression; the first one is the check's verdict.
func (b *builder) fail(d result.Divergence) {
	if b.c.First == nil {
		b.c.First = &d
	}
	b.c.Status = result.Worst(b.c.Status, result.Fail)
}

// tie records a changed association the reference could not tell apart.
func (b *builder) tie(d result.Divergence) {
	b.c.Ties = append(b.c.Ties, d)
	b.c.Status = result.Worst(b.c.Status, result.Tie)
}

// diffs adds value differences, keeping at most b.max.
func (b *builder) diffs(ds []compare.Diff) {
	for _, d := range ds {
		if len(b.c.Diffs) >= b.max {
			b.c.Truncated++
			continue
		}
		b.c.Diffs = append(b.c.Diffs, diffOf(d))
	}
}

func (b *builder) done(summary string) result.Check {
	var parts []string
	if summary != "" {
		parts = append(parts, summary)
	}
	parts = append(parts, b.notes...)
	b.c.Message = strings.Join(parts, "; ")
	return b.c
}

// diffOf converts a comparison difference for the result.
func diffOf(d compare.Diff) result.Diff {
	out := result.Diff{Path: d.Path, Want: d.Want, Got: d.Got, Excess: d.Excess}
	switch d.Kind {
	case compare.Value:
		out.Tolerance = d.Rule.String()
	case compare.Association:
		out.Tolerance = "same detection"
	default:
		out.Tolerance = d.Kind.String()
	}
	return out
}

// describe says in one phrase what the worst value difference was.
func describe(d compare.Diff) string {
	switch d.Kind {
	case compare.Value:
		return fmt.Sprintf("%s: want %g, got %g (|error| %.3g exceeds %s by %.3g)", d.Path, d.Want, d.Got, d.Err, d.Rule, d.Excess)
	case compare.Shape:
		return fmt.Sprintf("%s: size %g, want %g", d.Path, d.Got, d.Want)
	}
	return d.String()
}

// view is one step of a tracker's frame seen from the objects the
// reference tracks at that step.
type view struct {
	byObj map[string]int // object → index of its (first) track in the frame
	extra []string       // tracks that stand for no live object, in frame order
}

func newView(d *tracker.Detail, f mot.Frame, names map[string]string) view {
	live := make(map[string]bool, len(d.Objects))
	for _, od := range d.Objects {
		live[od.Object] = true
	}
	v := view{byObj: map[string]int{}}
	for i, t := range f.Tracks {
		o, ok := names[t.Track]
		if !ok || !live[o] {
			v.extra = append(v.extra, t.Track)
			continue
		}
		if _, dup := v.byObj[o]; dup {
			v.extra = append(v.extra, t.Track)
			continue
		}
		v.byObj[o] = i
	}
	return v
}

// isTie reports whether a changed association at a step with this margin
// is a tie: the margin is at most the ambiguity threshold (so an exact tie
// is always one). A NaN margin is never a tie.
func isTie(margin, threshold float64) bool { return margin <= threshold }

// hypothesisProb returns the probability of the most probable listed
// hypothesis of d that agrees with every association the tracker reported
// (assoc per row; −2 for a row the tracker said nothing about), or nil
// when none of the k best does.
func hypothesisProb(d *tracker.Detail, assoc []int) *float64 {
	for _, h := range d.Hypotheses {
		ok := true
		for row, a := range assoc {
			if a != -2 && h.Assoc[row] != a {
				ok = false
				break
			}
		}
		if ok {
			p := h.Prob
			return &p
		}
	}
	return nil
}

// trackerAssoc lists, per row of d, the detection the tracker's track for
// that object was updated with, or −2.
func trackerAssoc(d *tracker.Detail, f mot.Frame, v view, reports bool) []int {
	out := make([]int, len(d.Objects))
	for row, od := range d.Objects {
		out[row] = -2
		if i, ok := v.byObj[od.Object]; ok && reports && f.Tracks[i].HasDetection {
			out[row] = f.Tracks[i].Detection
		}
	}
	return out
}

// part is the share of a changed association that falls in one cluster of
// the reference's step: the cluster's index in Detail.PerCluster (−1 when
// the step carries no per-cluster structure and the whole scan stands for
// one cluster), its margin and the changed objects in it.
type part struct {
	cluster int
	margin  float64
	objects []string
}

// clusterParts splits the objects objs of step d by the reference's
// cluster they belong to, in order of first appearance in objs. When d
// has no per-cluster structure (a Detail built without it), or an object
// is not live in d, it returns one part with the scan's margin, which is
// the smallest of the cluster margins and so the old, scan-wide judgement.
func clusterParts(d *tracker.Detail, objs []string) []part {
	whole := []part{{cluster: -1, margin: d.Margin, objects: objs}}
	if len(d.PerCluster) == 0 {
		return whole
	}
	row := make(map[string]int, len(d.Objects))
	for i, od := range d.Objects {
		row[od.Object] = i
	}
	var out []part
	at := map[int]int{} // cluster → index in out
	for _, o := range objs {
		i, ok := row[o]
		if !ok {
			return whole
		}
		c := d.Objects[i].Cluster
		if c < 0 || c >= len(d.PerCluster) || !slices.Contains(d.PerCluster[c].Rows, i) {
			return whole
		}
		q, seen := at[c]
		if !seen {
			q = len(out)
			at[c] = q
			out = append(out, part{cluster: c, margin: d.PerCluster[c].Margin})
		}
		out[q].objects = append(out[q].objects, o)
	}
	return out
}

// splitTied sorts the parts of a changed association into those whose
// cluster margin is within the ambiguity threshold (ties) and the clear
// ones (regressions).
func splitTied(parts []part, threshold float64) (tied, clear []part) {
	for _, p := range parts {
		if isTie(p.margin, threshold) {
			tied = append(tied, p)
		} else {
			clear = append(clear, p)
		}
	}
	return tied, clear
}

// partsTied reports whether every cluster that holds one of objs has a
// margin within the threshold.
func partsTied(d *tracker.Detail, objs []string, threshold float64) bool {
	_, clear := splitTied(clusterParts(d, objs), threshold)
	return len(clear) == 0
}

// clusterProb returns the probability the reference gives the tracker's
// choice in the clusters of parts: the product over them of the cluster
// posterior of the most probable listed cluster hypothesis that agrees
// with every association the tracker reported for the cluster's objects
// (assoc per row of d; −2 for a row the tracker said nothing about). The
// posterior factorises over clusters (package tracker, "Clusters"), so the
// product is the reference's probability of the tracker's choice in those
// clusters whatever happens elsewhere. It is nil when one of them does not
// list such a hypothesis. Without per-cluster structure (cluster −1) it is
// the scan-level hypothesisProb.
func clusterProb(d *tracker.Detail, parts []part, assoc []int) *float64 {
	p := 1.0
	for _, pt := range parts {
		if pt.cluster < 0 {
			return hypothesisProb(d, assoc)
		}
		cd := &d.PerCluster[pt.cluster]
		found := false
		for _, h := range cd.Hypotheses {
			if len(h.Assoc) == len(cd.Rows) && agreesWith(cd.Rows, h.Assoc, assoc) {
				p *= h.Prob
				found = true
				break
			}
		}
		if !found {
			return nil
		}
	}
	return &p
}

// mergedMargin is the margin that stands for the parts of one changed
// association: the largest of their cluster margins when they are tied
// (each is at most that, so all are within the threshold when it is) and
// the smallest when they are clear (each is at least that).
func mergedMargin(parts []part, tied bool) float64 {
	m := parts[0].margin
	for _, p := range parts[1:] {
		if tied {
			m = math.Max(m, p.margin)
		} else {
			m = math.Min(m, p.margin)
		}
	}
	return m
}

// agreesWith reports whether the hypothesis association h (one entry per
// row of rows) agrees with every association the tracker reported (assoc
// per row of the step; −2 for a row the tracker said nothing about).
func agreesWith(rows, h, assoc []int) bool {
	for a, row := range rows {
		if row >= len(assoc) || a >= len(h) || assoc[row] != -2 && h[a] != assoc[row] {
			return false
		}
	}
	return true
}

// assocDivergence describes the share parts of a changed association at
// step k (all in clear clusters, or all in tied ones). The divergence's
// margin is the largest of the parts' cluster margins when they are tied
// (each is at most that) and the smallest when they are clear (each is at
// least that).
func assocDivergence(k int, d *tracker.Detail, f mot.Frame, v view, parts []part, tied, reports bool, what string) result.Divergence {
	var changed []string
	for _, p := range parts {
		changed = append(changed, p.objects...)
	}
	div := result.Divergence{Step: k, Kind: "association", Objects: changed}
	var msgs []string
	for _, o := range changed {
		got := f.Tracks[v.byObj[o]].Detection
		want := mot.NoDetection
		for _, od := range d.Objects {
			if od.Object == o {
				want = od.Detection
			}
		}
		msgs = append(msgs, fmt.Sprintf("object %s: %s chose %s, the tracker %s", o, what, detName(want), detName(got)))
	}
	msg := strings.Join(msgs, "; ")
	m := mergedMargin(parts, tied)
	if parts[0].cluster < 0 {
		if math.IsInf(m, 1) {
			msg += "; the reference had a single hypothesis (margin ∞)"
		} else {
			msg += fmt.Sprintf("; margin %.4g", m)
		}
	} else {
		var cs []string
		for _, p := range parts {
			if math.IsInf(p.margin, 1) {
				cs = append(cs, fmt.Sprintf("∞ in the cluster of %s (a single hypothesis)", strings.Join(p.objects, ", ")))
			} else {
				cs = append(cs, fmt.Sprintf("%.4g in the cluster of %s", p.margin, strings.Join(p.objects, ", ")))
			}
		}
		msg += "; margin " + strings.Join(cs, ", ")
		if d.Margin < m && !tied {
			msg += fmt.Sprintf(" (the scan's smallest margin, %.4g, is in another cluster and does not excuse this one)", d.Margin)
		}
	}
	if !math.IsInf(m, 1) {
		div.Margin = &m
	}
	if p := clusterProb(d, parts, trackerAssoc(d, f, v, reports)); p != nil {
		div.Probability = p
		msg += fmt.Sprintf("; the reference gives the tracker's choice probability %.4g", *p)
	} else {
		msg += "; the tracker's choice is not among the reference's k best"
	}
	div.Message = msg
	return div
}

// judgeChange records a changed association of the objects changed at step
// k: the share in clusters whose own margin is within the threshold is a
// tie, the share in clear clusters a regression naming only their objects.
// It returns the objects recorded as tied.
func judgeChange(b *builder, k int, d *tracker.Detail, f mot.Frame, v view, changed []string, threshold float64, what string) []string {
	tied, clear := splitTied(clusterParts(d, changed), threshold)
	var out []string
	if len(clear) > 0 {
		b.fail(assocDivergence(k, d, f, v, clear, false, true, what))
	}
	if len(tied) > 0 {
		b.tie(assocDivergence(k, d, f, v, tied, true, true, what))
		for _, p := range tied {
			out = append(out, p.objects...)
		}
	}
	return out
}

// ambiguous returns the rows of d whose association differs between the
// best hypothesis of their cluster and another listed one within the
// threshold of it: the objects a tracker that does not report
// associations may rightly have resolved otherwise. Without per-cluster
// structure it compares the scan's two best hypotheses when the scan's
// margin is within the threshold.
func ambiguous(d *tracker.Detail, threshold float64) []int {
	var rows []int
	if len(d.PerCluster) == 0 {
		if isTie(d.Margin, threshold) && len(d.Hypotheses) > 1 {
			for row := range d.Objects {
				if d.Hypotheses[0].Assoc[row] != d.Hypotheses[1].Assoc[row] {
					rows = append(rows, row)
				}
			}
		}
		return rows
	}
	for _, cd := range d.PerCluster {
		if len(cd.Hypotheses) < 2 || !isTie(cd.Margin, threshold) {
			continue
		}
		best := cd.Hypotheses[0]
		for a, row := range cd.Rows {
			for _, h := range cd.Hypotheses[1:] {
				if isTie(h.Cost-best.Cost, threshold) && h.Assoc[a] != best.Assoc[a] {
					rows = append(rows, row)
					break
				}
			}
		}
	}
	slices.Sort(rows)
	return rows
}

func detName(id int) string {
	if id == mot.NoDetection {
		return "no detection"
	}
	return fmt.Sprintf("detection %d", id)
}

// compareEstimate compares a tracker estimate with the expected mean and
// covariance under p; the path starts "step k / track T".
func compareEstimate(p compare.Profile, k int, est mot.Estimate, o string, mean []float64, cov mot.Mat) compare.Result {
	withCov := est.Cov.Rows > 0 && cov.Rows > 0
	// Fast path: when every value agrees there is no path to name, and
	// formatting the paths was the harness's largest cost.
	if agreeAll(p.Mean, mean, est.Mean) && (!withCov || est.Cov.Rows == cov.Rows && est.Cov.Cols == cov.Cols && agreeAll(p.Cov, cov.Data, est.Cov.Data)) {
		n := len(mean)
		if withCov {
			n += len(cov.Data)
		}
		return compare.Result{Compared: n}
	}
	var r compare.Result
	path := fmt.Sprintf("step %d / track %s (object %s) / ", k, est.Track, o)
	r.Floats(path+"mean", p.Mean, mean, est.Mean)
	if withCov {
		r.Mat(path+"cov", p.Cov, cov, est.Cov)
	}
	return r
}

// agreeAll reports whether want and got have the same length and agree
// element by element under rule.
func agreeAll(rule compare.Rule, want, got []float64) bool {
	if len(want) != len(got) {
		return false
	}
	for i := range want {
		if !rule.Agree(want[i], got[i]) {
			return false
		}
	}
	return true
}

// estimateDivergence turns the differences of one estimate into a
// divergence naming the worst of them.
func estimateDivergence(k int, o string, r compare.Result, what string) result.Divergence {
	worst := r.Diffs[0]
	if w := r.Worst(1); len(w) > 0 {
		worst = w[0]
	}
	return result.Divergence{Step: k, Kind: "estimate", Objects: []string{o},
		Message: fmt.Sprintf("%s: %d value(s) beyond tolerance, worst %s", what, len(r.Diffs), describe(worst))}
}

// entangled returns the live objects of step d, not yet stopped, that
// share a cluster with a stopped object, each with the stopped objects of
// its cluster (sorted). Two objects are in one cluster when they are
// joined by a chain of objects each sharing a detection with the next,
// where an object's detections are those inside its gate in the
// reference's cost matrix and the one the tracker's track for it reported.
// The gate of a stopped object in the tracker's own run is not known (its
// state is no longer the reference's), so the detection the tracker gave
// it stands in for the part of that gate the reference's misses.
//
// These are the clusters of package tracker (connected components of the
// gating graph), widened by the reported detections: an object outside
// every such cluster faces the same association problem as in the
// reference's run, so the reference's decision binds it.
//
// References:
//   - Y. Bar-Shalom, P. K. Willett, X. Tian, "Tracking and Data Fusion: A
//     Handbook of Algorithms", YBS Publishing, 2011 (validation gate and
//     clustering of tracks that share measurements; from memory).
func entangled(d *tracker.Detail, f mot.Frame, v view, stopped map[string]int) map[string][]string {
	if len(stopped) == 0 {
		return nil
	}
	parent := make([]int, len(d.Objects))
	row := make(map[string]int, len(d.Objects))
	for i, od := range d.Objects {
		parent[i] = i
		row[od.Object] = i
	}
	var root func(int) int
	root = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	owner := map[int]int{} // detection → first row that holds it
	join := func(i, det int) {
		if det == mot.NoDetection {
			return
		}
		if o, ok := owner[det]; ok {
			parent[root(i)] = root(o)
			return
		}
		owner[det] = i
	}
	for ci, obj := range d.Costs.Objects {
		i, ok := row[obj]
		if !ok || ci >= len(d.Costs.Gated) {
			continue
		}
		for _, e := range d.Costs.Gated[ci] {
			if e.Col >= 0 && e.Col < len(d.Costs.Detections) {
				join(i, d.Costs.Detections[e.Col])
			}
		}
	}
	for i, od := range d.Objects {
		if t, ok := v.byObj[od.Object]; ok && f.Tracks[t].HasDetection {
			join(i, f.Tracks[t].Detection)
		}
	}
	held := map[int][]string{} // root → stopped objects in the cluster
	for i, od := range d.Objects {
		if _, st := stopped[od.Object]; st {
			held[root(i)] = append(held[root(i)], od.Object)
		}
	}
	out := map[string][]string{}
	for i, od := range d.Objects {
		if _, st := stopped[od.Object]; st {
			continue
		}
		if h := held[root(i)]; len(h) > 0 {
			out[od.Object] = slices.Sorted(slices.Values(h))
		}
	}
	return out
}

// tangleNote says why changes of the objects objs are not judged here.
func tangleNote(objs []string, tangled map[string][]string, stopped map[string]int) string {
	var with []string
	seen := map[string]bool{}
	for _, o := range objs {
		for _, s := range tangled[o] {
			if !seen[s] {
				seen[s] = true
				with = append(with, fmt.Sprintf("%s (since step %d)", s, stopped[s]))
			}
		}
	}
	sort.Strings(with)
	return "not a regression of this check: the cluster holds objects no longer compared, " + strings.Join(with, ", ") +
		", whose states may rightly differ from the reference's run, so the reference's margin does not describe the tracker's choice (the conformance check, for a tracker that reports covariances, judges it from the tracker's own state)"
}

// checkReference compares the whole run with the reference's own run.
//
// Where the tracker departs from the reference at a tie it is followed
// rather than dropped: the reference is re-run from that step with the
// tracker's hypothesis forced in the tied clusters (see branch), and every
// later step is compared with that branch.
func (s *settings) checkReference(j *job) result.Check {
	b := newBuilder("reference", s.maxDiffs)
	ready := j.res.Tracker
	stopped := map[string]int{}
	var stoppedOrder []string
	stop := func(o string, k int) {
		if _, ok := stopped[o]; !ok {
			stopped[o] = k
			stoppedOrder = append(stoppedOrder, o)
		}
	}
	tieAt := func(o string, k int) {
		if _, ok := j.ties[o]; !ok {
			j.ties[o] = k
		}
	}
	j.ties = map[string]int{}
	br := newBranch(j, s.K)
	rj := &refJudgement{steps: make([]judgedStep, len(j.res.Frames))}
	defer recordJudgement(j, rj)
	for k, f := range j.res.Frames {
		d := &j.ex.Steps[k]
		js := &rj.steps[k]
		js.label = "same"
		if br.on {
			bd, err := br.next(k)
			if err != nil {
				// Back on the reference's own run; what was followed is
				// no longer compared.
				b.notes = append(b.notes, fmt.Sprintf("the reference's branch could not be continued at step %d: %v", k, err))
				br.on, br.prev = false, nil
				for _, o := range br.objs {
					stop(o, k)
				}
			} else {
				d = bd
			}
		}
		v := newView(d, f, j.names)
		for _, od := range d.Objects {
			if _, ok := v.byObj[od.Object]; !ok {
				b.fail(result.Divergence{Step: k, Kind: "track-count", Objects: []string{od.Object},
					Message: fmt.Sprintf("object %s is alive but no track of the tracker stands for it", od.Object)})
			}
		}
		for _, t := range v.extra {
			b.fail(result.Divergence{Step: k, Kind: "track-count",
				Message: fmt.Sprintf("track %s stands for no live object (or for one another track already stands for)", t)})
		}
		// Objects whose cluster holds an object already stopped: their
		// association no longer has to be the reference's.
		tangled := entangled(d, f, v, stopped)
		force := map[string]int{}
		var followed []string
		if ready.Association {
			js.judge(d, f, v, stopped, j.ties, br.on, k)
			var changed, loose []string
			for _, od := range d.Objects {
				i, ok := v.byObj[od.Object]
				if _, st := stopped[od.Object]; !ok || st || !f.Tracks[i].HasDetection {
					continue
				}
				if f.Tracks[i].Detection != od.Detection {
					if _, t := tangled[od.Object]; t {
						loose = append(loose, od.Object)
					} else {
						changed = append(changed, od.Object)
					}
				}
			}
			if len(loose) > 0 {
				lp := clusterParts(d, loose)
				div := assocDivergence(k, d, f, v, lp, true, true, "the reference")
				div.Message += "; " + tangleNote(loose, tangled, stopped)
				b.tie(div)
				js.decide(lp, true)
				for _, o := range loose {
					tieAt(o, k)
					stop(o, k)
				}
			}
			if len(changed) > 0 {
				tied, clear := splitTied(clusterParts(d, changed), j.sc.tie)
				// A tied cluster is followed down the tracker's branch
				// when its choice is a listed hypothesis within the
				// margin of the cluster's best; otherwise the tie rule
				// does not apply and the change is a regression.
				var follow, unfollowable []part
				for _, p := range tied {
					if choice, ok := tiedChoice(d, p, trackerAssoc(d, f, v, true), j.sc.tie); ok {
						follow = append(follow, p)
						forceCluster(force, choice)
					} else {
						unfollowable = append(unfollowable, p)
					}
				}
				if len(clear) > 0 {
					b.fail(assocDivergence(k, d, f, v, clear, false, true, "the reference"))
					js.decide(clear, false)
				}
				if len(unfollowable) > 0 {
					js.decide(unfollowable, false)
					div := assocDivergence(k, d, f, v, unfollowable, true, true, "the reference")
					div.Message += fmt.Sprintf("; the cluster's margin is within the tie margin %g, but the tracker's choice is not a hypothesis of the reference's k best within it, so the tie rule does not apply", j.sc.tie)
					b.fail(div)
				}
				for _, o := range changed {
					stop(o, k)
				}
				if len(follow) > 0 {
					b.tie(assocDivergence(k, d, f, v, follow, true, true, "the reference"))
					js.decide(follow, true)
					for _, p := range follow {
						for _, o := range p.objects {
							tieAt(o, k)
							followed = append(followed, o)
						}
					}
				}
			}
		}
		if !ready.Association {
			// The tracker does not say which hypothesis it took: in each
			// ambiguous cluster the branch followed is the hypothesis
			// within the threshold whose posterior means are nearest the
			// tracker's (nearestHypothesis).
			for _, p := range ambiguousParts(d, j.sc.tie) {
				if !br.ok || p.cluster < 0 {
					for _, o := range p.objects {
						stop(o, k)
						tieAt(o, k)
					}
					continue
				}
				rank, dist := nearestHypothesis(br.filt, d, p, br.scans[k], f, v, stopped, j.sc.tie)
				if rank <= 0 {
					continue
				}
				cd := &d.PerCluster[p.cluster]
				h := cd.Hypotheses[rank]
				forceCluster(force, assignOf(d, cd.Rows, h.Assoc))
				var moved []string
				for a, row := range cd.Rows {
					if h.Assoc[a] != cd.Hypotheses[0].Assoc[a] {
						o := d.Objects[row].Object
						moved = append(moved, o)
						tieAt(o, k)
						if _, st := stopped[o]; !st {
							followed = append(followed, o)
						}
					}
				}
				pr, m := h.Prob, cd.Margin
				b.tie(result.Divergence{Step: k, Kind: "association", Objects: moved, Probability: &pr, Margin: &m,
					Message: fmt.Sprintf("the tracker's estimates of %s are nearest the reference's hypothesis %d of their cluster (Mahalanobis distances² summed: %.4g for it, %.4g for the best), within the tie margin of the best (margin %.4g); the reference follows it from here",
						strings.Join(moved, ", "), rank+1, dist[rank], dist[0], cd.Margin)})
			}
		}
		if len(force) > 0 && br.ok {
			bd, err := br.fork(k, d, force)
			if err != nil {
				// Not followable after all: the old rule, no longer compared.
				b.notes = append(b.notes, fmt.Sprintf("the reference could not follow the tracker's branch at step %d: %v", k, err))
				for _, o := range followed {
					stop(o, k)
				}
			} else {
				d = bd
				for _, o := range followed {
					delete(stopped, o)
					stoppedOrder = slices.DeleteFunc(stoppedOrder, func(x string) bool { return x == o })
				}
				br.forks = append(br.forks, fmt.Sprintf("step %d (%s)", k, strings.Join(followed, ", ")))
				br.objs = append(br.objs, followed...)
			}
		} else if len(followed) > 0 {
			for _, o := range followed {
				stop(o, k)
			}
		}
		for _, od := range d.Objects {
			i, ok := v.byObj[od.Object]
			if _, st := stopped[od.Object]; !ok || st {
				continue
			}
			r := compareEstimate(j.sc.profile, k, f.Tracks[i], od.Object, od.Mean, od.Cov)
			if r.OK() {
				continue
			}
			if _, t := tangled[od.Object]; t && !ready.Association {
				// It may have taken another detection, which the tracker
				// does not say.
				div := estimateDivergence(k, od.Object, r, "estimate differs from the reference's run")
				div.Message += "; " + tangleNote([]string{od.Object}, tangled, stopped)
				b.tie(div)
				tieAt(od.Object, k)
				stop(od.Object, k)
				continue
			}
			what := "estimate differs from the reference's run"
			if br.on {
				what = "estimate differs from the reference's run down the tracker's branch"
			}
			b.fail(estimateDivergence(k, od.Object, r, what))
			b.diffs(r.Diffs)
			stop(od.Object, k)
		}
	}
	if len(br.forks) > 0 {
		b.notes = append(b.notes, "followed down the tracker's branch after a tie it resolved otherwise, at "+strings.Join(br.forks, ", "))
	}
	if len(stoppedOrder) > 0 {
		var parts []string
		for _, o := range stoppedOrder {
			parts = append(parts, fmt.Sprintf("%s after step %d", o, stopped[o]))
		}
		b.notes = append(b.notes, "not compared after their first divergence (or a tie the reference could not follow): "+strings.Join(parts, ", "))
	}
	summary := fmt.Sprintf("%d steps compared with the reference's run", len(j.res.Frames))
	if !ready.Association {
		summary += "; the tracker does not report associations, so only estimates and track counts were compared"
	}
	return b.done(summary)
}

// branch is the reference's run down the tracker's branch. Where the
// tracker resolves a tie the other way (a hypothesis other than the
// reference's best, within the tie margin of it, in a cluster whose
// margin is within the tie margin) the reference is re-run from that
// step's predicted states with the tracker's hypothesis forced in the tied
// clusters (tracker.StepWith), and then continued step by step from its
// own posteriors (tracker.StepFrom), as its own run would have been had it
// chosen so. Once the branch's states are again bit for bit the
// reference run's it rejoins that run, so a branch costs one reference
// step per step it lasts.
type branch struct {
	// ok reports that a branch can be run: the scenario's model and the
	// run's scans are at hand.
	ok bool
	// on reports that the steps from here on are the branch's.
	on    bool
	model mot.Model
	filt  *kalman.Filter
	scans []mot.Scan
	ref   []tracker.Detail
	k     int
	prev  *tracker.Detail // the branch's step before
	forks []string        // where the branch was forked, for the check's message
	objs  []string        // the objects followed down it
}

func newBranch(j *job, k int) *branch {
	br := &branch{scans: j.run.Scans, ref: j.ex.Steps, k: k}
	if j.sc == nil || j.sc.spec == nil || len(j.run.Scans) < len(j.res.Frames) || len(j.ex.Steps) < len(j.res.Frames) {
		return br
	}
	f, err := kalman.New(j.sc.spec.Model)
	if err != nil {
		return br
	}
	br.ok, br.model, br.filt = true, j.sc.spec.Model, f
	return br
}

// fork re-runs step k from the predicted states of d (the step as the
// reference or the branch had it) with the association force, and makes
// it the branch's step k.
func (br *branch) fork(k int, d *tracker.Detail, force map[string]int) (*tracker.Detail, error) {
	states := make([]tracker.State, len(d.Objects))
	for i, od := range d.Objects {
		states[i] = tracker.State{ID: od.Object, Mean: od.PredMean, Cov: od.PredCov, Predicted: true}
	}
	nd, err := tracker.StepWith(br.model, states, br.scans[k], br.k, 0, force)
	if err != nil {
		return nil, err
	}
	br.on, br.prev = true, &nd
	return &nd, nil
}

// next returns step k of the branch, continued from its step before: the
// objects of the reference's step k, each from the branch's posterior (an
// object new at k from its prior, as in the reference's run), predicted
// over the gap between the scans. When every such state is bit for bit
// the reference run's the branch has rejoined it and next returns the
// reference's own step.
func (br *branch) next(k int) (*tracker.Detail, error) {
	ref := &br.ref[k]
	if k > 0 && sameStates(br.prev, &br.ref[k-1]) {
		br.on, br.prev = false, nil
		return ref, nil
	}
	at := make(map[string]int, len(br.prev.Objects))
	for i, od := range br.prev.Objects {
		at[od.Object] = i
	}
	gap := br.scans[k].Step - br.prev.Step
	states := make([]tracker.State, 0, len(ref.Objects))
	for _, od := range ref.Objects {
		i, ok := at[od.Object]
		if !ok {
			states = append(states, tracker.State{ID: od.Object, Mean: od.PredMean, Cov: od.PredCov, Predicted: true})
			continue
		}
		po := br.prev.Objects[i]
		x, p := slices.Clone(po.Mean), slices.Clone(po.Cov.Data)
		// StepFrom predicts once; the reference predicts once per step
		// of the gap.
		for g := 1; g < gap; g++ {
			br.filt.PredictTo(x, p, x, p)
		}
		states = append(states, tracker.State{ID: od.Object, Mean: x, Cov: mot.Mat{Rows: po.Cov.Rows, Cols: po.Cov.Cols, Data: p}})
	}
	nd, err := tracker.StepFrom(br.model, states, br.scans[k], br.k, 0)
	if err != nil {
		return nil, err
	}
	br.prev = &nd
	return &nd, nil
}

// sameStates reports whether a and b hold the same objects with the same
// posteriors, bit for bit.
func sameStates(a, b *tracker.Detail) bool {
	if len(a.Objects) != len(b.Objects) {
		return false
	}
	for i, od := range a.Objects {
		ob := b.Objects[i]
		if od.Object != ob.Object || !sameBits(od.Mean, ob.Mean) || !sameBits(od.Cov.Data, ob.Cov.Data) {
			return false
		}
	}
	return true
}

// tiedChoice returns the association, per object of the clusters of p,
// of the most probable listed hypothesis that agrees with every
// association the tracker reported (assoc per row of d; −2 for a row the
// tracker said nothing about) and whose cost is within the threshold of
// the best's; false when the reference lists none. Without per-cluster
// structure (cluster −1) the scan's hypotheses are searched and the whole
// scan is returned.
func tiedChoice(d *tracker.Detail, p part, assoc []int, threshold float64) (map[string]int, bool) {
	agrees := func(rows []int, h []int) bool { return agreesWith(rows, h, assoc) }
	if p.cluster < 0 {
		if len(d.Hypotheses) == 0 {
			return nil, false
		}
		rows := make([]int, len(d.Objects))
		for i := range rows {
			rows[i] = i
		}
		for _, h := range d.Hypotheses {
			if isTie(h.Cost-d.Hypotheses[0].Cost, threshold) && agrees(rows, h.Assoc) {
				return assignOf(d, rows, h.Assoc), true
			}
		}
		return nil, false
	}
	cd := &d.PerCluster[p.cluster]
	for _, h := range cd.Hypotheses {
		if isTie(h.Cost-cd.Hypotheses[0].Cost, threshold) && agrees(cd.Rows, h.Assoc) {
			return assignOf(d, cd.Rows, h.Assoc), true
		}
	}
	return nil, false
}

// assignOf maps the objects of rows of d to the detections of a
// hypothesis's association (one entry per row).
func assignOf(d *tracker.Detail, rows, assoc []int) map[string]int {
	out := make(map[string]int, len(rows))
	for a, row := range rows {
		out[d.Objects[row].Object] = assoc[a]
	}
	return out
}

// forceCluster adds the association of one cluster to force.
func forceCluster(force map[string]int, choice map[string]int) {
	for o, det := range choice {
		force[o] = det
	}
}

// ambiguousParts groups the ambiguous rows of d (see ambiguous) by their
// cluster.
func ambiguousParts(d *tracker.Detail, threshold float64) []part {
	rows := ambiguous(d, threshold)
	if len(rows) == 0 {
		return nil
	}
	objs := make([]string, len(rows))
	for i, row := range rows {
		objs[i] = d.Objects[row].Object
	}
	return clusterParts(d, objs)
}

// nearestHypothesis returns the rank, in the cluster of p, of the
// hypothesis within the threshold of the cluster's best whose posterior
// means are nearest the tracker's estimates, and the distance of each
// listed hypothesis (+Inf beyond the threshold). The distance of a
// hypothesis is the sum over the cluster's objects the tracker has a track
// for (and that are still compared) of the squared Mahalanobis distance
// (x̂ − x_h)ᵀ P_h⁻¹ (x̂ − x_h) between the tracker's mean x̂ and the
// object's posterior N(x_h, P_h) under that hypothesis (the Kalman update
// of its prediction with the hypothesis's detection, or the prediction on
// a miss). The best hypothesis wins equal distances, and a lower rank a
// higher one. It is −1 when the part has no per-cluster record.
//
// References:
//   - P. C. Mahalanobis, "On the generalized distance in statistics",
//     Proceedings of the National Institute of Sciences of India 2(1):49–55,
//     1936 (the distance).
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with
//     Applications to Tracking and Navigation", Wiley, 2001, §5.2 (the
//     Kalman update; section from memory).
func nearestHypothesis(filt *kalman.Filter, d *tracker.Detail, p part, scan mot.Scan, f mot.Frame, v view, stopped map[string]int, threshold float64) (int, []float64) {
	if p.cluster < 0 || p.cluster >= len(d.PerCluster) {
		return -1, nil
	}
	cd := &d.PerCluster[p.cluster]
	dist := make([]float64, len(cd.Hypotheses))
	rank := -1
	for r, h := range cd.Hypotheses {
		dist[r] = math.Inf(1)
		if !isTie(h.Cost-cd.Hypotheses[0].Cost, threshold) {
			continue
		}
		sum, used := 0.0, 0
		for a, row := range cd.Rows {
			od := d.Objects[row]
			i, ok := v.byObj[od.Object]
			if _, st := stopped[od.Object]; !ok || st {
				continue
			}
			mean, cov, err := updateWith(filt, od, h.Assoc[a], scan)
			if err != nil {
				sum = math.Inf(1)
				break
			}
			sum += mahalanobis2(f.Tracks[i].Mean, mean, cov)
			used++
		}
		if used == 0 {
			continue
		}
		dist[r] = sum
		if rank < 0 || sum < dist[rank] {
			rank = r
		}
	}
	return rank, dist
}

// mahalanobis2 returns (x − m)ᵀ P⁻¹ (x − m), +Inf when the lengths differ
// or P is not positive definite.
func mahalanobis2(x, m []float64, p mot.Mat) float64 {
	n := len(m)
	if len(x) != n || p.Rows != n || p.Cols != n || len(p.Data) != n*n {
		return math.Inf(1)
	}
	var ch mat.Cholesky
	if !ch.Factorize(mat.NewSymDense(n, slices.Clone(p.Data))) {
		return math.Inf(1)
	}
	r := make([]float64, n)
	for i := range r {
		r[i] = x[i] - m[i]
	}
	rv := mat.NewVecDense(n, r)
	var y mat.VecDense
	if err := ch.SolveVecTo(&y, rv); err != nil {
		return math.Inf(1)
	}
	return mat.Dot(rv, &y)
}

// checkConformance restarts the reference from the tracker's own estimates
// at every step and compares the tracker's next step with it.
func (s *settings) checkConformance(j *job) result.Check {
	b := newBuilder("conformance", s.maxDiffs)
	spec := j.sc.spec
	model := spec.Model
	filt, err := kalman.New(model)
	if err != nil {
		b.c.Status = result.Error
		return b.done(fmt.Sprintf("the scenario's model does not suit a Kalman filter: %v", err))
	}
	appear := map[string]mot.Object{}
	for _, o := range spec.Objects {
		appear[o.ID] = o.Object
	}
	n := model.StateDim
	ready := j.res.Tracker
	substituted := 0
	for k, f := range j.res.Frames {
		d := &j.ex.Steps[k]
		states := make([]tracker.State, 0, len(d.Objects))
		var pv view
		if k > 0 {
			pv = newView(&j.ex.Steps[k-1], j.res.Frames[k-1], j.names)
		}
		// same stays true while every state is the one the reference
		// itself started step k from, bit for bit: the restarted step is
		// then the reference's own step k, already computed.
		same := true
		for _, od := range d.Objects {
			obj := appear[od.Object]
			if obj.Appear == k {
				states = append(states, tracker.State{ID: od.Object, Mean: obj.Mean, Cov: obj.Cov, Predicted: true})
				continue
			}
			if i, ok := pv.byObj[od.Object]; ok && j.res.Frames[k-1].Tracks[i].Cov.Rows == n {
				t := j.res.Frames[k-1].Tracks[i]
				states = append(states, tracker.State{ID: od.Object, Mean: t.Mean, Cov: t.Cov})
				same = same && reuseReferenceStep && sameAsReference(&j.ex.Steps[k-1], od.Object, t)
				continue
			}
			// No track of the tracker for this object at k−1 (reported by
			// the reference check): restart it from the reference's own.
			for _, po := range j.ex.Steps[k-1].Objects {
				if po.Object == od.Object {
					states = append(states, tracker.State{ID: od.Object, Mean: po.Mean, Cov: po.Cov})
					substituted++
				}
			}
		}
		var dd tracker.Detail
		if same && reuseReferenceStep {
			dd = *d
		} else {
			dd, err = tracker.StepFrom(model, states, j.run.Scans[k], s.K, 0)
		}
		if err != nil {
			b.fail(result.Divergence{Step: k, Kind: "estimate",
				Message: fmt.Sprintf("the reference cannot restart from the tracker's estimates at step %d: %v", k-1, err)})
			continue
		}
		v := newView(&dd, f, j.names)
		var changed []string
		var estDivs, idDivs []result.Divergence
		// Without reported associations, an object of a tied cluster may
		// rightly follow another hypothesis within τ of the cluster's
		// best: the one whose posteriors are nearest the tracker's
		// estimates (nearestHypothesis, as the reference check picks it).
		var alt *tiedAlternative
		if !ready.Association {
			alt = newTiedAlternative(filt, &dd, j.run.Scans[k], f, v, j.sc.tie)
		}
		for _, od := range dd.Objects {
			i, ok := v.byObj[od.Object]
			if !ok {
				continue
			}
			est := f.Tracks[i]
			mean, cov := od.Mean, od.Cov
			if ready.Association && est.HasDetection && est.Detection != od.Detection {
				changed = append(changed, od.Object)
				mean, cov, err = updateWith(filt, od, est.Detection, j.run.Scans[k])
				if err != nil {
					b.fail(result.Divergence{Step: k, Kind: "estimate", Objects: []string{od.Object},
						Message: fmt.Sprintf("the Kalman update with the tracker's detection failed: %v", err)})
					continue
				}
			}
			r := compareEstimate(j.sc.profile, k, est, od.Object, mean, cov)
			if r.OK() {
				continue
			}
			if appear[od.Object].Appear == k {
				if other := startedFrom(filt, j.sc.profile, k, est, &dd, appear, od.Object, j.run.Scans[k]); other != "" {
					// Paired over the run with od.Object, but started from
					// the prior of another object appearing at this step.
					div := result.Divergence{Step: k, Kind: "identity", Objects: []string{od.Object, other},
						Message: fmt.Sprintf("track %s starts from the prior of object %s but follows object %s over the run", est.Track, other, od.Object)}
					if partsTied(&dd, div.Objects, j.sc.tie) {
						b.tie(div)
					} else {
						idDivs = append(idDivs, div)
					}
					continue
				}
			}
			if alt.agrees(j.sc.profile, k, est, od) {
				continue
			}
			estDivs = append(estDivs, estimateDivergence(k, od.Object, r, "one step from the tracker's own previous estimate, the update differs"))
			b.diffs(r.Diffs)
		}
		// An association fault is named before the estimate faults of the
		// same step.
		if len(changed) > 0 {
			judgeChange(b, k, &dd, f, v, changed, j.sc.tie, "the reference restarted from the tracker's state")
		}
		for _, div := range alt.ties(k) {
			b.tie(div)
		}
		for _, d := range append(idDivs, estDivs...) {
			b.fail(d)
		}
	}
	summary := fmt.Sprintf("%d steps restarted from the tracker's own estimates", len(j.res.Frames))
	if substituted > 0 {
		b.notes = append(b.notes, fmt.Sprintf("%d object-steps restarted from the reference's estimate because the tracker had no track for the object at the step before", substituted))
	}
	sort.Strings(b.notes)
	return b.done(summary)
}

// reuseReferenceStep lets the conformance check take the reference's own
// step where restarting it would start from the same states; tests turn it
// off to check that the shortcut changes nothing.
var reuseReferenceStep = true

// sameAsReference reports whether the tracker's estimate t of object o is,
// bit for bit, the reference's posterior for o in d.
func sameAsReference(d *tracker.Detail, o string, t mot.Estimate) bool {
	for _, od := range d.Objects {
		if od.Object == o {
			return sameBits(od.Mean, t.Mean) && od.Cov.Rows == t.Cov.Rows && sameBits(od.Cov.Data, t.Cov.Data)
		}
	}
	return false
}

func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// updateWith returns the Kalman update of od's prediction with detection
// det of scan (the prediction itself for NoDetection).
func updateWith(f *kalman.Filter, od tracker.ObjectDetail, det int, scan mot.Scan) ([]float64, mot.Mat, error) {
	if det == mot.NoDetection {
		return od.PredMean, od.PredCov, nil
	}
	var z []float64
	for _, d := range scan.Detections {
		if d.ID == det {
			z = d.Z
		}
	}
	if z == nil {
		return nil, mot.Mat{}, fmt.Errorf("detection %d is not in the scan of step %d", det, scan.Step)
	}
	n := len(od.PredMean)
	x := make([]float64, n)
	p := mot.NewMat(n, n)
	if _, err := f.Update(x, p.Data, od.PredMean, od.PredCov.Data, z); err != nil {
		return nil, mot.Mat{}, err
	}
	return x, p, nil
}

// checkIdentity matches tracks to the reference's step by step and
// reports identity switches. A switch of an object that had a tie at or
// before that step is a tie; any other is a regression.
func (s *settings) checkIdentity(j *job, opts compare.Options) result.Check {
	b := newBuilder("identity", s.maxDiffs)
	fl, err := compare.Follow(j.ex.Frames[:len(j.res.Frames)], j.res.Frames, opts)
	if err != nil {
		b.c.Status = result.Error
		return b.done(fmt.Sprintf("tracks could not be matched step by step: %v", err))
	}
	for _, sw := range fl.Switches {
		div := result.Divergence{Step: sw.Step, Kind: "identity"}
		var objs []string
		if sw.Kind == compare.TrackSwitch {
			objs = []string{sw.From, sw.To}
			div.Message = fmt.Sprintf("track %s followed object %s and now follows %s", sw.Subject, sw.From, sw.To)
		} else {
			objs = []string{sw.Subject}
			div.Message = fmt.Sprintf("object %s was followed by track %s and now by track %s", sw.Subject, sw.From, sw.To)
		}
		div.Objects = objs
		tied := false
		for _, o := range objs {
			if k, ok := j.ties[o]; ok && k <= sw.Step {
				tied = true
			}
		}
		if tied {
			div.Message += " (after a tie the tracker resolved the other way)"
			b.tie(div)
		} else {
			b.fail(div)
		}
	}
	lone := 0
	for _, l := range fl.Lone {
		if !l.Reference {
			lone++
		}
	}
	summary := fmt.Sprintf("%d identity switches", len(fl.Switches))
	if lone > 0 {
		summary += fmt.Sprintf("; %d track-steps follow no reference track within %g m", lone, opts.Cutoff)
	}
	return b.done(summary)
}

// startedFrom returns the object, other than paired, that appears at step k
// and whose prior, updated with the detection the tracker chose, gives the
// tracker's estimate within the profile; "" when there is none.
func startedFrom(f *kalman.Filter, p compare.Profile, k int, est mot.Estimate, d *tracker.Detail, objs map[string]mot.Object, paired string, scan mot.Scan) string {
	for _, od := range d.Objects {
		o := objs[od.Object]
		if od.Object == paired || o.Appear != k {
			continue
		}
		det := est.Detection
		if !est.HasDetection {
			det = od.Detection
		}
		prior := tracker.ObjectDetail{Object: od.Object, PredMean: o.Mean, PredCov: o.Cov}
		mean, cov, err := updateWith(f, prior, det, scan)
		if err != nil {
			continue
		}
		if r := compareEstimate(p, k, est, od.Object, mean, cov); r.OK() {
			return od.Object
		}
	}
	return ""
}

// refJudgement is what the reference check decided about a run's
// associations, step by step, for the checks of the same run that judge
// associations after it: the golden output check takes its decisions
// rather than the margins of the reference's own run, which no longer
// describe the tracker's situation once it took the other branch at a tie,
// and the timeline takes its labels.
type refJudgement struct {
	steps []judgedStep
}

// judgedStep is the reference check's judgement of one step.
type judgedStep struct {
	// label is "same" (no association changed), "tie" (every change was
	// a tie) or "differs" (one was a regression).
	label string
	// judged holds, per object, the decision on its association at this
	// step: a change the check judged (tie or regression), a change of an
	// object no longer compared (a tie when it had one at or before this
	// step), and, on the reference's branch, an association that agrees
	// with the branch's (a tie: the reference makes the same choice once
	// it follows the tracker). The margin is the object's cluster margin
	// in the step the check compared.
	judged map[string]assocVerdict
}

// assocVerdict is the decision on one object's association at one step.
type assocVerdict struct {
	tie    bool
	margin float64
}

// recordJudgement makes rj the reference judgement of j.
func recordJudgement(j *job, rj *refJudgement) { j.judged = rj }

// judgementOf returns the reference judgement recorded for j's frames,
// or nil when the reference check has not judged them.
func judgementOf(j *job) *refJudgement {
	if rj := j.judged; rj != nil && len(rj.steps) == len(j.res.Frames) {
		return rj
	}
	return nil
}

// set records the decision for objects and raises the step's label.
func (st *judgedStep) set(o string, tie bool, margin float64) {
	if st.judged == nil {
		st.judged = map[string]assocVerdict{}
	}
	st.judged[o] = assocVerdict{tie: tie, margin: margin}
	switch {
	case !tie:
		st.label = "differs"
	case st.label == "same":
		st.label = "tie"
	}
}

// decide records the check's decision on the changed objects of parts.
func (st *judgedStep) decide(parts []part, tie bool) {
	for _, p := range parts {
		for _, o := range p.objects {
			st.set(o, tie, p.margin)
		}
	}
}

// judge records, before the step's changes are judged, the objects the
// check does not judge as changes: those no longer compared whose
// association differs from d's (a tie when the object had one at or
// before step k, else the consequence of its regression) and, when d is
// the reference's branch, those whose association agrees with it (a tie,
// as the branch was forked at one). The label is raised only by the
// former: agreeing with the branch is no change.
func (st *judgedStep) judge(d *tracker.Detail, f mot.Frame, v view, stopped, ties map[string]int, onBranch bool, k int) {
	for _, od := range d.Objects {
		i, ok := v.byObj[od.Object]
		if !ok || !f.Tracks[i].HasDetection {
			continue
		}
		m := clusterParts(d, []string{od.Object})[0].margin
		_, gone := stopped[od.Object]
		switch {
		case gone && f.Tracks[i].Detection != od.Detection:
			t, tied := ties[od.Object]
			st.set(od.Object, tied && t <= k, m)
		case !gone && onBranch && f.Tracks[i].Detection == od.Detection:
			if st.judged == nil {
				st.judged = map[string]assocVerdict{}
			}
			st.judged[od.Object] = assocVerdict{tie: true, margin: m}
		}
	}
}

// tiedAlternative holds, for one restarted step of the conformance check
// of a tracker that does not report associations, the hypothesis of each
// ambiguous cluster (ambiguousParts) whose posterior means are nearest the
// tracker's estimates, when it is not the cluster's best, and the objects
// whose estimates it explained.
type tiedAlternative struct {
	filt  *kalman.Filter
	d     *tracker.Detail
	scan  mot.Scan
	pick  map[string]tiedPick // object → its cluster's nearest hypothesis
	order []int               // clusters in order of first use
	used  map[int][]string    // cluster → objects explained, in order
}

// tiedPick is the nearest hypothesis of an object's cluster and the
// object's detection under it.
type tiedPick struct {
	cluster, rank, det int
	dist               []float64
}

func newTiedAlternative(filt *kalman.Filter, d *tracker.Detail, scan mot.Scan, f mot.Frame, v view, threshold float64) *tiedAlternative {
	parts := ambiguousParts(d, threshold)
	if len(parts) == 0 {
		return nil
	}
	ta := &tiedAlternative{filt: filt, d: d, scan: scan, pick: map[string]tiedPick{}, used: map[int][]string{}}
	for _, p := range parts {
		rank, dist := nearestHypothesis(filt, d, p, scan, f, v, nil, threshold)
		if rank <= 0 {
			continue
		}
		cd := &d.PerCluster[p.cluster]
		for a, row := range cd.Rows {
			ta.pick[d.Objects[row].Object] = tiedPick{cluster: p.cluster, rank: rank, det: cd.Hypotheses[rank].Assoc[a], dist: dist}
		}
	}
	return ta
}

// agrees reports whether the estimate est of object od agrees, under the
// profile, with od's update under the nearest hypothesis of its cluster,
// and records it as explained by that hypothesis.
func (ta *tiedAlternative) agrees(p compare.Profile, k int, est mot.Estimate, od tracker.ObjectDetail) bool {
	if ta == nil {
		return false
	}
	pk, ok := ta.pick[od.Object]
	if !ok {
		return false
	}
	mean, cov, err := updateWith(ta.filt, od, pk.det, ta.scan)
	if err != nil {
		return false
	}
	if r := compareEstimate(p, k, est, od.Object, mean, cov); !r.OK() {
		return false
	}
	if _, seen := ta.used[pk.cluster]; !seen {
		ta.order = append(ta.order, pk.cluster)
	}
	ta.used[pk.cluster] = append(ta.used[pk.cluster], od.Object)
	return true
}

// ties returns one tie per cluster whose nearest hypothesis explained an
// estimate at step k.
func (ta *tiedAlternative) ties(k int) []result.Divergence {
	if ta == nil {
		return nil
	}
	var out []result.Divergence
	for _, c := range ta.order {
		objs := ta.used[c]
		pk := ta.pick[objs[0]]
		cd := &ta.d.PerCluster[c]
		pr, m := cd.Hypotheses[pk.rank].Prob, cd.Margin
		out = append(out, result.Divergence{Step: k, Kind: "association", Objects: objs, Probability: &pr, Margin: &m,
			Message: fmt.Sprintf("restarted from the tracker's state, the estimates of %s agree with the reference's hypothesis %d of their cluster, nearest the tracker's (Mahalanobis distances² summed: %.4g for it, %.4g for the best), within the tie margin of the best (margin %.4g), and not with the best",
				strings.Join(objs, ", "), pk.rank+1, pk.dist[pk.rank], pk.dist[0], cd.Margin)})
	}
	return out
}
