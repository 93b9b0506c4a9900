package runner

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"

	"trackgate/harness/compare"
	"trackgate/harness/golden"
	"trackgate/harness/mot"
	"trackgate/harness/result"
)

// artefact is one golden file of one run: what this run would write there
// and what a comparison with the file on disk found.
type artefact struct {
	what   string // "scan tape", "reference output", ...
	id     golden.ID
	path   string
	file   golden.File
	status golden.Status
	// harness is true for the files the tracker does not produce (tape,
	// reference output and metrics): a difference there means trackgate
	// itself changed.
	harness bool
	// found holds what the comparison found (empty when passing).
	detail string
	check  *builder
	// blessed is the file read from disk (fresh goldens only).
	blessed golden.File
	// inconsistent marks the tracker's metrics golden when it disagrees
	// with the run although the tracker's output golden agrees: the two
	// were not blessed together (see pairTracker).
	inconsistent bool
}

// pairTracker judges the tracker's metrics golden together with its
// output golden, since both are blessed as one unit: when the output
// differs (or has no fresh golden), a metrics difference is part of the
// failure; when the output agrees but the run legitimately parts from it
// after a tied association, the metrics are not compared; when the output
// agrees and nothing parts, a metrics difference means the metrics golden
// is stale or was not blessed with the output, an error.
func pairTracker(j *job, arts []*artefact) {
	out, met := trackerPair(arts)
	if met == nil || met.status != golden.Failing {
		return
	}
	switch {
	case out == nil || out.status != golden.Passing:
		// The output differs from its golden, or there is no fresh
		// output golden to hold the metrics against: the metrics
		// difference is a failure of its own.
	case j.partedFromGolden:
		met.status = golden.Passing
		met.detail = ""
		met.check = newBuilder("golden", met.check.max)
		met.check.notes = append(met.check.notes, "the tracker's metrics were not compared with the golden: the run parts from it after a tied association")
	default:
		met.inconsistent = true
		met.detail = fmt.Sprintf("the tracker's blessed metrics %s disagree with its blessed output, which the run reproduces: the metrics golden is stale or was not blessed with the output; bless again (%s)", met.path, met.detail)
	}
}

// trackerPair returns the tracker's output and metrics artefacts of arts
// (nil when absent).
func trackerPair(arts []*artefact) (out, met *artefact) {
	for _, a := range arts {
		switch {
		case a.id.Tracker != "" && a.id.Kind == golden.Output:
			out = a
		case a.id.Tracker != "" && a.id.Kind == golden.Metrics:
			met = a
		}
	}
	return out, met
}

// artefacts lists the golden files of job j. withTracker adds the
// tracker's output and metrics.
func (s *settings) artefacts(j *job, withTracker bool) ([]*artefact, error) {
	spec := j.sc.spec
	mk := func(what string, kind golden.Kind, trk string, proto int, harness bool) (*artefact, error) {
		id := golden.ID{Scenario: spec.Name, Tracker: trk, Run: j.index, Kind: kind}
		p, err := golden.Path(s.goldenRoot, id)
		if err != nil {
			return nil, err
		}
		h := golden.NewHeader(kind, spec.Name, spec.Hash, j.index, j.run.Seed, proto)
		h.Tracker = trk
		return &artefact{what: what, id: id, path: p, file: golden.File{Header: h}, harness: harness}, nil
	}
	var out []*artefact
	a, err := mk("scan tape", golden.Tape, "", 0, true)
	if err != nil {
		return nil, err
	}
	for k := range j.run.Scans {
		a.file.Steps = append(a.file.Steps, golden.Step{Scan: j.run.Scans[k], Truth: j.run.Truth[k]})
	}
	out = append(out, a)
	if a, err = mk("reference output", golden.Reference, "", 0, true); err != nil {
		return nil, err
	}
	a.file.Frames = j.ex.Frames
	out = append(out, a)
	if j.refSc != nil && j.refSc.err == nil {
		if a, err = mk("reference metrics", golden.Metrics, "", 0, true); err != nil {
			return nil, err
		}
		a.file.Metrics = records(j.refSc)
		out = append(out, a)
	}
	if withTracker {
		if a, err = mk("tracker output", golden.Output, s.name, j.res.Tracker.Protocol, false); err != nil {
			return nil, err
		}
		a.file.Frames = j.res.Frames
		out = append(out, a)
		if j.score != nil {
			if a, err = mk("tracker metrics", golden.Metrics, s.name, j.res.Tracker.Protocol, false); err != nil {
				return nil, err
			}
			a.file.Metrics = records(j.score)
			out = append(out, a)
		}
	}
	return out, nil
}

