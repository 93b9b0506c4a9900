package report

import (
	"bytes"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"trackgate/harness/result"
)

// TestBandPath checks the stepped band polygon against coordinates worked
// by hand. The frame maps x ∈ [0, 4] to 0..100 px (25 px a step) and
// y ∈ [0, 10] to 100..0 px (py = 100 − 10y). Each step's bounds hold from
// k−½ to k+½, clipped to the frame; a step whose bounds are not finite or
// not ordered is a gap, which starts a new closed subpath (path commands
// M, H, V, Z: W3C, "Scalable Vector Graphics (SVG) 1.1 (Second Edition)",
// 2011, §8.3 "Path data").
func TestBandPath(t *testing.T) {
	f := &frame{left: 0, top: 0, width: 100, height: 100, x0: 0, x1: 4, y0: 0, y1: 10}
	nan := math.NaN()
	for _, tt := range []struct {
		name   string
		lo, hi []float64
		want   string
	}{
		// Steps 0–1: upper edge at y=5 (50 px) from x=−½ (clipped to 0)
		// to 1½ (37.5 px); lower edge 2 (80 px) back to ½ (12.5 px), then
		// 1 (90 px) to 0. Step 3: 6 (40 px) from 2½ (62.5 px) to 3½
		// (87.5 px), lower edge 1 (90 px).
		{"gap at a NaN", []float64{1, 2, nan, 1}, []float64{5, 5, nan, 6},
			"M0.0 50.0 H37.5 V80.0 H12.5 V90.0 H0.0 Z M62.5 40.0 H87.5 V90.0 H62.5 Z"},
		// Step 1 inverted is a gap too; steps 2–3 share their bounds.
		{"gap at inverted bounds", []float64{1, 6, 2, 2}, []float64{5, 4, 8, 8},
			"M0.0 50.0 H12.5 V90.0 H0.0 Z M37.5 20.0 H87.5 V80.0 H37.5 Z"},
		{"nothing drawable", []float64{nan, math.Inf(-1)}, []float64{1, 0}, ""},
		// Uneven lengths: only the steps both edges cover.
		{"uneven", []float64{1, 1, 1}, []float64{5}, "M0.0 50.0 H12.5 V90.0 H0.0 Z"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			b := &band{lo: tt.lo, hi: tt.hi}
			if got := b.path(f); got != tt.want {
				t.Errorf("path\n got %q\nwant %q", got, tt.want)
			}
		})
	}
}

// neesSVG returns the NEES plot of the page for sc, or fails.
func neesSVG(t *testing.T, sc *result.Scenario) string {
	t.Helper()
	out := string(neesPlot(sc, &sc.Runs[0]))
	if !strings.Contains(out, `aria-label="NEES over time"`) {
		t.Fatalf("no NEES plot: %q", out)
	}
	return out
}

// TestNEESPlotBands: the plot draws the band of each step when the summary
// has one, else the single band, else none; the legend names the band by
// its confidence.
func TestNEESPlotBands(t *testing.T) {
	base := func() *result.Scenario {
		return &result.Scenario{Name: "quayside-cranes", StateDim: 4, Runs: []result.Run{{Index: 0,
			Metrics: &result.RunMetrics{NEES: []float64{4, 5, 3, 4}}}},
			Metrics: &result.Metrics{Runs: 8, NEES: []float64{4.1, 3.9, 4.2, 4.0}, NEESConfidence: 0.99}}
	}
	stepped := regexp.MustCompile(`<path class="band" d="(M[^"]+)"><title>99% band for each step&#39;s number of values</title></path>`)
	rect := regexp.MustCompile(`<rect class="band" x="[^"]+" y="[^"]+" width="[^"]+" height="[^"]+"><title>`)

	sc := base()
	sc.Metrics.NEESLowByStep = []float64{3.0, 3.3, 3.3, 3.0}
	sc.Metrics.NEESHighByStep = []float64{5.2, 4.8, 4.8, 5.2}
	out := neesSVG(t, sc)
	m := stepped.FindStringSubmatch(out)
	if m == nil {
		t.Fatalf("no stepped band in %q", out)
	}
	// Three heights on each edge: the path turns vertically twice on the
	// way out and twice on the way back, plus once at the right end.
	if n := strings.Count(m[1], "V"); n != 5 || strings.Count(m[1], "M") != 1 {
		t.Errorf("band path %q: %d vertical moves, want 5 in one polygon", m[1], n)
	}
	if rect.MatchString(out) || !strings.Contains(out, ">99% band</text>") {
		t.Errorf("stepped band: a rectangle drawn too, or no legend entry: %q", out)
	}

	// The page of a suite carries the same plot.
	var page bytes.Buffer
	suite := &result.Suite{Version: result.Version, Against: "reference", Status: result.Pass, Scenarios: []result.Scenario{*sc}}
	if err := HTML(&page, suite); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(page.String(), m[0]) {
		t.Error("the HTML page lacks the stepped band")
	}

	// With both, the per-step bounds win.
	sc.Metrics.NEESLow, sc.Metrics.NEESHigh = 1, 9
	if out := neesSVG(t, sc); !stepped.MatchString(out) || rect.MatchString(out) {
		t.Errorf("with both bands, want the stepped one only: %q", out)
	}

	// The single band alone is a rectangle.
	sc = base()
	sc.Metrics.NEESLow, sc.Metrics.NEESHigh = 3.1, 5.0
	if out := neesSVG(t, sc); !rect.MatchString(out) || stepped.MatchString(out) || !strings.Contains(out, ">99% band</text>") {
		t.Errorf("single band: want a rectangle: %q", out)
	}

	// No band, or bounds that cannot be drawn: no band and no legend entry.
	for name, mod := range map[string]func(*result.Metrics){
		"none": func(*result.Metrics) {},
		"not finite": func(m *result.Metrics) {
			m.NEESLowByStep = []float64{math.NaN(), math.NaN(), math.NaN(), math.NaN()}
			m.NEESHighByStep = []float64{math.Inf(1), 1, 1, 1}
		},
	} {
		sc = base()
		mod(sc.Metrics)
		if out := neesSVG(t, sc); strings.Contains(out, `class="band"`) || strings.Contains(out, "band</text>") {
			t.Errorf("%s: a band is drawn: %q", name, out)
		}
	}

	// A confidence the result does not state is not printed as 0 %.
	sc = base()
	sc.Metrics.NEESConfidence = 0
	sc.Metrics.NEESLowByStep = []float64{3, 3, 3, 3}
	sc.Metrics.NEESHighByStep = []float64{5, 5, 5, 5}
	if out := neesSVG(t, sc); !strings.Contains(out, ">acceptance band</text>") {
		t.Errorf("no confidence: legend %q", out)
	}
}

