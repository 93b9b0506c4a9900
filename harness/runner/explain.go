package runner

import (
	"context"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"trackgate/harness/mot"
	"trackgate/harness/result"
)

// ExplainOptions configure Explain.
type ExplainOptions struct {
	// Options supply the project settings (tolerances, ambiguity
	// threshold, cut-off, K); Options.Tracker, when set, is run on the
	// run and its step is set against the reference's.
	Options
	// File is the scenario file, Run the run and Step the step explained.
	File      string
	Run, Step int
}

// Explain writes, for one step of one run, what a tracking engineer needs
// to judge it: the predicted states of the live objects, the detections,
// the gated cost matrix (objects × detections + miss, "·" outside the
// gate), the k best hypotheses with their costs and probabilities, the
// margin and the covered mass; with a tracker, what it reported at the step
// and every check that departs there.
func Explain(ctx context.Context, o ExplainOptions, w io.Writer) error {
	o.Scenarios = []string{o.File}
	s, err := resolve(o.Options, false)
	if err != nil {
		return err
	}
	s.readOnly = true
	scens := s.load()
	sc := scens[0]
	if sc.err != nil {
		return sc.err
	}
	if o.Run < 0 || o.Run >= sc.planned {
		return fmt.Errorf("--run %d: %s has runs 0 to %d", o.Run, o.File, sc.planned-1)
	}
	if o.Step < 0 || o.Step >= sc.spec.Steps {
		return fmt.Errorf("--step %d: %s has steps 0 to %d", o.Step, o.File, sc.spec.Steps-1)
	}
	j := &job{sc: sc, index: o.Run}
	sc.jobs = []*job{j}
	s.prepareJob(j)
	if j.refErr != nil {
		return fmt.Errorf("the reference tracker failed on run %d: %v", o.Run, j.refErr)
	}
	k := o.Step
	d := &j.ex.Steps[k]
	spec := sc.spec
	scan := j.run.Scans[k]
	bw := &errWriter{w: w}
	bw.printf("scenario %s (%s), run %d (seed %d), step %d of 0..%d, time %s s\n", spec.Name, sc.file, o.Run, j.run.Seed, k, spec.Steps-1, num(scan.Time))
	bw.printf("ambiguity threshold %s; gate probability %s; detection probability %s; clutter density %s\n\n",
		num(sc.tie), num(gateProb(spec.Model.GateProb)), num(spec.Model.PD), num(spec.Model.ClutterDensity))

	bw.printf("Live objects, predicted for this step (the prior at an object's first step):\n")
	for _, od := range d.Objects {
		bw.printf("  %s\n    mean %s\n", od.Object, vec(od.PredMean))
		for i, row := range od.PredCov.RowsOf() {
			label := "    cov  "
			if i > 0 {
				label = "         "
			}
			bw.printf("%s%s\n", label, vec(row))
		}
	}
	if len(d.Objects) == 0 {
		bw.printf("  (none)\n")
	}
	bw.printf("\nDetections (%d):\n", len(scan.Detections))
	origin := map[int]string{}
	for _, og := range j.run.Truth[k].Origins {
		origin[og.Detection] = og.Object
	}
	for _, det := range scan.Detections {
		from := origin[det.ID]
		if from == "" {
			from = "clutter"
		}
		bw.printf("  d%-4d z %s   (truth: %s)\n", det.ID, vec(det.Z), from)
	}

	bw.printf("\nGated cost matrix, −ln of each association's likelihood ratio (· outside the gate):\n")
	cm := d.Costs
	ncol := len(cm.Detections)
	width := 10
	for _, o := range cm.Objects {
		width = max(width, len(o)+2)
	}
	bw.printf("  %-*s", width, "")
	for _, id := range cm.Detections {
		bw.printf("%12s", "d"+strconv.Itoa(id))
	}
	bw.printf("%12s\n", "miss")
	for i, o := range cm.Objects {
		bw.printf("  %-*s", width, o)
		row := make([]string, ncol)
		for c := range row {
			row[c] = "·"
		}
		for _, e := range cm.Gated[i] {
			row[e.Col] = fmt.Sprintf("%.4g", e.Cost)
		}
		for _, cell := range row {
			bw.printf("%12s", cell)
		}
		if math.IsInf(cm.Miss[i], 1) {
			bw.printf("%12s\n", "·")
		} else {
			bw.printf("%12.4g\n", cm.Miss[i])
		}
	}

	bw.printf("\nThe %d best hypotheses:\n", len(d.Hypotheses))
	for r, h := range d.Hypotheses {
		var parts []string
		for row, a := range h.Assoc {
			parts = append(parts, fmt.Sprintf("%s←%s", d.Objects[row].Object, short(a)))
		}
		bw.printf("  #%-2d cost %-10.6g probability %-8.4g %s\n", r+1, h.Cost, h.Prob, strings.Join(parts, " "))
	}
	margin := "∞ (a single hypothesis)"
	if !math.IsInf(d.Margin, 1) {
		margin = num(d.Margin)
		if isTie(d.Margin, sc.tie) {
			margin += " — within the ambiguity threshold: a tracker choosing otherwise here is a tie"
		} else {
			margin += " — the best hypothesis is clear: a tracker choosing otherwise here regresses"
		}
	}
	bw.printf("margin %s\n", margin)
	exact := "a lower bound (not every event enumerated)"
	if d.Exhaustive {
		exact = "exact (every association event enumerated)"
	}
	bw.printf("covered mass %s, %s; %d cluster(s)", num(d.CoveredMass), exact, d.Clusters)
	if len(d.Coasting) > 0 {
		bw.printf("; coasting without a feasible association: %s", strings.Join(d.Coasting, ", "))
	}
	bw.printf("\n\nThe reference's update:\n")
	for _, od := range d.Objects {
		nis := "–"
		if !math.IsNaN(od.NIS) {
			nis = num(od.NIS)
		}
		bw.printf("  %s ← %s: mean %s, NIS %s\n", od.Object, short(od.Detection), vec(od.Mean), nis)
	}

	if len(s.argv) > 0 || s.Local != nil {
		s.drive(ctx, []*job{j})
		s.judge(j)
		explainTracker(bw, j, k)
	}
	return bw.err
}

