package report_test

import (
	"bytes"
	"encoding/xml"
	"flag"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/report"
	"trackgate/harness/result"
	"trackgate/harness/result/sample"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

// golden compares got with testdata/name, or rewrites it under -update.
// The golden files are change detectors, not truth: the renderers wrote
// them and they were reviewed by eye. Whether a report is right is checked
// independently, from the input suite, by the assertions beside each call
// and by the *MatchesSuite tests in derived_test.go.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := result.WriteFile(path, got); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run with -update to create it)", err)
	}
	if d := cmp.Diff(string(want), string(got)); d != "" {
		t.Errorf("%s differs (-want +got):\n%s", path, d)
	}
}

func render(t *testing.T, f func(*bytes.Buffer) error) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := f(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// hostile returns a small suite whose text fields carry characters that
// every format must escape.
func hostile() *result.Suite {
	p := 0.5
	return &result.Suite{
		Version: 1, Tool: "trackgate", Against: "reference", Status: result.Faulted,
		Tracker: result.Tracker{Name: `tr<ack>&"er'`, Version: "1|2", Command: []string{"./t", "--x=<y>"}},
		Shard:   &result.Shard{Index: 2, Total: 3},
		Scenarios: []result.Scenario{{
			Name: "crossing_<script>alert(1)</script>", File: "scen|arios/a&b.yaml", Description: "quay `wall` ]]> end",
			Status: result.Faulted, Position: []int{0, 2},
			Runs: []result.Run{{Index: 0, Seed: 9, Status: result.Faulted,
				Checks: []result.Check{{Name: "reference", Status: result.Fail, Message: "bad\x00byte | pipe\x1b[31m red",
					First: &result.Divergence{Step: 2, Kind: "association", Message: "a < b && c > d", Probability: &p}}},
				Fault: &result.Fault{Class: "invalid-json", Step: 3, Line: 4, Message: "line ```not json```",
					Excerpt: "{\"x\":\x01}", Stderr: "one\ntwo ````\nthree \xff\xfe bad utf-8\n"}}},
		}},
	}
}

func TestTerminal(t *testing.T) {
	plain := render(t, func(b *bytes.Buffer) error { return report.Terminal(b, sample.Suite(), report.TerminalOptions{}) })
	golden(t, "terminal.golden", plain)
	if bytes.Contains(plain, []byte("\x1b[")) {
		t.Error("plain output contains ANSI sequences")
	}
	if bytes.ContainsRune(plain, 0x07) || !bytes.Contains(plain, []byte(`retry\x07`)) {
		t.Error("the bell in the tracker's stderr is not shown escaped as \\x07")
	}
	text := string(plain)
	lines := strings.Split(text, "\n")
	// One verdict line per scenario, in order, with runs passed/total.
	wantHeads := []string{
		"PASS  crossing_harbour_ferries        3/3",
		"TIE   convoy_quarry_lorries           2/2",
		"FAIL  clutter_coastal_radar           2/3",
		"FAULT occlusion_warehouse_forklift    1/2",
	}
	for i, w := range wantHeads {
		if !strings.HasPrefix(lines[i], w) {
			t.Errorf("line %d = %q, want prefix %q", i, lines[i], w)
		}
	}
	for _, want := range []string{
		"first divergence at step 23 (association), objects rib, clutter det 412; margin 4.73, probability 0.0183",
		"worst differences (4 of 41)",
		"tolerance abs 0.5 + rel 1e-6, excess 42.15",
		"fault crash at step 41, tracker output line 42",
		"tie at step 14 (association)",
		"gate mean-gospa FAIL",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("terminal output lacks %q", want)
		}
	}
	// Worst first: 42.15 is listed before 22.24.
	if strings.Index(text, "excess 42.15") > strings.Index(text, "excess 22.24") {
		t.Error("differences are not sorted by excess")
	}

	colour := render(t, func(b *bytes.Buffer) error {
		return report.Terminal(b, sample.Suite(), report.TerminalOptions{Colour: true, StderrLines: 2, Diffs: 1})
	})
	if !bytes.Contains(colour, []byte("\x1b[1;31mFAIL")) {
		t.Error("colour output does not paint FAIL")
	}
	if !strings.Contains(string(colour), "stderr (last 2 lines, 1 before)") {
		t.Error("stderr tail not cut to 2 lines")
	}
	if !strings.Contains(string(colour), "worst differences (1 of 41)") {
		t.Error("Diffs option not applied")
	}
	h := render(t, func(b *bytes.Buffer) error { return report.Terminal(b, hostile(), report.TerminalOptions{}) })
	for _, c := range []byte{0x00, 0x01, 0x1b, 0xff} {
		if bytes.IndexByte(h, c) >= 0 {
			t.Errorf("terminal output contains raw byte %#x from tracker text", c)
		}
	}
}