// records turns a run's metrics into golden metric records: the per-step
// series, then the whole-run values in name order.
func records(rs *runScore) []golden.Metric {
	var out []golden.Metric
	for k, g := range rs.metrics.GOSPA {
		out = append(out, golden.Metric{Name: MetricGOSPAStep, Step: k, Value: g})
	}
	for k, vals := range rs.nees {
		if len(vals) > 0 {
			out = append(out, golden.Metric{Name: MetricNEESStep, Step: k, Value: mean(vals)})
		}
	}
	names := make([]string, 0, len(rs.whole))
	for n := range rs.whole {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		out = append(out, golden.Metric{Name: n, Step: -1, Value: rs.whole[n]})
	}
	return out
}

// metricMap keys metric records by name ("gospa[3]" for a step value).
func metricMap(ms []golden.Metric) map[string]float64 {
	out := make(map[string]float64, len(ms))
	for _, m := range ms {
		if m.Step < 0 {
			out[m.Name] = m.Value
		} else {
			out[fmt.Sprintf("%s[%d]", m.Name, m.Step)] = m.Value
		}
	}
	return out
}

// judgeArtefact reads a's golden and compares it with what the run
// produced, setting a.status and a.check.
func (s *settings) judgeArtefact(j *job, a *artefact) {
	a.check = newBuilder("golden", s.maxDiffs)
	f, fr, err := golden.ReadFresh(a.path, j.sc.spec.Name, j.sc.spec.Hash)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		a.status = golden.Missing
		a.detail = fmt.Sprintf("no golden %s at %s", a.what, a.path)
		return
	case err != nil:
		a.status = golden.Outdated
		a.detail = fmt.Sprintf("unreadable golden %s: %v", a.what, err)
		return
	case fr != golden.Fresh:
		a.status = golden.Outdated
		a.detail = fmt.Sprintf("%s golden %s (made from another version of the scenario file than %s); bless again", strings.ToLower(fr.String()), a.path, j.sc.file)
		return
	}
	a.blessed = f
	a.status = golden.Passing
	b := a.check
	switch a.id.Kind {
	case golden.Tape:
		if msg := sameTape(f.Steps, j.run); msg != "" {
			a.status = golden.Failing
			a.detail = fmt.Sprintf("the simulator's scans differ from the golden scan tape %s: %s", a.path, msg)
		}
	case golden.Reference:
		names := map[string]string{}
		for _, fr := range f.Frames {
			for _, t := range fr.Tracks {
				names[t.Track] = t.Track
			}
		}
		r := compare.Frames(j.sc.profile, f.Frames, a.file.Frames, names)
		if !r.OK() {
			a.status = golden.Failing
			a.detail = fmt.Sprintf("the reference tracker's output differs from the golden %s: %d difference(s), first %s", a.path, len(r.Diffs), describe(r.Diffs[0]))
			b.diffs(r.Diffs)
		}
	case golden.Metrics:
		want := metricMap(f.Metrics)
		if a.id.Tracker != "" && j.blessed == nil {
			// Goldens blessed before the run values file: the golden
			// runs' values come from their metrics files.
			j.blessed = map[string]float64{}
			for _, m := range f.Metrics {
				if m.Step < 0 {
					j.blessed[m.Name] = m.Value
				}
			}
		}
		r := compare.Metrics(j.sc.profile, want, metricMap(a.file.Metrics))
		if !r.OK() {
			a.status = golden.Failing
			a.detail = fmt.Sprintf("%s differ from the golden %s: %d difference(s), first %s", a.what, a.path, len(r.Diffs), describe(r.Diffs[0]))
			b.diffs(r.Diffs)
		}
	case golden.Output:
		s.judgeOutput(j, a, f)
	}
}