// explainTracker writes what the tracker reported at step k and what the
// checks found there.
func explainTracker(bw *errWriter, j *job, k int) {
	rd := j.res.Tracker
	bw.printf("\nThe tracker (%s %s):\n", rd.Name, rd.Version)
	if k >= len(j.res.Frames) {
		if f := j.res.Fault; f != nil {
			bw.printf("  faulted before answering this step: %v\n", f)
		} else {
			bw.printf("  no frame for this step\n")
		}
		return
	}
	for _, t := range j.res.Frames[k].Tracks {
		o := j.names[t.Track]
		if o == "" {
			o = "no object"
		}
		det := "association not reported"
		if t.HasDetection {
			det = "← " + short(t.Detection)
		}
		bw.printf("  %s (stands for %s) %s: mean %s\n", t.Track, o, det, vec(t.Mean))
	}
	found := false
	for _, c := range j.out.Checks {
		var lines []string
		if c.First != nil && c.First.Step == k {
			lines = append(lines, fmt.Sprintf("%s: %s", c.First.Kind, c.First.Message))
		}
		for _, t := range c.Ties {
			if t.Step == k {
				lines = append(lines, "tie: "+t.Message)
			}
		}
		prefix := fmt.Sprintf("step %d /", k)
		for _, d := range c.Diffs {
			if strings.HasPrefix(d.Path, prefix) {
				lines = append(lines, fmt.Sprintf("%s: want %s, got %s (%s, excess %s)", d.Path, num(d.Want), num(d.Got), d.Tolerance, num(d.Excess)))
			}
		}
		for _, l := range lines {
			bw.printf("  %s check departs here — %s\n", c.Name, l)
			found = true
		}
	}
	if !found {
		first := ""
		for _, c := range j.out.Checks {
			if c.First != nil && (first == "" || c.Status == result.Fail) {
				first = fmt.Sprintf(" (the %s check first departs at step %d)", c.Name, c.First.Step)
			}
		}
		bw.printf("  no check departs at this step%s\n", first)
	}
}

func gateProb(p float64) float64 {
	if p == 0 {
		return 0.999
	}
	return p
}

func short(id int) string {
	if id == mot.NoDetection {
		return "miss"
	}
	return "d" + strconv.Itoa(id)
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

func vec(v []float64) string {
	parts := make([]string, len(v))
	for i, x := range v {
		parts[i] = num(x)
	}
	return "[" + strings.Join(parts, " ") + "]"
}

// errWriter keeps the first write error.
type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) printf(format string, a ...any) {
	if e.err == nil {
		_, e.err = fmt.Fprintf(e.w, format, a...)
	}
}