// Independent JUnit reader, written from the field list of the format.
type jSuites struct {
	XMLName  xml.Name `xml:"testsuites"`
	Tests    int      `xml:"tests,attr"`
	Failures int      `xml:"failures,attr"`
	Errors   int      `xml:"errors,attr"`
	Skipped  int      `xml:"skipped,attr"`
	Suites   []struct {
		Name     string `xml:"name,attr"`
		Tests    int    `xml:"tests,attr"`
		Failures int    `xml:"failures,attr"`
		Errors   int    `xml:"errors,attr"`
		Skipped  int    `xml:"skipped,attr"`
		Props    []struct {
			Name  string `xml:"name,attr"`
			Value string `xml:"value,attr"`
		} `xml:"properties>property"`
		Cases []struct {
			Class   string `xml:"classname,attr"`
			Name    string `xml:"name,attr"`
			Time    string `xml:"time,attr"`
			Failure *struct {
				Message string `xml:"message,attr"`
				Type    string `xml:"type,attr"`
				Body    string `xml:",chardata"`
			} `xml:"failure"`
			Error *struct {
				Message string `xml:"message,attr"`
				Type    string `xml:"type,attr"`
			} `xml:"error"`
			Skipped   *struct{} `xml:"skipped"`
			SystemErr string    `xml:"system-err"`
		} `xml:"testcase"`
	} `xml:"testsuite"`
}

func parseJUnit(t *testing.T, data []byte) jSuites {
	t.Helper()
	var doc jSuites
	if err := xml.Unmarshal(data, &doc); err != nil {
		t.Fatalf("JUnit output does not parse as XML: %v", err)
	}
	return doc
}

func TestJUnit(t *testing.T) {
	out := render(t, func(b *bytes.Buffer) error { return report.JUnit(b, sample.Suite()) })
	golden(t, "junit.golden", out)
	doc := parseJUnit(t, out)
	if len(doc.Suites) != 4 {
		t.Fatalf("%d testsuites, want 4 (one per scenario)", len(doc.Suites))
	}
	seen := map[string]bool{}
	var tot [4]int
	for _, s := range doc.Suites {
		var c [4]int
		for _, tc := range s.Cases {
			key := tc.Class + "::" + tc.Name
			if seen[key] {
				t.Errorf("test case %s appears twice", key)
			}
			seen[key] = true
			c[0]++
			switch {
			case tc.Failure != nil:
				c[1]++
			case tc.Error != nil:
				c[2]++
			case tc.Skipped != nil:
				c[3]++
			}
		}
		if got := [4]int{s.Tests, s.Failures, s.Errors, s.Skipped}; got != c {
			t.Errorf("testsuite %s counts %v, cases say %v", s.Name, got, c)
		}
		for i := range tot {
			tot[i] += c[i]
		}
	}
	if got := [4]int{doc.Tests, doc.Failures, doc.Errors, doc.Skipped}; got != tot {
		t.Errorf("testsuites counts %v, cases say %v", got, tot)
	}
	// The sample: harbour 3 runs × 2 checks + 1 gate, convoy 2×2, coastal
	// 3×2 + 2 gates, warehouse 2×1.
	if tot != [4]int{7 + 4 + 8 + 2, 3, 1, 0} {
		t.Errorf("totals %v, want [21 3 1 0]", tot)
	}
	coastal := doc.Suites[2]
	var fail, gate bool
	for _, tc := range coastal.Cases {
		if tc.Name == "run 1/reference" && tc.Failure != nil {
			fail = strings.Contains(tc.Failure.Message, "step 23") && strings.Contains(tc.Failure.Body, "excess 42.15") && tc.Class == "trackgate.clutter_coastal_radar"
		}
		if tc.Name == "gate/mean-gospa" && tc.Failure != nil && tc.Failure.Type == "statistical-gate" {
			gate = true
		}
	}
	if !fail || !gate {
		t.Errorf("coastal failures not reported as expected (run %v, gate %v)", fail, gate)
	}
	wh := doc.Suites[3].Cases[0]
	if wh.Error == nil || wh.Error.Type != "fault:crash" || !strings.Contains(wh.SystemErr, "Segmentation fault") {
		t.Errorf("warehouse fault case = %+v", wh)
	}
	if strings.ContainsRune(wh.SystemErr, 0x07) || !strings.ContainsRune(wh.SystemErr, '\uFFFD') {
		t.Error("control character in stderr not replaced by U+FFFD")
	}
}