// judgeOutput compares the tracker's frames with its blessed frames.
func (s *settings) judgeOutput(j *job, a *artefact, f golden.File) {
	b := a.check
	got := j.res.Frames
	names, err := alignRun(f.Frames, got, j.ex.Steps, j.sc.tie, compare.Options{Position: j.sc.pos, Cutoff: s.cutoff})
	if err != nil {
		a.status = golden.Failing
		a.detail = fmt.Sprintf("the tracker's tracks could not be paired with the golden %s: %v", a.path, err)
		return
	}
	// Associations, step by step, judged like the reference check: by the
	// margins of the reference's clusters in which the association
	// changed (clusterParts), the blessed tracks being mapped to the
	// reference's objects by their own alignment with the reference's
	// frames. After a changed association (tie or not) a track is no
	// longer compared: the two runs legitimately part there, or the first
	// divergence has been reported.
	objOf, err := alignRun(j.ex.Frames, f.Frames, j.ex.Steps, j.sc.tie, compare.Options{Position: j.sc.pos, Cutoff: s.cutoff})
	if err != nil {
		objOf = nil // judged by the scan's margin (clusterParts without objects)
	}
	want := map[int]mot.Frame{}
	for _, fr := range f.Frames {
		want[fr.Step] = fr
	}
	stopped := map[string]int{} // blessed track name → step
	rj := s.referenceJudgement(j)
	for k, fr := range got {
		wf, ok := want[fr.Step]
		if !ok {
			continue
		}
		byName := map[string]mot.Estimate{}
		for _, t := range wf.Tracks {
			byName[t.Track] = t
		}
		var changed []string
		msgs := map[string]string{}
		for _, t := range fr.Tracks {
			w, ok := byName[names[t.Track]]
			if _, st := stopped[w.Track]; !ok || st || !w.HasDetection || !t.HasDetection || w.Detection == t.Detection {
				continue
			}
			changed = append(changed, w.Track)
			msgs[w.Track] = fmt.Sprintf("track %s (blessed %s): blessed %s, now %s", t.Track, w.Track, detName(w.Detection), detName(t.Detection))
		}
		if len(changed) == 0 {
			continue
		}
		for _, c := range changed {
			stopped[c] = fr.Step
		}
		if k >= len(j.ex.Steps) {
			var all []string
			for _, c := range changed {
				all = append(all, msgs[c])
			}
			b.fail(result.Divergence{Step: fr.Step, Kind: "association", Objects: changed, Message: strings.Join(all, "; ")})
			continue
		}
		d := &j.ex.Steps[k]
		// The object each changed blessed track stands for; a track the
		// alignment left unpaired keeps its name, which clusterParts does
		// not find among the live objects, so the scan's margin judges it.
		objs := make([]string, len(changed))
		track := map[string]string{}
		for i, c := range changed {
			objs[i] = c
			if o, ok := objOf[c]; ok {
				objs[i] = o
			}
			track[objs[i]] = c
		}
		// Where the reference check judged the object at this step, its
		// decision is taken: it follows the tracker down the other
		// branch of a tie, where the margins of the reference's own run
		// no longer describe the tracker's situation. The others are
		// judged by the margins of the reference's own run.
		var rest, byRef, byRefTied []part
		var js *judgedStep
		if rj != nil {
			js = &rj.steps[k]
		}
		var unjudged []string
		for _, o := range objs {
			v, ok := assocVerdict{}, false
			if js != nil {
				v, ok = js.judged[o]
			}
			switch {
			case !ok:
				unjudged = append(unjudged, o)
			case v.tie:
				byRefTied = append(byRefTied, part{cluster: -1, margin: v.margin, objects: []string{o}})
			default:
				byRef = append(byRef, part{cluster: -1, margin: v.margin, objects: []string{o}})
			}
		}
		if len(unjudged) > 0 {
			rest = clusterParts(d, unjudged)
		}
		tied, clear := splitTied(rest, j.sc.tie)
		emit := func(ps []part, tie bool, why string) {
			if len(ps) == 0 {
				return
			}
			div := result.Divergence{Step: fr.Step, Kind: "association"}
			var all []string
			m := mergedMargin(ps, tie)
			for _, p := range ps {
				for _, o := range p.objects {
					div.Objects = append(div.Objects, o)
					all = append(all, msgs[track[o]])
				}
			}
			div.Message = strings.Join(all, "; ") + why
			if !math.IsInf(m, 0) && !math.IsNaN(m) {
				div.Margin = &m
			}
			if tie {
				b.tie(div)
			} else {
				b.fail(div)
			}
		}
		const refWhy = "; as the reference check judged it, comparing with the reference's run down the tracker's branch"
		emit(clear, false, "")
		emit(byRef, false, refWhy)
		emit(tied, true, "; the reference's margin in the cluster is within the ambiguity threshold")
		emit(byRefTied, true, refWhy)
	}
	// Values, leaving out tracks from the step they stopped being compared.
	filter := func(frames []mot.Frame, blessedName func(string) string) []mot.Frame {
		out := make([]mot.Frame, len(frames))
		for i, fr := range frames {
			out[i] = mot.Frame{Step: fr.Step}
			for _, e := range fr.Tracks {
				if k, st := stopped[blessedName(e.Track)]; st && fr.Step >= k {
					continue
				}
				e.HasDetection = false
				out[i].Tracks = append(out[i].Tracks, e)
			}
		}
		return out
	}
	r := compare.Frames(j.sc.profile, filter(f.Frames, func(n string) string { return n }),
		filter(got, func(n string) string { return names[n] }), names)
	for _, d := range r.Diffs {
		var step int
		fmt.Sscanf(d.Path, "step %d", &step)
		kind := "estimate"
		if d.Kind == compare.Missing || d.Kind == compare.Extra {
			kind = "track-count"
		}
		b.fail(result.Divergence{Step: step, Kind: kind, Message: "against the blessed output: " + describe(d)})
	}
	if len(stopped) > 0 {
		j.partedFromGolden = true
		b.notes = append(b.notes, fmt.Sprintf("%d track(s) not compared with the golden after a changed association", len(stopped)))
	}
	b.diffs(r.Diffs)
	if b.c.Status == result.Fail {
		a.status = golden.Failing
		a.detail = fmt.Sprintf("the tracker's output differs from its golden %s", a.path)
	}
}

