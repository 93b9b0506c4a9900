package report

import (
	"fmt"
	"html/template"
	"io"
	"math"
	"strings"

	"trackgate/harness/result"
)

// HTML writes s as one self-contained HTML page (see the package
// documentation).
func HTML(w io.Writer, s *result.Suite) error {
	page := htmlPage{Suite: s, Verdict: statusWord(s.Status), StatusClass: string(s.Status), Platform: platform(s.Platform)}
	for _, sc := range s.Scenarios {
		c := countRuns(&sc)
		page.Total += c.runs
		page.Passed += c.passed
	}
	if s.Shard != nil {
		page.Shard = fmt.Sprintf("shard %d of %d (0-based)", s.Shard.Index, s.Shard.Total)
	}
	for i := range s.Scenarios {
		page.Scenarios = append(page.Scenarios, htmlScenarioOf(&s.Scenarios[i], i))
	}
	for i := range page.Scenarios {
		for j := range page.Scenarios[i].Problems {
			p := &page.Scenarios[i].Problems[j]
			for k := range p.Lines {
				p.Lines[k] = visible(p.Lines[k])
			}
			p.Title = visible(p.Title)
		}
	}
	return pageTemplate.Execute(w, page)
}

type htmlPage struct {
	Suite         *result.Suite
	Verdict       string
	StatusClass   string
	Platform      string
	Shard         string
	Passed, Total int
	Scenarios     []htmlScenario
}

type htmlScenario struct {
	Anchor      string
	Sc          *result.Scenario
	Word        string
	StatusClass string
	Passed      int
	Runs        int
	MeanGOSPA   string
	Shown       string // which run is plotted and why
	More        string // note on runs left out of Problems
	Problems    []htmlProblem
	Plane       template.HTML
	Timeline    template.HTML
	GOSPA       template.HTML
	Split       template.HTML
	NEES        template.HTML
	NIS         template.HTML
	// MeanOSPA is the scenario's mean OSPA, "–" when not recorded;
	// SplitLine describes the mean GOSPA split, NISLine the NIS summary.
	MeanOSPA  string
	SplitLine string
	NISLine   string
	// Objects is the per-object RMSE table (pooled over runs when the
	// summary has it, else the plotted run's) and ObjectsNote says which.
	Objects     []htmlObject
	ObjectsNote string
}

// htmlObject is one row of the per-object RMSE table.
type htmlObject struct {
	Object             string
	Position, Velocity string
	Steps              int
}

type htmlProblem struct {
	Title       string
	StatusClass string
	Lines       []string
	Diffs       []result.Diff
	DiffNote    string
	Stderr      string
}