func TestJUnitHostileText(t *testing.T) {
	out := render(t, func(b *bytes.Buffer) error { return report.JUnit(b, hostile()) })
	doc := parseJUnit(t, out)
	s := doc.Suites[0]
	if s.Name != "crossing_<script>alert(1)</script>" {
		t.Errorf("suite name = %q after a round trip through XML", s.Name)
	}
	var shard string
	for _, p := range s.Props {
		if p.Name == "shard" {
			shard = p.Value
		}
	}
	if shard != "2/3 (0-based)" {
		t.Errorf("shard property = %q", shard)
	}
	if s.Errors != 1 || s.Failures != 1 {
		t.Errorf("errors %d failures %d, want 1 and 1 (check failure plus tracker fault)", s.Errors, s.Failures)
	}
}

func TestMarkdown(t *testing.T) {
	out := render(t, func(b *bytes.Buffer) error { return report.Markdown(b, sample.Suite(), report.MarkdownOptions{}) })
	golden(t, "markdown.golden", out)
	text := string(out)
	for _, want := range []string{
		"| **FAIL** | `clutter_coastal_radar` | 2/3 |",
		"| TIE | `convoy_quarry_lorries` | 2/2 |",
		"first divergence at step 23 (association)",
		"| step 23 / track rib / mean\\[0\\] | 412.37 | 455.02 | abs 0.5 + rel 1e-6 | 42.15 |",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("markdown lacks %q", want)
		}
	}
	// Limits: whole sections are dropped and a note says so.
	for _, limit := range []int{700, 1500, 2500} {
		small := render(t, func(b *bytes.Buffer) error {
			return report.Markdown(b, sample.Suite(), report.MarkdownOptions{Limit: limit})
		})
		if len(small) > limit {
			t.Errorf("limit %d: wrote %d bytes", limit, len(small))
		}
		if !bytes.Contains(small, []byte("not shown: the summary is limited to")) {
			t.Errorf("limit %d: no truncation note", limit)
		}
	}
	h := string(render(t, func(b *bytes.Buffer) error { return report.Markdown(b, hostile(), report.MarkdownOptions{}) }))
	// Outside code spans (where GitHub shows text literally) no HTML
	// survives, and no pipe breaks a table cell.
	outside := regexp.MustCompile("`[^`\n]*`").ReplaceAllString(h, "")
	if strings.Contains(outside, "<") || regexp.MustCompile(`[^\\]\| pipe`).MatchString(h) {
		t.Errorf("markdown does not escape HTML or pipes:\n%s", h)
	}
	if !strings.Contains(h, "`````text") {
		t.Errorf("stderr with a run of four backticks needs a five-backtick fence:\n%s", h)
	}
}

func TestDeterministic(t *testing.T) {
	for name, f := range map[string]func(*bytes.Buffer, *result.Suite) error{
		"terminal": func(b *bytes.Buffer, s *result.Suite) error { return report.Terminal(b, s, report.TerminalOptions{}) },
		"junit":    func(b *bytes.Buffer, s *result.Suite) error { return report.JUnit(b, s) },
		"markdown": func(b *bytes.Buffer, s *result.Suite) error { return report.Markdown(b, s, report.MarkdownOptions{}) },
		"html":     func(b *bytes.Buffer, s *result.Suite) error { return report.HTML(b, s) },
	} {
		a := render(t, func(b *bytes.Buffer) error { return f(b, sample.Suite()) })
		b := render(t, func(b *bytes.Buffer) error { return f(b, sample.Suite()) })
		if !bytes.Equal(a, b) {
			t.Errorf("%s: two renderings of the same suite differ", name)
		}
	}
}