// sameTape compares a golden tape with a simulated run bit for bit and
// says where they first differ ("" when they agree).
func sameTape(steps []golden.Step, run mot.Run) string {
	if len(steps) != len(run.Scans) {
		return fmt.Sprintf("%d steps blessed, %d simulated", len(steps), len(run.Scans))
	}
	same := func(a, b []float64) bool {
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
	for k, st := range steps {
		sc, tr := run.Scans[k], run.Truth[k]
		if st.Scan.Step != sc.Step || math.Float64bits(st.Scan.Time) != math.Float64bits(sc.Time) {
			return fmt.Sprintf("step %d: step number or time changed", k)
		}
		if len(st.Scan.Detections) != len(sc.Detections) {
			return fmt.Sprintf("step %d: %d detections blessed, %d simulated", k, len(st.Scan.Detections), len(sc.Detections))
		}
		for i, d := range st.Scan.Detections {
			if d.ID != sc.Detections[i].ID || !same(d.Z, sc.Detections[i].Z) {
				return fmt.Sprintf("step %d: detection %d changed", k, d.ID)
			}
		}
		if len(st.Truth.Objects) != len(tr.Objects) {
			return fmt.Sprintf("step %d: %d objects blessed, %d simulated", k, len(st.Truth.Objects), len(tr.Objects))
		}
		for i, o := range st.Truth.Objects {
			if o.Object != tr.Objects[i].Object || !same(o.X, tr.Objects[i].X) {
				return fmt.Sprintf("step %d: the true state of %s changed", k, o.Object)
			}
		}
		if len(st.Truth.Origins) != len(tr.Origins) {
			return fmt.Sprintf("step %d: detection origins changed", k)
		}
		for i, o := range st.Truth.Origins {
			if o != tr.Origins[i] {
				return fmt.Sprintf("step %d: the origin of detection %d changed", k, o.Detection)
			}
		}
	}
	return ""
}

// checkGolden compares run j with its golden files.
func (s *settings) checkGolden(j *job) []result.Check {
	arts, err := s.artefacts(j, true)
	if err != nil {
		return []result.Check{{Name: "golden", Status: result.Error, Message: err.Error()}}
	}
	ci := s.ci()
	out := newBuilder("golden", s.maxDiffs)
	var msgs, missing []string
	for _, a := range arts {
		s.judgeArtefact(j, a)
	}
	pairTracker(j, arts)
	for _, a := range arts {
		if a.id.Kind == golden.Output && j.res.Fault != nil && a.status == golden.Missing {
			continue
		}
		switch a.status {
		case golden.Passing:
		case golden.Missing:
			missing = append(missing, a.what)
			if ci {
				out.c.Status = result.Worst(out.c.Status, result.Fail)
			} else {
				out.c.Status = result.Worst(out.c.Status, result.Skip)
			}
		case golden.Outdated:
			out.c.Status = result.Error
			msgs = append(msgs, a.detail)
		case golden.Failing:
			switch {
			case a.harness:
				out.c.Status = result.Error
				msgs = append(msgs, a.detail+" (trackgate itself changed, not the tracker)")
			case a.inconsistent:
				out.c.Status = result.Error
				msgs = append(msgs, a.detail)
			default:
				out.c.Status = result.Worst(out.c.Status, result.Fail)
				msgs = append(msgs, a.detail)
				if p := s.leaveActual(a, ci); p != "" {
					msgs = append(msgs, "actual output left at "+p)
				}
			}
		}
		msgs = append(msgs, a.check.notes...)
		c := a.check.c
		if c.First != nil && out.c.First == nil {
			out.c.First = c.First
		}
		out.c.Ties = append(out.c.Ties, c.Ties...)
		if !a.harness {
			out.c.Status = result.Worst(out.c.Status, c.Status)
		}
		for _, d := range c.Diffs {
			if len(out.c.Diffs) < s.maxDiffs {
				out.c.Diffs = append(out.c.Diffs, d)
			} else {
				out.c.Truncated++
			}
		}
		out.c.Truncated += c.Truncated
	}
	switch vals, st, detail := s.blessedRun(j); st {
	case golden.Missing:
		if j.res.Fault != nil {
			break // nothing is blessed for a run the tracker faults on
		}
		missing = append(missing, "tracker run values")
		if ci {
			out.c.Status = result.Worst(out.c.Status, result.Fail)
		} else {
			out.c.Status = result.Worst(out.c.Status, result.Skip)
		}
	case golden.Outdated:
		out.c.Status = result.Error
		msgs = append(msgs, detail)
	case golden.Passing:
		if _, met := trackerPair(arts); met != nil && met.status == golden.Passing && met.blessed.Header.Kind == golden.Metrics {
			if r := compare.Metrics(j.sc.profile, wholeOf(met.blessed.Metrics), vals); !r.OK() {
				out.c.Status = result.Error
				msgs = append(msgs, fmt.Sprintf("the tracker's run values in %s disagree with its metrics golden %s for run %d (%d difference(s), first %s): the two were not blessed together; bless again", detail, met.path, j.index, len(r.Diffs), describe(r.Diffs[0])))
			}
		}
	}
	if len(missing) > 0 {
		m := fmt.Sprintf("no golden %s for run %d under %s", strings.Join(missing, ", "), j.index, s.goldenRoot)
		if ci {
			m += " (CI mode: a missing golden fails)"
		} else {
			m += "; run trackgate bless to create them"
		}
		msgs = append([]string{m}, msgs...)
	}
	if len(msgs) == 0 {
		msgs = append(msgs, fmt.Sprintf("%d golden files agree", len(arts)))
	}
	return []result.Check{out.done(strings.Join(msgs, "; "))}
}

// valuesPath returns the tracker's run values golden of scenario sc.
func (s *settings) valuesPath(sc *scen) (string, error) {
	return golden.Path(s.goldenRoot, golden.ID{Scenario: sc.spec.Name, Tracker: s.name, Kind: golden.RunValues})
}

// blessedRun reads the tracker's blessed whole-run values of run j from
// the run values golden of its scenario. The status is Passing with the
// values (detail is then the file's path), Missing when there is no file
// or no record of the run, Outdated when the file is stale, foreign or
// unreadable or the run's record has another seed; detail says which.
func (s *settings) blessedRun(j *job) (map[string]float64, golden.Status, string) {
	p, err := s.valuesPath(j.sc)
	if err != nil {
		return nil, golden.Outdated, err.Error()
	}
	f, err := readValues(p)
	fr := golden.Fresh
	if err == nil {
		fr = f.Header.Check(j.sc.spec.Name, j.sc.spec.Hash)
	}
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil, golden.Missing, fmt.Sprintf("no golden tracker run values at %s", p)
	case err != nil:
		return nil, golden.Outdated, fmt.Sprintf("unreadable golden tracker run values: %v", err)
	case fr != golden.Fresh:
		return nil, golden.Outdated, fmt.Sprintf("%s golden %s (made from another version of the scenario file than %s); bless again", strings.ToLower(fr.String()), p, j.sc.file)
	}
	for _, r := range f.Runs {
		if r.Run != j.index {
			continue
		}
		if r.Seed != j.run.Seed {
			return nil, golden.Outdated, fmt.Sprintf("the golden %s holds run %d with seed %d, but the run is simulated from seed %d; bless again", p, j.index, r.Seed, j.run.Seed)
		}
		return r.Values, golden.Passing, p
	}
	return nil, golden.Missing, fmt.Sprintf("the golden %s has no values for run %d", p, j.index)
}