func htmlScenarioOf(sc *result.Scenario, i int) htmlScenario {
	c := countRuns(sc)
	h := htmlScenario{Anchor: fmt.Sprintf("s%d", i), Sc: sc, Word: statusWord(sc.Status), StatusClass: string(sc.Status), Passed: c.passed, Runs: c.runs, MeanGOSPA: "–"}
	if g, ok := meanGOSPA(sc); ok {
		h.MeanGOSPA = num(g)
	}
	h.MeanOSPA = "–"
	if m := sc.Metrics; m != nil && len(m.OSPA) > 0 {
		h.MeanOSPA = num(m.MeanOSPA)
	}
	if m := sc.Metrics; m != nil && len(m.GOSPALocalisation) > 0 {
		h.SplitLine = fmt.Sprintf("Mean over runs of the time-averaged parts of GOSPAᵖ: localisation %s + missed %s + false %s; mean OSPA %s (same order and cut-off).",
			num(m.MeanGOSPALocalisation), num(m.MeanGOSPAMissed), num(m.MeanGOSPAFalse), h.MeanOSPA)
	}
	if m := sc.Metrics; m != nil && len(m.NIS) > 0 {
		h.NISLine = fmt.Sprintf("Mean NIS %s over every sample of every run; %s of the samples lie in the two-sided %s chi-square interval for %d degrees of freedom, and %s of the steps' averages in their band.",
			num(m.MeanNIS), percent(m.NISSamplesInBand), percent(m.NISConfidence), sc.MeasDim, percent(m.NISInBand))
	}
	runs, more := detailRuns(sc, htmlRuns)
	if more > 0 {
		h.More = moreRuns(more) + "."
	}
	for _, r := range runs {
		for ci := range r.Checks {
			ch := &r.Checks[ci]
			if ch.Status == result.Pass || ch.Status == result.Skip {
				continue
			}
			p := htmlProblem{Title: fmt.Sprintf("run %d (seed %d), %s check: %s", r.Index, r.Seed, ch.Name, statusWord(ch.Status)), StatusClass: string(ch.Status)}
			if ch.Message != "" {
				p.Lines = append(p.Lines, ch.Message)
			}
			if d := ch.First; d != nil {
				p.Lines = append(p.Lines, divergenceLine("first divergence", d))
			}
			for ti := range ch.Ties {
				p.Lines = append(p.Lines, divergenceLine("tie", &ch.Ties[ti]))
			}
			p.Diffs = worstDiffs(ch.Diffs, 8)
			for k := range p.Diffs {
				p.Diffs[k].Path, p.Diffs[k].Tolerance = visible(p.Diffs[k].Path), visible(p.Diffs[k].Tolerance)
			}
			if n := len(ch.Diffs) + ch.Truncated; n > len(p.Diffs) {
				p.DiffNote = fmt.Sprintf("the %d largest of %d differences", len(p.Diffs), n)
			}
			h.Problems = append(h.Problems, p)
		}
		if f := r.Fault; f != nil {
			p := htmlProblem{Title: fmt.Sprintf("run %d (seed %d): tracker fault %s", r.Index, r.Seed, f.Class), StatusClass: string(result.Faulted)}
			p.Lines = append(p.Lines, fmt.Sprintf("at step %d, tracker output line %d: %s", f.Step, f.Line, f.Message))
			if f.Excerpt != "" {
				p.Lines = append(p.Lines, "output: "+visible(f.Excerpt))
			}
			lines, cut := tail(f.Stderr, 12)
			if cut > 0 {
				p.Lines = append(p.Lines, fmt.Sprintf("stderr: last %d lines of %d", len(lines), len(lines)+cut))
			}
			p.Stderr = visible(strings.Join(lines, "\n"))
			h.Problems = append(h.Problems, p)
		}
	}
	for _, g := range sc.Gates {
		if g.Status == result.Pass || g.Status == result.Tie {
			continue
		}
		h.Problems = append(h.Problems, htmlProblem{Title: "gate " + g.Name + ": " + statusWord(g.Status), StatusClass: string(g.Status),
			Lines: []string{fmt.Sprintf("%s (estimate %s %s, threshold %s)", g.Message, num(g.Estimate), gateBounds(g), num(g.Threshold))}})
	}

	run := pickRun(sc)
	if run == nil {
		h.Shown = "No runs to plot."
		return h
	}
	why := "run 0"
	if !runOK(run) {
		why = "the first run that did not pass"
	}
	h.Shown = fmt.Sprintf("Plots show run %d (seed %d), %s.", run.Index, run.Seed, why)
	if run.Index != 0 && runOK(run) {
		h.Shown = fmt.Sprintf("Plots show run %d (seed %d).", run.Index, run.Seed)
	}
	marks := divergenceMarks(run)
	if run.Trace != nil {
		if len(sc.Position) >= 2 {
			h.Plane = planePlot(run.Trace, marks)
		} else {
			h.Plane = timePlot(run.Trace, marks)
		}
		h.Timeline = timelinePlot(run.Trace.Associations, marks)
	} else {
		h.Shown += " This run has no trace recorded, so only its metrics are plotted."
	}
	h.GOSPA = gospaPlot(sc, run, marks)
	h.Split = splitPlot(run, marks)
	h.NEES = neesPlot(sc, run)
	h.NIS = nisPlot(sc, run)
	objs := []result.ObjectError(nil)
	if sc.Metrics != nil && len(sc.Metrics.Objects) > 0 {
		objs = sc.Metrics.Objects
		h.ObjectsNote = fmt.Sprintf("Pooled over %d runs: RMSE² weighted by each run's covered steps.", sc.Metrics.Runs)
	} else if run.Metrics != nil && len(run.Metrics.Objects) > 0 {
		objs = run.Metrics.Objects
		h.ObjectsNote = fmt.Sprintf("Run %d only.", run.Index)
	}
	for _, o := range objs {
		h.Objects = append(h.Objects, htmlObject{Object: o.Object, Position: num(o.RMSEPosition), Velocity: num(o.RMSEVelocity), Steps: o.Steps})
	}
	return h
}

func divergenceLine(label string, d *result.Divergence) string {
	s := fmt.Sprintf("%s at step %d (%s)", label, d.Step, d.Kind)
	if len(d.Objects) > 0 {
		s += ", objects " + strings.Join(d.Objects, ", ")
	}
	if f := divergenceFacts(d); f != "" {
		s += "; " + f
	}
	return s + ": " + d.Message
}