func BenchmarkHTML(b *testing.B) {
	s := sample.Suite()
	b.ReportAllocs()
	for b.Loop() {
		var buf bytes.Buffer
		if err := report.HTML(&buf, s); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkJUnit(b *testing.B) {
	s := sample.Suite()
	b.ReportAllocs()
	for b.Loop() {
		var buf bytes.Buffer
		if err := report.JUnit(&buf, s); err != nil {
			b.Fatal(err)
		}
	}
}

// FuzzJUnitText puts arbitrary text into every free-text field: the JUnit
// output must always parse, with the counts intact.
func FuzzJUnitText(f *testing.F) {
	f.Add("crossing_quay", "bad \x00 byte", "]]> <&>", "line\r\nnext")
	f.Add("\xff\xfe", "\u2028", "--><!--", "\x1b[31m")
	f.Fuzz(func(t *testing.T, name, msg, stderr, path string) {
		s := hostile()
		sc := &s.Scenarios[0]
		sc.Name, sc.File = name, path
		sc.Runs[0].Checks[0].Message = msg
		sc.Runs[0].Checks[0].Diffs = []result.Diff{{Path: path, Tolerance: msg}}
		sc.Runs[0].Fault.Stderr = stderr
		sc.Runs[0].Fault.Excerpt = msg
		var b bytes.Buffer
		if err := report.JUnit(&b, s); err != nil {
			t.Fatal(err)
		}
		doc := parseJUnit(t, b.Bytes())
		if len(doc.Suites) != 1 || doc.Tests != 2 || doc.Failures != 1 || doc.Errors != 1 {
			t.Fatalf("counts %+v after arbitrary text", doc)
		}
	})
}

func TestStderrCapped(t *testing.T) {
	s := hostile()
	s.Scenarios[0].Runs[0].Fault.Stderr = strings.Repeat("gate residual 0.25\n", 5000)
	out := string(render(t, func(b *bytes.Buffer) error { return report.JUnit(b, s) }))
	doc := parseJUnit(t, []byte(out))
	se := doc.Suites[0].Cases[1].SystemErr
	if n := strings.Count(se, "gate residual"); n != 200 || !strings.HasPrefix(se, "[4800 earlier lines not shown]") {
		t.Errorf("system-err keeps %d lines, starts %q; want the last 200 with a note", n, se[:40])
	}
}

// odd returns suites with values a renderer must survive: non-finite and
// extreme numbers, empty and missing parts.
func odd() map[string]*result.Suite {
	nan, inf := math.NaN(), math.Inf(1)
	pt := func(step int, x, y float64) result.Point { return result.Point{Step: step, X: x, Y: y} }
	base := func(sc result.Scenario) *result.Suite {
		return &result.Suite{Version: 1, Status: sc.Status, Scenarios: []result.Scenario{sc}}
	}
	return map[string]*result.Suite{
		"empty suite": {Version: 1},
		"no runs":     base(result.Scenario{Name: "quay_empty", Status: result.Error}),
		"nan everywhere": base(result.Scenario{Name: "quay_nan", Status: result.Fail, Position: []int{0, 2},
			Metrics: &result.Metrics{Runs: 1, GOSPA: []float64{nan, inf}, MeanGOSPA: nan, NEES: []float64{nan}, NEESLow: nan, NEESHigh: inf},
			Gates:   []result.Gate{{Name: "g", Status: result.Error, Estimate: nan, Low: -inf, High: inf}},
			Runs: []result.Run{{Status: result.Fail,
				Checks:  []result.Check{{Name: "reference", Status: result.Fail, First: &result.Divergence{Step: -3}, Diffs: []result.Diff{{Want: nan, Got: inf, Excess: nan}, {Excess: 1}}}},
				Metrics: &result.RunMetrics{GOSPA: []float64{nan}, NEES: []float64{-inf}},
				Trace: &result.Trace{
					Truth:        []result.Path{{ID: "a", Points: []result.Point{pt(0, nan, 1), pt(1, inf, 2)}}},
					Detections:   [][]result.Point{nil, {pt(1, nan, nan)}},
					Reference:    []result.Path{{ID: "r", Points: []result.Point{{Step: 0, X: 1, Y: 1, Ellipse: &[3]float64{nan, 0, 1}}}}},
					Tracker:      []result.Path{{ID: "t", Points: []result.Point{{Step: 0, X: 1, Y: 1, Ellipse: &[3]float64{-1, 5, -1}}}}},
					Associations: []string{"unheard-of"},
				}}}}),
		"extreme range": base(result.Scenario{Name: "quay_far", Status: result.Pass, Position: []int{0},
			Runs: []result.Run{{Status: result.Pass,
				Metrics: &result.RunMetrics{GOSPA: []float64{1e17, 1e17 + 2, -1e308, 1e308}},
				Trace: &result.Trace{Truth: []result.Path{{ID: "a", Points: []result.Point{pt(0, 1e17, 0), pt(1, 1e17+1, 0), pt(2, -1.7e308, 0), pt(3, 1.7e308, 0)}}},
					Tracker: []result.Path{{ID: "t", Points: []result.Point{{Step: 0, X: 5, Ellipse: &[3]float64{1e300, 0, 0}}}}}}}}}),
		"empty trace": base(result.Scenario{Name: "quay_blank", Status: result.Faulted, Position: []int{0, 1},
			Runs: []result.Run{{Status: result.Faulted, Fault: &result.Fault{Class: "hang"}, Trace: &result.Trace{}}}}),
	}
}

func TestOddSuites(t *testing.T) {
	for name, s := range odd() {
		t.Run(name, func(t *testing.T) {
			var b bytes.Buffer
			for fname, f := range map[string]func() error{
				"terminal": func() error { return report.Terminal(&b, s, report.TerminalOptions{Colour: true}) },
				"junit":    func() error { return report.JUnit(&b, s) },
				"markdown": func() error { return report.Markdown(&b, s, report.MarkdownOptions{}) },
				"html":     func() error { return report.HTML(&b, s) },
			} {
				b.Reset()
				done := make(chan error, 1)
				go func() { done <- f() }()
				select {
				case err := <-done:
					if err != nil {
						t.Errorf("%s: %v", fname, err)
					}
				case <-time.After(20 * time.Second):
					t.Fatalf("%s: renderer did not finish", fname)
				}
				if fname == "junit" {
					parseJUnit(t, b.Bytes())
				}
				if fname == "html" && (strings.Contains(b.String(), "NaN\"") || strings.Contains(b.String(), "Inf\"")) {
					t.Errorf("html: a non-finite number reached an SVG attribute")
				}
			}
		})
	}
}

// TestRunDetailsLimited: a scenario with many failing runs details only
// the first few in each format and counts the rest.
func TestRunDetailsLimited(t *testing.T) {
	s := sample.Suite()
	sc := &s.Scenarios[2] // coastal: run 1 fails
	for i := 3; i < 10; i++ {
		r := sc.Runs[1]
		r.Index, r.Seed, r.Trace = i, uint64(500+i), nil
		sc.Runs = append(sc.Runs, r)
	}
	sc.RunsPlanned = len(sc.Runs) // 10 runs, 8 failing
	term := string(render(t, func(b *bytes.Buffer) error { return report.Terminal(b, s, report.TerminalOptions{}) }))
	if n := strings.Count(term, "clutter_coastal_radar run "); n != 3 || !strings.Contains(term, "5 more runs that did not pass not shown") {
		t.Errorf("terminal details %d coastal runs; want 3 and a count of 5 more:\n%s", n, term)
	}
	md := string(render(t, func(b *bytes.Buffer) error { return report.Markdown(b, s, report.MarkdownOptions{Runs: 2}) }))
	if n := strings.Count(md, "**`clutter_coastal_radar` run "); n != 2 || !strings.Contains(md, "6 more runs that did not pass not shown") {
		t.Errorf("markdown details %d coastal runs; want 2 and a count of 6 more", n)
	}
	page := string(render(t, func(b *bytes.Buffer) error { return report.HTML(b, s) }))
	if n := strings.Count(page, "reference check: FAIL</h3>"); n != 5 || !strings.Contains(page, "3 more runs that did not pass not shown") {
		t.Errorf("html details %d failing reference checks; want 5 and a count of 3 more", n)
	}
}

// FuzzMarkdownLimit: whatever the text, the summary never exceeds its limit.
func FuzzMarkdownLimit(f *testing.F) {
	f.Add("a note", "quay", 300)
	f.Add(strings.Repeat("long note ", 400), "x", 500)
	f.Fuzz(func(t *testing.T, note, name string, limit int) {
		if limit < 1 || limit > 1<<20 {
			return
		}
		s := hostile()
		s.Notes = []string{note}
		s.Scenarios[0].Name = name
		var b bytes.Buffer
		if err := report.Markdown(&b, s, report.MarkdownOptions{Limit: limit}); err != nil {
			t.Fatal(err)
		}
		if b.Len() > limit {
			t.Fatalf("wrote %d bytes, limit %d", b.Len(), limit)
		}
	})
}