// valuesCache keeps the run values goldens read lately, so that a check
// reads a scenario's file once rather than once per run (a file of 1000
// runs takes milliseconds to parse). An entry is used only while the file
// on disk is the same file (goldens are replaced by rename) with the same
// size and modification time.
var valuesCache struct {
	sync.Mutex
	m map[string]cachedValues
}

type cachedValues struct {
	info fs.FileInfo
	file golden.File
	err  error
}

// maxCachedValues bounds valuesCache; it is emptied when full.
const maxCachedValues = 64

// readValues reads the run values golden at path through valuesCache. The
// file returned is shared: callers must not modify it.
func readValues(path string) (golden.File, error) {
	info, err := os.Stat(path)
	if err != nil {
		return golden.File{}, err
	}
	valuesCache.Lock()
	c, ok := valuesCache.m[path]
	valuesCache.Unlock()
	if ok && os.SameFile(c.info, info) && c.info.Size() == info.Size() && c.info.ModTime().Equal(info.ModTime()) {
		return c.file, c.err
	}
	f, err := golden.ReadFile(path)
	valuesCache.Lock()
	if valuesCache.m == nil || len(valuesCache.m) >= maxCachedValues {
		valuesCache.m = map[string]cachedValues{}
	}
	valuesCache.m[path] = cachedValues{info: info, file: f, err: err}
	valuesCache.Unlock()
	return f, err
}

// runValues is what Bless would write to a scenario's run values golden
// and how that compares with the file on disk.
type runValues struct {
	path   string
	file   golden.File
	status golden.Status
}