// htmlRuns is how many runs that did not pass the page details per
// scenario.
const htmlRuns = 5

// pickRun returns the run to plot: the first that failed, faulted or
// errored, else the first tie, else run 0 (the first run listed).
func pickRun(sc *result.Scenario) *result.Run {
	if len(sc.Runs) == 0 {
		return nil
	}
	for i := range sc.Runs {
		if st := sc.Runs[i].Status; st.Rank() >= result.Fail.Rank() {
			return &sc.Runs[i]
		}
	}
	for i := range sc.Runs {
		if sc.Runs[i].Status == result.Tie {
			return &sc.Runs[i]
		}
	}
	return &sc.Runs[0]
}

// marks are the steps to highlight: the first divergence and the ties.
type marks struct {
	first     int // -1 when none
	firstKind string
	objects   []string // named in the first divergence
	ties      []int
}

// involved returns the tracks whose ids name one of the objects (equal, or
// ending in "-"+object as in "T-rib"), or all tracks when none does.
func involved(ps []result.Path, objects []string) []result.Path {
	var out []result.Path
	for _, p := range ps {
		for _, o := range objects {
			if p.ID == o || strings.HasSuffix(p.ID, "-"+o) {
				out = append(out, p)
				break
			}
		}
	}
	if len(out) == 0 {
		return ps
	}
	return out
}

func divergenceMarks(r *result.Run) marks {
	m := marks{first: -1}
	for _, c := range r.Checks {
		if c.First != nil && (m.first < 0 || c.First.Step < m.first) {
			m.first, m.firstKind, m.objects = c.First.Step, c.First.Kind, c.First.Objects
		}
		for _, t := range c.Ties {
			m.ties = append(m.ties, t.Step)
		}
	}
	if r.Fault != nil && (m.first < 0 || r.Fault.Step < m.first) {
		m.first, m.firstKind, m.objects = r.Fault.Step, "fault", nil
	}
	return m
}

// plotLimit is the largest magnitude plotted; larger values (and NaN, ±Inf)
// are left off the plots, so that ranges and pixel positions stay finite.
const plotLimit = 1e150

// finite reports whether every x can be plotted: not NaN and within
// ±plotLimit.
func finite(xs ...float64) bool {
	for _, x := range xs {
		if !(math.Abs(x) <= plotLimit) {
			return false
		}
	}
	return true
}

// bounds accumulates a data range.
type bounds struct {
	x0, x1, y0, y1 float64
	any            bool
}

// pad widens the bounds by frac of their size on every side, and by at
// least min.
func (b *bounds) pad(frac, min float64) {
	dx := math.Max(frac*(b.x1-b.x0), min)
	dy := math.Max(frac*(b.y1-b.y0), min)
	b.x0, b.x1, b.y0, b.y1 = b.x0-dx, b.x1+dx, b.y0-dy, b.y1+dy
}

func (b *bounds) add(x, y float64) {
	if !finite(x, y) {
		return
	}
	if !b.any {
		b.x0, b.x1, b.y0, b.y1, b.any = x, x, y, y, true
		return
	}
	b.x0, b.x1 = math.Min(b.x0, x), math.Max(b.x1, x)
	b.y0, b.y1 = math.Min(b.y0, y), math.Max(b.y1, y)
}

const (
	plotW   = 720.0
	planeH  = 460.0
	seriesH = 230.0
	padL    = 62.0
	padR    = 150.0 // legend
	padT    = 14.0
	padB    = 44.0
)

