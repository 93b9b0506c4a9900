package report

import (
	"encoding/xml"
	"fmt"
	"io"
	"strconv"
	"strings"

	"trackgate/harness/result"
)

type xmlSuites struct {
	XMLName  xml.Name   `xml:"testsuites"`
	Name     string     `xml:"name,attr"`
	Tests    int        `xml:"tests,attr"`
	Failures int        `xml:"failures,attr"`
	Errors   int        `xml:"errors,attr"`
	Skipped  int        `xml:"skipped,attr"`
	Time     string     `xml:"time,attr"`
	Suites   []xmlSuite `xml:"testsuite"`
}

type xmlSuite struct {
	Name       string        `xml:"name,attr"`
	Tests      int           `xml:"tests,attr"`
	Failures   int           `xml:"failures,attr"`
	Errors     int           `xml:"errors,attr"`
	Skipped    int           `xml:"skipped,attr"`
	Time       string        `xml:"time,attr"`
	File       string        `xml:"file,attr,omitempty"`
	Properties []xmlProperty `xml:"properties>property"`
	Cases      []xmlCase     `xml:"testcase"`
	seconds    float64
}

type xmlProperty struct {
	Name  string `xml:"name,attr"`
	Value string `xml:"value,attr"`
}

type xmlCase struct {
	ClassName  string      `xml:"classname,attr"`
	Name       string      `xml:"name,attr"`
	File       string      `xml:"file,attr,omitempty"`
	Time       string      `xml:"time,attr"`
	Properties *xmlProps   `xml:"properties,omitempty"`
	Failure    *xmlProblem `xml:"failure"`
	Error      *xmlProblem `xml:"error"`
	Skipped    *xmlProblem `xml:"skipped"`
	SystemOut  string      `xml:"system-out,omitempty"`
	SystemErr  string      `xml:"system-err,omitempty"`
}

type xmlProps struct {
	List []xmlProperty `xml:"property"`
}

type xmlProblem struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr,omitempty"`
	Body    string `xml:",chardata"`
}

func seconds(x float64) string { return fmt.Sprintf("%.3f", x) }

// JUnit writes s as JUnit XML to w (see the package documentation).
func JUnit(w io.Writer, s *result.Suite) error {
	doc := xmlSuites{Name: "trackgate"}
	common := []xmlProperty{
		{"trackgate.tool", s.Tool},
		{"trackgate.against", s.Against},
		{"tracker.name", s.Tracker.Name},
		{"tracker.version", s.Tracker.Version},
		{"tracker.command", strings.Join(s.Tracker.Command, " ")},
		{"platform", platform(s.Platform)},
	}
	if s.Shard != nil {
		common = append(common, xmlProperty{"shard", fmt.Sprintf("%d/%d (0-based)", s.Shard.Index, s.Shard.Total)})
	}
	var total float64
	for i := range s.Scenarios {
		xs := junitScenario(&s.Scenarios[i], common)
		doc.Tests += xs.Tests
		doc.Failures += xs.Failures
		doc.Errors += xs.Errors
		doc.Skipped += xs.Skipped
		total += xs.seconds
		doc.Suites = append(doc.Suites, xs)
	}
	doc.Time = seconds(total)
	if _, err := io.WriteString(w, xml.Header); err != nil {
		return err
	}
	enc := xml.NewEncoder(w)
	enc.Indent("", "  ")
	if err := enc.Encode(doc); err != nil {
		return err
	}
	_, err := io.WriteString(w, "\n")
	return err
}

func platform(p result.Platform) string {
	s := strings.TrimSpace(p.GoVersion + " " + p.GOOS + "/" + p.GOARCH)
	if p.GOAMD64 != "" {
		s += " GOAMD64=" + p.GOAMD64
	}
	return s
}