// blessValues builds the run values golden of scenario sc from its jobs
// that ran cleanly, keeping the records of a fresh file on disk for the
// runs not run now (another shard's, a fault, a --runs override), and
// judges it: Missing, Outdated (stale, foreign or unreadable), Failing
// (a run's values differ beyond the profile's metric rule, a seed or the
// set of runs changed) or Passing. A golden run whose tracker metrics
// golden is kept (kept) keeps that golden's values, so that the two agree
// even when the run legitimately parts from its golden after a tie.
func (s *settings) blessValues(sc *scen, kept map[*job]map[string]float64) (*runValues, error) {
	p, err := s.valuesPath(sc)
	if err != nil {
		return nil, err
	}
	h := golden.NewHeader(golden.RunValues, sc.spec.Name, sc.spec.Hash, 0, 0, 0)
	h.Tracker = s.name
	now := map[int]golden.RunValue{}
	for _, j := range sc.jobs {
		if j.refErr != nil || j.res.Fault != nil || j.score == nil || j.index >= sc.spec.Runs {
			continue
		}
		if h.Protocol == 0 {
			h.Protocol = j.res.Tracker.Protocol
		}
		v := make(map[string]float64, len(j.score.whole))
		for k, x := range j.score.whole {
			v[k] = x
		}
		if kv, ok := kept[j]; ok {
			v = kv
		}
		now[j.index] = golden.RunValue{Run: j.index, Seed: j.run.Seed, Values: v}
	}
	rv := &runValues{path: p, file: golden.File{Header: h}, status: golden.Passing}
	old, fr, err := golden.ReadFresh(p, sc.spec.Name, sc.spec.Hash)
	merged := map[int]golden.RunValue{}
	switch {
	case errors.Is(err, fs.ErrNotExist):
		rv.status = golden.Missing
	case err != nil || fr != golden.Fresh:
		rv.status = golden.Outdated
	default:
		for _, r := range old.Runs {
			if r.Run >= sc.spec.Runs {
				rv.status = golden.Failing // a run the scenario no longer has
				continue
			}
			merged[r.Run] = r
			n, ok := now[r.Run]
			if !ok {
				continue
			}
			if cmp := compare.Metrics(sc.profile, r.Values, n.Values); n.Seed != r.Seed || !cmp.OK() {
				rv.status = golden.Failing
			}
		}
		for k := range now {
			if _, ok := merged[k]; !ok {
				rv.status = golden.Failing // a run without blessed values
			}
		}
	}
	for k, r := range now {
		merged[k] = r
	}
	if len(merged) == 0 {
		return nil, nil
	}
	runs := make([]int, 0, len(merged))
	for k := range merged {
		runs = append(runs, k)
	}
	sort.Ints(runs)
	for _, k := range runs {
		rv.file.Runs = append(rv.file.Runs, merged[k])
	}
	return rv, nil
}

// leaveActual writes the actual output of a failing golden for review:
// beside the golden as <golden>.actual, or under Options.Out in the golden
// layout; in CI mode only under Out; never for Explain. It returns the path
// written, or "".
func (s *settings) leaveActual(a *artefact, ci bool) string {
	if s.readOnly {
		return ""
	}
	p := a.path + ".actual"
	if s.Out != "" {
		rel, err := filepath.Rel(s.goldenRoot, a.path)
		if err != nil {
			return ""
		}
		p = filepath.Join(s.Out, rel) + ".actual"
	} else if ci {
		return ""
	}
	if err := golden.Write(p, a.file); err != nil {
		return ""
	}
	return p
}

// BlessOptions configure Bless.
type BlessOptions struct {
	Options
	// All rewrites every golden; by default only goldens that are
	// missing, stale or fail their tolerance are written, so passing
	// goldens keep their bytes.
	All bool
	// Prune removes orphaned goldens (see golden.Tree.Orphans). Orphans
	// are only looked for when the scenario list comes from the project
	// file, no shard or run override is set and every scenario loaded.
	Prune bool
	// MidWrite, when set, is called with the golden's path after the first
	// half of its bytes has reached the temporary file; tests use it to
	// interrupt a write.
	MidWrite func(path string)
}

// BlessReport says what Bless did. Paths are relative to the golden root.
type BlessReport struct {
	// Root is the golden folder.
	Root string
	// Written were rewritten because they failed their tolerance or were
	// stale; New did not exist; Unchanged agree within tolerance and kept
	// their bytes; Refused are those CI mode would have had to write.
	Written, New, Unchanged, Refused []string
	// Orphans are goldens no scenario uses any more; Pruned reports that
	// they were removed.
	Orphans []string
	Pruned  bool
	// Problems lists runs that could not be blessed (a scenario that does
	// not load, a reference failure, a tracker fault); nothing was written
	// for the tracker on those runs.
	Problems []string
	// Faulted reports that the tracker faulted on some run.
	Faulted bool
	// CI reports that CI mode forbade writing.
	CI bool
}

// ExitCode is the command's exit code for the report: 3 when the tracker
// faulted, 2 for other problems, 1 when CI mode refused to write, else 0.
func (r *BlessReport) ExitCode() int {
	switch {
	case r.Faulted:
		return 3
	case len(r.Problems) > 0:
		return 2
	case len(r.Refused) > 0:
		return 1
	}
	return 0
}