func open(s *svg, w, h float64, label string) {
	s.add(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 %s %s" width="%s" height="%s" role="img" aria-label="%s">`, f1(w), f1(h), f1(w), f1(h), esc(label))
}

// planePlot draws a 2-D trace: y against x, equal aspect.
func planePlot(tr *result.Trace, m marks) template.HTML {
	var b bounds
	addPath := func(ps []result.Path, ell bool) {
		for _, p := range ps {
			for _, pt := range p.Points {
				b.add(pt.X, pt.Y)
				if ell && pt.Ellipse != nil {
					if r1, _, _, ok := ellipseAxes(pt.Ellipse[0], pt.Ellipse[1], pt.Ellipse[2]); ok {
						b.add(pt.X-r1, pt.Y-r1)
						b.add(pt.X+r1, pt.Y+r1)
					}
				}
			}
		}
	}
	addPath(tr.Truth, false)
	addPath(tr.Reference, true)
	addPath(tr.Tracker, true)
	// The plot frames the objects and tracks; clutter far from them is
	// left out rather than shrinking the tracks to a corner.
	if b.any {
		b.pad(0.08, 1)
	}
	framed := b.any
	if !framed {
		for _, step := range tr.Detections {
			for _, pt := range step {
				b.add(pt.X, pt.Y)
			}
		}
	}
	s := &svg{}
	open(s, plotW, planeH, "positions in the plane")
	if !b.any {
		s.add(`<text class="empty" x="20" y="40">no positions recorded</text></svg>`)
		return template.HTML(s.b.String())
	}
	f := newFrame(padL, padT, plotW-padL-padR, planeH-padT-padB, b.x0, b.x1, b.y0, b.y1, true)
	s.axes(f, "x (m)", "y (m)")
	s.add(`<g clip-path="none">`)
	for _, step := range tr.Detections {
		for _, pt := range step {
			if finite(pt.X, pt.Y) && f.inside(pt.X, pt.Y) {
				s.add(`<circle class="det" cx="%s" cy="%s" r="2.2"/>`, f1(f.px(pt.X)), f1(f.py(pt.Y)))
			}
		}
	}
	scale := f.width / (f.x1 - f.x0)
	drawEllipses := func(ps []result.Path, class string) {
		for _, p := range ps {
			for _, pt := range p.Points {
				if pt.Ellipse == nil || !finite(pt.X, pt.Y) {
					continue
				}
				r1, r2, th, ok := ellipseAxes(pt.Ellipse[0], pt.Ellipse[1], pt.Ellipse[2])
				if !ok {
					continue
				}
				// SVG's y axis points down, so the angle changes sign.
				s.add(`<ellipse class="%s" cx="%s" cy="%s" rx="%s" ry="%s" transform="rotate(%s %s %s)"/>`, class,
					f1(f.px(pt.X)), f1(f.py(pt.Y)), f1(r1*scale), f1(r2*scale), f1(-th*180/math.Pi), f1(f.px(pt.X)), f1(f.py(pt.Y)))
			}
		}
	}
	drawEllipses(tr.Reference, "refell")
	drawEllipses(tr.Tracker, "trkell")
	drawPaths := func(ps []result.Path, class, what string) {
		for _, p := range ps {
			var xs, ys []float64
			for _, pt := range p.Points {
				if finite(pt.X, pt.Y) {
					xs, ys = append(xs, f.px(pt.X)), append(ys, f.py(pt.Y))
				}
			}
			s.polyline(class, what+" "+p.ID, xs, ys)
		}
	}
	// The reference is drawn dashed over the tracker, so both show where
	// they agree.
	drawPaths(tr.Truth, "truth", "truth")
	drawPaths(tr.Tracker, "trk", "tracker track")
	drawPaths(tr.Reference, "ref", "reference track")
	var labels []label
	for _, p := range tr.Truth {
		if n := len(p.Points); n > 0 {
			pt := p.Points[n-1]
			if finite(pt.X, pt.Y) {
				labels = append(labels, label{f.px(pt.X) + 5, f.py(pt.Y) - 5, p.ID})
			}
		}
	}
	s.labels(labels)
	ringed := false
	if m.first >= 0 {
		for _, p := range involved(tr.Tracker, m.objects) {
			for _, pt := range p.Points {
				if pt.Step == m.first && finite(pt.X, pt.Y) {
					ringed = true
					s.add(`<circle class="diverge" cx="%s" cy="%s" r="7"><title>first divergence, step %d (%s)</title></circle>`, f1(f.px(pt.X)), f1(f.py(pt.Y)), m.first, esc(m.firstKind))
				}
			}
		}
	}
	s.add(`</g>`)
	items := []legendItem{{"truth", "truth", "line"}, {"det", "detections", "dot"}, {"ref", "reference", "line"}, {"trk", "tracker", "line"}, {"refell", "2σ reference", "band"}, {"trkell", "2σ tracker", "band"}}
	if ringed {
		items = append(items, legendItem{"diverge", "first divergence", "dot"})
	}
	s.legend(plotW-padR+14, padT+10, items)
	s.add(`</svg>`)
	return template.HTML(s.b.String())
}

// timePlot draws a 1-D trace: position against step.
func timePlot(tr *result.Trace, m marks) template.HTML {
	var b bounds
	for _, ps := range [][]result.Path{tr.Truth, tr.Reference, tr.Tracker} {
		for _, p := range ps {
			for _, pt := range p.Points {
				b.add(float64(pt.Step), pt.X)
				if pt.Ellipse != nil && pt.Ellipse[0] >= 0 && finite(pt.X, pt.Ellipse[0]) {
					r := math.Sqrt(pt.Ellipse[0])
					b.add(float64(pt.Step), pt.X-r)
					b.add(float64(pt.Step), pt.X+r)
				}
			}
		}
	}
	if b.any {
		b.pad(0.08, 1)
	} else {
		for k, step := range tr.Detections {
			for _, pt := range step {
				b.add(float64(k), pt.X)
			}
		}
	}
	s := &svg{}
	open(s, plotW, planeH, "position against time")
	if !b.any {
		s.add(`<text class="empty" x="20" y="40">no positions recorded</text></svg>`)
		return template.HTML(s.b.String())
	}
	f := newFrame(padL, padT, plotW-padL-padR, planeH-padT-padB, b.x0, b.x1, b.y0, b.y1, false)
	s.axes(f, "step", "position (m)")
	for k, step := range tr.Detections {
		for _, pt := range step {
			if finite(pt.X) && f.inside(float64(k), pt.X) {
				s.add(`<circle class="det" cx="%s" cy="%s" r="2.2"/>`, f1(f.px(float64(k))), f1(f.py(pt.X)))
			}
		}
	}
	bars := func(ps []result.Path, class string, dx float64) {
		for _, p := range ps {
			for _, pt := range p.Points {
				if pt.Ellipse == nil || !(pt.Ellipse[0] >= 0) || !finite(pt.X, pt.Ellipse[0]) {
					continue
				}
				r := math.Sqrt(pt.Ellipse[0])
				x := f.px(float64(pt.Step)) + dx
				s.add(`<line class="%s" x1="%s" y1="%s" x2="%s" y2="%s"/>`, class, f1(x), f1(f.py(pt.X-r)), f1(x), f1(f.py(pt.X+r)))
			}
		}
	}
	bars(tr.Reference, "refbar", -1.5)
	bars(tr.Tracker, "trkbar", 1.5)
	lines := func(ps []result.Path, class, what string) {
		for _, p := range ps {
			var xs, ys []float64
			for _, pt := range p.Points {
				if finite(pt.X) {
					xs, ys = append(xs, f.px(float64(pt.Step))), append(ys, f.py(pt.X))
				}
			}
			s.polyline(class, what+" "+p.ID, xs, ys)
		}
	}
	lines(tr.Truth, "truth", "truth")
	lines(tr.Tracker, "trk", "tracker track")
	lines(tr.Reference, "ref", "reference track")
	var labels []label
	for _, p := range tr.Truth {
		if n := len(p.Points); n > 0 && finite(p.Points[n-1].X) {
			pt := p.Points[n-1]
			labels = append(labels, label{f.px(float64(pt.Step)) + 5, f.py(pt.X) + 4, p.ID})
		}
	}
	s.labels(labels)
	stepMarks(s, f, m)
	items := []legendItem{{"truth", "truth", "line"}, {"det", "detections", "dot"}, {"ref", "reference ±2σ", "line"}, {"trk", "tracker ±2σ", "line"}}
	s.legend(plotW-padR+14, padT+10, items)
	s.add(`</svg>`)
	return template.HTML(s.b.String())
}

// stepMarks draws vertical markers at the first divergence and the ties.
func stepMarks(s *svg, f *frame, m marks) {
	for _, t := range m.ties {
		x := f.px(float64(t))
		if x >= f.left && x <= f.left+f.width {
			s.add(`<line class="tiemark" x1="%s" y1="%s" x2="%s" y2="%s"><title>tie at step %d</title></line>`, f1(x), f1(f.top), f1(x), f1(f.top+f.height), t)
		}
	}
	if m.first >= 0 {
		x := f.px(float64(m.first))
		if x >= f.left && x <= f.left+f.width {
			s.add(`<line class="divmark" x1="%s" y1="%s" x2="%s" y2="%s"><title>first divergence at step %d (%s)</title></line>`, f1(x), f1(f.top), f1(x), f1(f.top+f.height), m.first, esc(m.firstKind))
			s.add(`<text class="marktext" x="%s" y="%s">step %d</text>`, f1(x+3), f1(f.top+11), m.first)
		}
	}
}

// timelinePlot draws one cell per step, coloured by whether the tracker's
// association agreed with the reference's.
func timelinePlot(assoc []string, m marks) template.HTML {
	s := &svg{}
	const h = 78.0
	open(s, plotW, h, "association timeline")
	if len(assoc) == 0 {
		s.add(`<text class="empty" x="20" y="30">no association record</text></svg>`)
		return template.HTML(s.b.String())
	}
	f := &frame{left: padL, top: 10, width: plotW - padL - padR, height: 24, x0: -0.5, x1: float64(len(assoc)) - 0.5, y0: 0, y1: 1}
	_, _, f.xstep = ticks(0, float64(len(assoc)-1), 8)
	w := f.width / float64(len(assoc))
	for k, a := range assoc {
		class := "same"
		switch a {
		case "tie":
			class = "tiecell"
		case "differs":
			class = "differs"
		case "same":
		default:
			class = "unknown"
		}
		s.add(`<rect class="%s" x="%s" y="%s" width="%s" height="%s"><title>step %d: %s</title></rect>`, class, f1(f.left+float64(k)*w), f1(f.top), f1(math.Max(w-0.6, 0.6)), f1(f.height), k, esc(a))
	}
	for _, v := range tickValues(0, f.x1, f.xstep) {
		s.add(`<text class="tick" x="%s" y="%s" text-anchor="middle">%s</text>`, f1(f.px(v)), f1(f.top+f.height+14), esc(tickLabel(v, f.xstep)))
	}
	for _, t := range m.ties {
		s.add(`<path class="tiemark2" d="M%s %s l5 -7 l5 7 z"><title>tie at step %d</title></path>`, f1(f.px(float64(t))-5), f1(f.top+f.height+2+7), t)
	}
	if m.first >= 0 {
		s.add(`<path class="divmark2" d="M%s %s l6 -9 l6 9 z"><title>first divergence at step %d</title></path>`, f1(f.px(float64(m.first))-6), f1(f.top+f.height+30), m.first)
	}
	s.add(`<text class="axis" x="%s" y="%s" text-anchor="middle">step</text>`, f1(f.left+f.width/2), f1(h-4))
	s.legend(plotW-padR+14, 14, []legendItem{{"same", "same as reference", "band"}, {"tiecell", "tie", "band"}, {"differs", "differs", "band"}})
	s.add(`</svg>`)
	return template.HTML(s.b.String())
}

// seriesPlot draws series over steps, with an optional band.
type series struct {
	class, label string
	ys           []float64
	// xs holds the step of each value; nil means ys[k] is at step k.
	xs []float64
}

// x returns the step of value k.
func (sr *series) x(k int) float64 {
	if sr.xs != nil {
		return sr.xs[k]
	}
	return float64(k)
}

// band is an acceptance band behind a series plot: either one pair of
// bounds for every step (lo and hi of length 1, drawn as a rectangle
// across the plot) or bounds step by step (lo[k], hi[k] for step xs[k],
// or step k when xs is nil, drawn as a stepped polygon: each step's
// bounds hold from the step −½ to +½, clipped to the plot). Steps without
// bounds (left out of xs), with bounds that are not finite, or with a
// lower bound not below the upper, are gaps in the polygon.
type band struct {
	lo, hi []float64
	xs     []float64
	label  string
}

// x returns the step of bounds k.
func (b *band) x(k int) float64 {
	if b.xs != nil {
		return b.xs[k]
	}
	return float64(k)
}

// stepped reports whether b has bounds by step.
func (b *band) stepped() bool { return len(b.lo) > 1 || len(b.hi) > 1 }

// usable reports whether the bounds of step k can be drawn.
func (b *band) usable(k int) bool {
	return k < len(b.lo) && k < len(b.hi) && (b.xs == nil || k < len(b.xs) && finite(b.xs[k])) &&
		finite(b.lo[k], b.hi[k]) && b.lo[k] < b.hi[k]
}

// path returns the SVG path data of a stepped band in frame f: one closed
// polygon per run of consecutive usable steps, its upper edge left to
// right and its lower edge back.
func (b *band) path(f *frame) string {
	var d strings.Builder
	n := min(len(b.lo), len(b.hi))
	if b.xs != nil {
		n = min(n, len(b.xs))
	}
	x := func(v float64) float64 { return f.px(math.Max(f.x0, math.Min(f.x1, v))) }
	for k := 0; k < n; {
		if !b.usable(k) {
			k++
			continue
		}
		end := k
		for end+1 < n && b.usable(end+1) && b.x(end+1) == b.x(end)+1 {
			end++
		}
		if d.Len() > 0 {
			d.WriteByte(' ')
		}
		// Each edge moves vertically only where its pixel height changes,
		// and horizontally to the end of a run of equal heights.
		y := f1(f.py(b.hi[k]))
		fmt.Fprintf(&d, "M%s %s", f1(x(b.x(k)-0.5)), y)
		for j := k; j <= end; j++ {
			if j == end || f1(f.py(b.hi[j+1])) != y {
				fmt.Fprintf(&d, " H%s", f1(x(b.x(j)+0.5)))
				if j < end {
					y = f1(f.py(b.hi[j+1]))
					fmt.Fprintf(&d, " V%s", y)
				}
			}
		}
		y = f1(f.py(b.lo[end]))
		fmt.Fprintf(&d, " V%s", y)
		for j := end; j >= k; j-- {
			if j == k || f1(f.py(b.lo[j-1])) != y {
				fmt.Fprintf(&d, " H%s", f1(x(b.x(j)-0.5)))
				if j > k {
					y = f1(f.py(b.lo[j-1]))
					fmt.Fprintf(&d, " V%s", y)
				}
			}
		}
		d.WriteString(" Z")
		k = end + 1
	}
	return d.String()
}

func seriesPlot(label, ytitle string, ss []series, bd *band, m marks) template.HTML {
	s := &svg{}
	open(s, plotW, seriesH, label)
	var b bounds
	b.add(0, 0)
	for _, sr := range ss {
		for k, y := range sr.ys {
			b.add(sr.x(k), y)
		}
	}
	if bd != nil {
		drawable := false
		for k := range bd.lo {
			if bd.usable(k) {
				b.add(bd.x(k), bd.lo[k])
				b.add(bd.x(k), bd.hi[k])
				drawable = true
			}
		}
		if !drawable {
			bd = nil
		}
	}
	if b.x1 == 0 {
		b.x1 = 1
	}
	f := newFrame(padL, padT, plotW-padL-padR, seriesH-padT-padB, b.x0, b.x1, b.y0, b.y1, false)
	s.axes(f, "step", ytitle)
	switch {
	case bd == nil:
	case bd.stepped():
		if d := bd.path(f); d != "" {
			s.add(`<path class="band" d="%s"><title>%s</title></path>`, d, esc(bd.label+" for each step's number of values"))
		}
	default:
		s.add(`<rect class="band" x="%s" y="%s" width="%s" height="%s"><title>%s</title></rect>`, f1(f.left), f1(f.py(bd.hi[0])), f1(f.width), f1(f.py(bd.lo[0])-f.py(bd.hi[0])), esc(bd.label))
	}
	stepMarks(s, f, m)
	var items []legendItem
	for _, sr := range ss {
		var xs, ys []float64
		for k, y := range sr.ys {
			if x := sr.x(k); finite(x, y) {
				xs, ys = append(xs, f.px(x)), append(ys, f.py(y))
			}
		}
		s.polyline(sr.class, sr.label, xs, ys)
		items = append(items, legendItem{sr.class, sr.label, "line"})
	}
	if bd != nil {
		items = append(items, legendItem{"band", bd.label, "band"})
	}
	s.legend(plotW-padR+14, padT+10, items)
	s.add(`</svg>`)
	return template.HTML(s.b.String())
}

func gospaPlot(sc *result.Scenario, r *result.Run, m marks) template.HTML {
	var ss []series
	if r.Metrics != nil && len(r.Metrics.GOSPA) > 0 {
		ss = append(ss, series{class: "trk", label: fmt.Sprintf("run %d", r.Index), ys: r.Metrics.GOSPA})
	}
	if sc.Metrics != nil && len(sc.Metrics.GOSPA) > 0 {
		ss = append(ss, series{class: "avg", label: fmt.Sprintf("mean of %d runs", sc.Metrics.Runs), ys: sc.Metrics.GOSPA})
	}
	if len(ss) == 0 {
		return ""
	}
	label := "GOSPA over time"
	if r.Metrics != nil && len(r.Metrics.OSPA) > 0 {
		ss = append(ss, series{class: "ospa", label: fmt.Sprintf("OSPA run %d", r.Index), ys: r.Metrics.OSPA})
		label = "GOSPA and OSPA over time"
	}
	return seriesPlot(label, "distance (m)", ss, nil, m)
}

// splitPlot draws the three parts of the run's GOSPAᵖ step by step
// (localisation, missed objects, false tracks), which add up to GOSPAᵖ.
func splitPlot(r *result.Run, m marks) template.HTML {
	rm := r.Metrics
	if rm == nil || len(rm.GOSPALocalisation) == 0 {
		return ""
	}
	ss := []series{
		{class: "loc", label: "localisation", ys: rm.GOSPALocalisation},
		{class: "miss", label: "missed objects", ys: rm.GOSPAMissed},
		{class: "fals", label: "false tracks", ys: rm.GOSPAFalse},
	}
	return seriesPlot(fmt.Sprintf("GOSPA split of run %d over time", r.Index), "part of GOSPAᵖ", ss, nil, m)
}

// nisPlot draws the run's NIS per step and the scenario's average NIS
// with the acceptance band of each step's own number of samples, placed
// at their steps (NISSteps; the run's at the steps of its NISSamples).
func nisPlot(sc *result.Scenario, r *result.Run) template.HTML {
	var ss []series
	var bd *band
	if rm := r.Metrics; rm != nil && len(rm.NISSamples) > 0 {
		run := series{class: "trk", label: fmt.Sprintf("run %d", r.Index), ys: []float64{}, xs: []float64{}}
		for k, vs := range rm.NISSamples {
			if len(vs) == 0 {
				continue
			}
			s := 0.0
			for _, v := range vs {
				s += v
			}
			run.ys, run.xs = append(run.ys, s/float64(len(vs))), append(run.xs, float64(k))
		}
		ss = append(ss, run)
	}
	if mt := sc.Metrics; mt != nil && len(mt.NIS) > 0 && len(mt.NISSteps) == len(mt.NIS) {
		xs := make([]float64, len(mt.NISSteps))
		for j, st := range mt.NISSteps {
			xs[j] = float64(st)
		}
		ss = append(ss, series{class: "avg", label: fmt.Sprintf("average of %d runs", mt.Runs), ys: mt.NIS, xs: xs})
		if len(mt.NISLowByStep) == len(mt.NIS) && len(mt.NISHighByStep) == len(mt.NIS) {
			label := "acceptance band"
			if c := mt.NISConfidence; c > 0 && c < 1 {
				label = fmt.Sprintf("%s%% band", num(100*c))
			}
			bd = &band{lo: mt.NISLowByStep, hi: mt.NISHighByStep, xs: xs, label: label}
		}
	}
	if len(ss) == 0 {
		return ""
	}
	return seriesPlot("NIS over time", "NIS", ss, bd, marks{first: -1})
}

// neesPlot draws the run's NEES and the scenario's average NEES with its
// acceptance band: the band of each step's own number of values when the
// summary has it (NEESLowByStep, NEESHighByStep as long as NEES), else
// the single band NEESLow..NEESHigh, else none.
//
// The NEES series leave out steps without a value. When the summary names
// the steps of its averages (NEESSteps), or there is no summary, each
// value is placed at its step: the run's at the steps of its NEESSamples
// (which keep every step). Otherwise, as in results written before the
// steps were recorded, the values are placed one after the other.
func neesPlot(sc *result.Scenario, r *result.Run) template.HTML {
	var ss []series
	var bd *band
	mt := sc.Metrics
	atSteps := mt == nil || len(mt.NEES) == 0 || len(mt.NEESSteps) == len(mt.NEES)
	if mt != nil && len(mt.NEES) > 0 {
		avg := series{class: "avg", label: fmt.Sprintf("average of %d runs", mt.Runs), ys: mt.NEES}
		var xs []float64
		if atSteps {
			xs = make([]float64, len(mt.NEESSteps))
			for j, st := range mt.NEESSteps {
				xs[j] = float64(st)
			}
			avg.xs = xs
		}
		ss = append(ss, avg)
		label := "acceptance band"
		if c := mt.NEESConfidence; c > 0 && c < 1 {
			label = fmt.Sprintf("%s%% band", num(100*c))
		}
		switch {
		case len(mt.NEESLowByStep) == len(mt.NEES) && len(mt.NEESHighByStep) == len(mt.NEES):
			// With one step, stepped() is false and the band is that
			// step's rectangle.
			bd = &band{lo: mt.NEESLowByStep, hi: mt.NEESHighByStep, xs: xs, label: label}
		case mt.NEESHigh > mt.NEESLow:
			bd = &band{lo: []float64{mt.NEESLow}, hi: []float64{mt.NEESHigh}, label: label}
		}
	}
	if rm := r.Metrics; rm != nil && len(rm.NEES) > 0 {
		run := series{class: "trk", label: fmt.Sprintf("run %d", r.Index), ys: rm.NEES}
		if atSteps && len(rm.NEESSamples) > 0 {
			run = series{class: "trk", label: run.label, ys: []float64{}, xs: []float64{}}
			for k, vs := range rm.NEESSamples {
				if len(vs) == 0 {
					continue
				}
				s := 0.0
				for _, v := range vs {
					s += v
				}
				run.ys, run.xs = append(run.ys, s/float64(len(vs))), append(run.xs, float64(k))
			}
		}
		ss = append([]series{run}, ss...)
	}
	if len(ss) == 0 {
		return ""
	}
	return seriesPlot("NEES over time", "NEES", ss, bd, marks{first: -1})
}