func junitScenario(sc *result.Scenario, common []xmlProperty) xmlSuite {
	xs := xmlSuite{Name: sc.Name, File: sc.File}
	xs.Properties = append(append([]xmlProperty(nil), common...),
		xmlProperty{"scenario.file", sc.File},
		xmlProperty{"scenario.hash", sc.Hash},
	)
	if m := sc.Metrics; m != nil && (len(m.GOSPALocalisation) > 0 || len(m.OSPA) > 0) {
		// The summary's means, exact, for CI dashboards that chart
		// properties; GOSPAᵖ = localisation + missed + false on average.
		g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
		xs.Properties = append(xs.Properties,
			xmlProperty{"metrics.mean_gospa", g(m.MeanGOSPA)},
			xmlProperty{"metrics.mean_gospa_localisation", g(m.MeanGOSPALocalisation)},
			xmlProperty{"metrics.mean_gospa_missed", g(m.MeanGOSPAMissed)},
			xmlProperty{"metrics.mean_gospa_false", g(m.MeanGOSPAFalse)},
			xmlProperty{"metrics.mean_ospa", g(m.MeanOSPA)},
		)
		if len(m.NIS) > 0 {
			xs.Properties = append(xs.Properties,
				xmlProperty{"metrics.mean_nis", g(m.MeanNIS)},
				xmlProperty{"metrics.nis_samples_in_band", g(m.NISSamplesInBand)},
				xmlProperty{"metrics.nis_steps_in_band", g(m.NISInBand)},
			)
		}
	}
	class := "trackgate." + sc.Name
	for ri := range sc.Runs {
		r := &sc.Runs[ri]
		props := &xmlProps{[]xmlProperty{{"seed", fmt.Sprint(r.Seed)}, {"run", fmt.Sprint(r.Index)}}}
		out := fmt.Sprintf("scenario %s run %d seed %d", sc.File, r.Index, r.Seed)
		var cases []xmlCase
		faultShown := false
		for ci := range r.Checks {
			c := &r.Checks[ci]
			xc := xmlCase{ClassName: class, Name: fmt.Sprintf("run %d/%s", r.Index, c.Name), File: sc.File, Properties: props, SystemOut: out}
			switch c.Status {
			case result.Pass:
			case result.Tie:
				xc.SystemOut += "\n" + checkBody(c)
			case result.Skip:
				xc.Skipped = &xmlProblem{Message: orText(c.Message, "skipped")}
			case result.Fail:
				xc.Failure = &xmlProblem{Message: failureMessage(c), Type: "regression", Body: checkBody(c)}
			case result.Faulted:
				xc.Error = faultProblem(r.Fault, c)
				if r.Fault != nil {
					xc.SystemErr = stderrTail(r.Fault.Stderr)
				}
				faultShown = true
			default:
				xc.Error = &xmlProblem{Message: orText(c.Message, "trackgate could not run the check"), Type: "error", Body: checkBody(c)}
			}
			cases = append(cases, xc)
		}
		if !faultShown && (r.Fault != nil || r.Status == result.Faulted || r.Status == result.Error || len(r.Checks) == 0) {
			// The run's own status has no check to carry it.
			xc := xmlCase{ClassName: class, Name: fmt.Sprintf("run %d/tracker", r.Index), File: sc.File, Properties: props, SystemOut: out}
			switch {
			case r.Fault != nil || r.Status == result.Faulted:
				xc.Error = faultProblem(r.Fault, nil)
				if r.Fault != nil {
					xc.SystemErr = stderrTail(r.Fault.Stderr)
				}
			case r.Status == result.Error:
				xc.Error = &xmlProblem{Message: "trackgate could not run this run", Type: "error"}
			case r.Status == result.Skip:
				xc.Skipped = &xmlProblem{Message: "run skipped"}
			case r.Status == result.Fail:
				xc.Failure = &xmlProblem{Message: "run failed", Type: "regression"}
			}
			cases = append(cases, xc)
		}
		if len(cases) > 0 {
			cases[0].Time = seconds(r.Seconds)
			xs.seconds += r.Seconds
		}
		xs.Cases = append(xs.Cases, cases...)
	}
	for _, g := range sc.Gates {
		xc := xmlCase{ClassName: class, Name: "gate/" + g.Name, File: sc.File}
		body := fmt.Sprintf("estimate %s %s, threshold %s\n%s", num(g.Estimate), gateBounds(g), num(g.Threshold), g.Message)
		switch g.Status {
		case result.Pass, result.Tie:
			xc.SystemOut = body
		case result.Skip:
			xc.Skipped = &xmlProblem{Message: orText(g.Message, "gate not evaluated")}
		case result.Fail:
			xc.Failure = &xmlProblem{Message: orText(g.Message, "gate failed"), Type: "statistical-gate", Body: body}
		default:
			xc.Error = &xmlProblem{Message: orText(g.Message, "gate could not be evaluated"), Type: "error", Body: body}
		}
		xs.Cases = append(xs.Cases, xc)
	}
	if len(sc.Runs) == 0 && len(sc.Gates) == 0 {
		// A scenario that did not run still shows up, so CI sees it.
		xc := xmlCase{ClassName: class, Name: "scenario", File: sc.File}
		switch sc.Status {
		case result.Pass, result.Tie:
		case result.Skip:
			xc.Skipped = &xmlProblem{Message: "scenario skipped"}
		case result.Fail:
			xc.Failure = &xmlProblem{Message: "scenario failed", Type: "regression"}
		default:
			xc.Error = &xmlProblem{Message: "scenario " + string(sc.Status), Type: string(sc.Status)}
		}
		xs.Cases = append(xs.Cases, xc)
	}
	for i := range xs.Cases {
		c := &xs.Cases[i]
		if c.Time == "" {
			c.Time = seconds(0)
		}
		xs.Tests++
		switch {
		case c.Failure != nil:
			xs.Failures++
		case c.Error != nil:
			xs.Errors++
		case c.Skipped != nil:
			xs.Skipped++
		}
	}
	xs.Time = seconds(xs.seconds)
	return xs
}