// TestBandPathSteps: with the steps of the bounds given, a step left out
// (no average there) is a gap, and each bound spans its own step.
func TestBandPathSteps(t *testing.T) {
	f := &frame{left: 0, top: 0, width: 100, height: 100, x0: 0, x1: 4, y0: 0, y1: 10}
	b := &band{lo: []float64{1, 1, 2}, hi: []float64{5, 5, 6}, xs: []float64{0, 1, 3}}
	// Steps 0–1 from 0 (−½ clipped) to 1½ (37.5 px); step 3 from 2½
	// (62.5 px) to 3½ (87.5 px), 6 (40 px) over 2 (80 px).
	want := "M0.0 50.0 H37.5 V90.0 H0.0 Z M62.5 40.0 H87.5 V80.0 H62.5 Z"
	if got := b.path(f); got != want {
		t.Errorf("path\n got %q\nwant %q", got, want)
	}
}

// firstX returns the x pixel of the first point of the polyline whose
// title is title.
func firstX(t *testing.T, svg, title string) string {
	t.Helper()
	m := regexp.MustCompile(`<polyline class="[a-z]+" points="([0-9.]+),[^"]*"><title>` + regexp.QuoteMeta(title) + `</title>`).FindStringSubmatch(svg)
	if m == nil {
		t.Fatalf("no polyline %q in %q", title, svg)
	}
	return m[1]
}

// TestNEESPlotAtSteps: when the summary names the steps of its averages,
// the averages, their band and the run's NEES (from its samples, which
// keep every step) are placed at their steps; a result without the steps
// places the values one after the other, as before.
func TestNEESPlotAtSteps(t *testing.T) {
	sc := &result.Scenario{Name: "ferry-ramp", StateDim: 4,
		Runs: []result.Run{{Index: 0, Metrics: &result.RunMetrics{NEES: []float64{4, 5.5},
			NEESSamples: [][]float64{{}, {}, {4}, {5, 6}, {}}}}},
		Metrics: &result.Metrics{Runs: 2, NEES: []float64{4.2, 5.1, 3.8}, NEESSteps: []int{2, 3, 4},
			NEESLowByStep: []float64{2, 3, 3}, NEESHighByStep: []float64{7, 6, 6}, NEESConfidence: 0.95}}
	left := "62.0" // the plot area's left edge, step 0
	out := neesSVG(t, sc)
	if !strings.Contains(out, `<rect class="area" x="`+left+`"`) {
		t.Fatalf("plot area does not start at %s: %q", left, out)
	}
	run, avg := firstX(t, out, "run 0"), firstX(t, out, "average of 2 runs")
	if run != avg || run == left {
		t.Errorf("first run value at x=%s, first average at x=%s; want both at step 2, right of %s", run, avg, left)
	}
	// The band starts half a step before step 2, left of the first average.
	m := regexp.MustCompile(`<path class="band" d="M([0-9.]+) `).FindStringSubmatch(out)
	px := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	if m == nil || !(px(left) < px(m[1]) && px(m[1]) < px(avg)) {
		t.Errorf("band starts at %v; want between %s and %s", m, left, avg)
	}

	sc.Metrics.NEESSteps = nil
	out = neesSVG(t, sc)
	if run, avg := firstX(t, out, "run 0"), firstX(t, out, "average of 2 runs"); run != left || avg != left {
		t.Errorf("without steps: first values at x=%s and %s, want both at %s", run, avg, left)
	}
}