// Bless runs the tracker and the reference on every run of every scenario
// file and records their goldens: the tape, reference and tracker goldens
// of the first G runs, and the tracker's run values golden of all runs
// (see the package documentation). The tracker's output, metrics and run
// values are rewritten together when one of them must be.
func Bless(ctx context.Context, o BlessOptions) (*BlessReport, error) {
	s, err := resolve(o.Options, true)
	if err != nil {
		return nil, err
	}
	mode := golden.UpdateFailing
	if o.All {
		mode = golden.UpdateAll
	}
	pol := golden.NewPolicy(mode, s.CI, s.getenv)
	rep := &BlessReport{Root: s.goldenRoot, CI: pol.CI}
	rewritten := map[*scen]bool{}         // a tracker golden of the scenario is (re)written
	kept := map[*job]map[string]float64{} // whole-run values of kept tracker metrics goldens
	scens := s.load()
	for _, sc := range scens {
		if sc.err != nil {
			rep.Problems = append(rep.Problems, fmt.Sprintf("scenario %s: %v", sc.file, sc.err))
		}
	}
	// Every run of the scenario file is run (a --runs override adds none):
	// the tracker's whole-run values are blessed for all of them (the run
	// values golden), the other goldens for the first G.
	jobs := s.plan(scens, func(sc *scen, r int) bool { return r < sc.spec.Runs && s.Shard.Holds(sc.spec.Name, r) })
	s.parallel(len(jobs), func(i int) { s.prepareJob(jobs[i]) })
	s.drive(ctx, jobs)
	arts := make([][]*artefact, len(jobs))
	errs := make([]error, len(jobs))
	s.parallel(len(jobs), func(i int) {
		j := jobs[i]
		if j.refErr != nil {
			return
		}
		s.scoreJob(j)
		if j.index >= s.goldenRunsOf(j.sc) {
			return
		}
		clean := j.res.Fault == nil && j.score != nil
		arts[i], errs[i] = s.artefacts(j, clean)
		for _, a := range arts[i] {
			s.judgeArtefact(j, a)
		}
		pairTracker(j, arts[i])
	})
	for i, j := range jobs {
		where := fmt.Sprintf("%s run %d", j.sc.spec.Name, j.index)
		switch {
		case j.refErr != nil:
			rep.Problems = append(rep.Problems, fmt.Sprintf("%s: the reference tracker failed: %v", where, j.refErr))
			continue
		case errs[i] != nil:
			rep.Problems = append(rep.Problems, fmt.Sprintf("%s: %v", where, errs[i]))
			continue
		case j.res.Fault != nil:
			rep.Faulted = true
			rep.Problems = append(rep.Problems, fmt.Sprintf("%s: the tracker faulted, its goldens and run values were not written: %v", where, j.res.Fault))
		case j.score == nil:
			rep.Problems = append(rep.Problems, fmt.Sprintf("%s: the tracker's metrics could not be computed; its goldens were not written", where))
		}
		acts := make([]golden.Action, len(arts[i]))
		for k, a := range arts[i] {
			acts[k] = pol.Decide(a.status)
		}
		coupleTracker(arts[i], acts, pol)
		for k, a := range arts[i] {
			if acts[k] != golden.Keep && a.id.Tracker != "" {
				rewritten[j.sc] = true
			}
			if acts[k] == golden.Keep && a.id.Tracker != "" && a.id.Kind == golden.Metrics && a.blessed.Header.Kind == golden.Metrics {
				// The run's metrics golden stays: its run values record
				// must keep agreeing with it.
				kept[j] = wholeOf(a.blessed.Metrics)
			}
			rel, _ := filepath.Rel(s.goldenRoot, a.path)
			switch acts[k] {
			case golden.Keep:
				rep.Unchanged = append(rep.Unchanged, rel)
			case golden.Fail:
				rep.Refused = append(rep.Refused, rel)
			case golden.Rewrite:
				if err := writeGolden(a.path, a.file, o.MidWrite); err != nil {
					rep.Problems = append(rep.Problems, fmt.Sprintf("%s: writing %s: %v", where, a.path, err))
					continue
				}
				if a.status == golden.Missing {
					rep.New = append(rep.New, rel)
				} else {
					rep.Written = append(rep.Written, rel)
				}
			}
		}
	}
	for _, sc := range scens {
		if sc.err != nil {
			continue
		}
		rv, err := s.blessValues(sc, kept)
		if err != nil {
			rep.Problems = append(rep.Problems, fmt.Sprintf("%s: %v", sc.spec.Name, err))
			continue
		}
		if rv == nil {
			continue
		}
		act := pol.Decide(rv.status)
		if act == golden.Keep && rewritten[sc] && !sameBytes(&artefact{path: rv.path, file: rv.file}) {
			// Blessed with the tracker's other goldens, as one unit.
			act = pol.Decide(golden.Failing)
		}
		rel, _ := filepath.Rel(s.goldenRoot, rv.path)
		switch act {
		case golden.Keep:
			rep.Unchanged = append(rep.Unchanged, rel)
		case golden.Fail:
			rep.Refused = append(rep.Refused, rel)
		case golden.Rewrite:
			if err := writeGolden(rv.path, rv.file, o.MidWrite); err != nil {
				rep.Problems = append(rep.Problems, fmt.Sprintf("%s: writing %s: %v", sc.spec.Name, rv.path, err))
			} else if rv.status == golden.Missing {
				rep.New = append(rep.New, rel)
			} else {
				rep.Written = append(rep.Written, rel)
			}
		}
	}
	if s.fromConfig && s.Shard.Total == 1 && s.Runs == 0 && !anyErr(scens) {
		tree, err := golden.Scan(s.goldenRoot)
		if err != nil {
			rep.Problems = append(rep.Problems, fmt.Sprintf("listing %s: %v", s.goldenRoot, err))
			return rep, nil
		}
		inv := golden.Inventory{Runs: map[string]int{}}
		if o.Tracker == nil {
			inv.Trackers = []string{s.name}
		}
		for _, sc := range scens {
			inv.Runs[sc.spec.Name] = s.goldenRunsOf(sc)
		}
		orphans := tree.Orphans(inv)
		for _, p := range orphans {
			if rel, err := filepath.Rel(s.goldenRoot, p); err == nil && !strings.HasPrefix(rel, "..") {
				p = rel
			}
			rep.Orphans = append(rep.Orphans, p)
		}
		if o.Prune && len(orphans) > 0 && !pol.CI {
			if err := tree.Remove(s.goldenRoot, orphans); err != nil {
				rep.Problems = append(rep.Problems, fmt.Sprintf("removing orphans: %v", err))
			} else {
				rep.Pruned = true
			}
		}
	}
	return rep, nil
}