// stderrTail keeps the last 200 lines and at most 64 KiB of a tracker's
// stderr, so a chatty tracker cannot push a report past the CI size limits
// (GitLab: 30 MB per JUnit file).
func stderrTail(s string) string {
	lines, cut := tail(s, 200)
	out := strings.Join(lines, "\n")
	if len(out) > 64<<10 {
		out = strings.ToValidUTF8(out[len(out)-64<<10:], "")
		cut = -1
	}
	switch {
	case cut > 0:
		return fmt.Sprintf("[%d earlier lines not shown]\n%s", cut, out)
	case cut < 0:
		return "[earlier output not shown]\n" + out
	}
	return out
}

func orText(s, fallback string) string {
	if s == "" {
		return fallback
	}
	return s
}

func failureMessage(c *result.Check) string {
	if c.First != nil {
		return fmt.Sprintf("step %d: %s", c.First.Step, c.First.Message)
	}
	return orText(c.Message, c.Name+" check failed")
}

func faultProblem(f *result.Fault, c *result.Check) *xmlProblem {
	if f == nil {
		msg := "tracker faulted"
		if c != nil && c.Message != "" {
			msg = c.Message
		}
		return &xmlProblem{Message: msg, Type: "fault"}
	}
	body := fmt.Sprintf("class %s at step %d, tracker output line %d\n%s", f.Class, f.Step, f.Line, f.Message)
	if f.Excerpt != "" {
		body += "\noutput: " + f.Excerpt
	}
	return &xmlProblem{Message: fmt.Sprintf("%s at step %d: %s", f.Class, f.Step, f.Message), Type: "fault:" + f.Class, Body: body}
}

// checkBody is the detail text of a check: first divergence, worst diffs,
// ties.
func checkBody(c *result.Check) string {
	var b strings.Builder
	if c.Message != "" {
		b.WriteString(c.Message + "\n")
	}
	if d := c.First; d != nil {
		writeDivergence(&b, "first divergence", d)
	}
	if len(c.Diffs) > 0 {
		shown := worstDiffs(c.Diffs, 20)
		fmt.Fprintf(&b, "worst differences (%d of %d):\n", len(shown), len(c.Diffs)+c.Truncated)
		for _, d := range shown {
			fmt.Fprintf(&b, "  %s: want %s, got %s; tolerance %s, excess %s\n", d.Path, exact(d.Want), exact(d.Got), d.Tolerance, num(d.Excess))
		}
	}
	for i := range c.Ties {
		writeDivergence(&b, "tie", &c.Ties[i])
	}
	return strings.TrimRight(b.String(), "\n")
}

func writeDivergence(b *strings.Builder, label string, d *result.Divergence) {
	fmt.Fprintf(b, "%s at step %d (%s)", label, d.Step, d.Kind)
	if len(d.Objects) > 0 {
		fmt.Fprintf(b, ", objects %s", strings.Join(d.Objects, ", "))
	}
	if f := divergenceFacts(d); f != "" {
		fmt.Fprintf(b, "; %s", f)
	}
	fmt.Fprintf(b, "\n  %s\n", d.Message)
}