// coupleTracker makes the tracker's output and metrics goldens one unit:
// when either is to be rewritten, so is the other (or, where the policy
// forbids writing, both are refused).
func coupleTracker(arts []*artefact, acts []golden.Action, pol golden.Policy) {
	io, im := -1, -1
	for k, a := range arts {
		switch {
		case a.id.Tracker != "" && a.id.Kind == golden.Output:
			io = k
		case a.id.Tracker != "" && a.id.Kind == golden.Metrics:
			im = k
		}
	}
	if io < 0 || im < 0 {
		return
	}
	for _, pair := range [][2]int{{io, im}, {im, io}} {
		a, b := pair[0], pair[1]
		if acts[a] != golden.Keep && acts[b] == golden.Keep && !sameBytes(arts[b]) {
			acts[b] = pol.Decide(golden.Failing)
		}
	}
}

// sameBytes reports whether the golden file of a already holds exactly
// what the run would write there, so that rewriting it changes nothing.
func sameBytes(a *artefact) bool {
	want, err := golden.Marshal(a.file)
	if err != nil {
		return false
	}
	have, err := os.ReadFile(a.path)
	return err == nil && bytes.Equal(have, want)
}

func anyErr(scens []*scen) bool {
	for _, sc := range scens {
		if sc.err != nil {
			return true
		}
	}
	return false
}

// writeGolden writes f atomically to path (golden.WriteFile), calling mid,
// when set, after half of the bytes have been written.
func writeGolden(path string, f golden.File, mid func(string)) error {
	data, err := golden.Marshal(f)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	return golden.WriteFile(path, func(w io.Writer) error {
		half := len(data) / 2
		if _, err := w.Write(data[:half]); err != nil {
			return err
		}
		if mid != nil {
			if fl, ok := w.(interface{ Flush() error }); ok {
				if err := fl.Flush(); err != nil {
					return err
				}
			}
			mid(path)
		}
		_, err := w.Write(data[half:])
		return err
	})
}

// wholeOf returns the whole-run records of a metrics golden by name.
func wholeOf(ms []golden.Metric) map[string]float64 {
	out := map[string]float64{}
	for _, m := range ms {
		if m.Step < 0 {
			out[m.Name] = m.Value
		}
	}
	return out
}

// referenceJudgement returns the reference check's judgement of j's
// associations: the one it recorded when it ran on this run, else the
// reference check run now for it alone (its result is not reported), so
// that a check against the goldens only judges a changed association the
// same way. It is nil when the tracker's tracks are not paired with the
// reference's objects or it does not report associations.
func (s *settings) referenceJudgement(j *job) *refJudgement {
	if !j.res.Tracker.Association || j.names == nil || len(j.ex.Steps) < len(j.res.Frames) {
		return nil
	}
	if rj := judgementOf(j); rj != nil {
		return rj
	}
	ties := j.ties
	s.checkReference(j)
	j.ties = ties
	return judgementOf(j)
}
