package report_test

import (
	"bytes"
	"strings"
	"testing"

	"trackgate/harness/report"
	"trackgate/harness/result/sample"
)

// TestSurfaceMetricsShown: the reports show the GOSPA split and OSPA of
// the scenario whose summary records them (clutter_coastal_radar in the
// sample suite) and a dash elsewhere; the HTML page adds the split plot,
// the per-object RMSE table and the NIS plot with its band. The numbers
// are the sample's own summary values, formatted.
func TestSurfaceMetricsShown(t *testing.T) {
	s := sample.Suite()
	coastal := -1
	for i, sc := range s.Scenarios {
		if sc.Name == "clutter_coastal_radar" {
			coastal = i
		}
	}
	if coastal < 0 {
		t.Fatal("no clutter_coastal_radar in the sample suite")
	}
	m := s.Scenarios[coastal].Metrics
	md := string(render(t, func(b *bytes.Buffer) error { return report.Markdown(b, sample.Suite(), report.MarkdownOptions{}) }))
	// 491.34 / 160 / 160 and 17.213… in the sample's summary.
	if m.MeanGOSPAMissed != 160 || m.MeanGOSPAFalse != 160 {
		t.Fatalf("sample split changed: %v, %v", m.MeanGOSPAMissed, m.MeanGOSPAFalse)
	}
	for _, want := range []string{"| 491.3 / 160 / 160 | 17.21 |", "| 6.51 | – | – |"} {
		if !strings.Contains(md, want) {
			t.Errorf("markdown has no %q", want)
		}
	}
	var term bytes.Buffer
	if err := report.Terminal(&term, sample.Suite(), report.TerminalOptions{}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(term.String(), "clutter_coastal_radar metrics: mean GOSPA 23.02 (GOSPAᵖ = localisation 491.3 + missed 160 + false 160); mean OSPA 17.21") {
		t.Errorf("terminal detail block has no split line:\n%s", term.String())
	}
	html := string(render(t, func(b *bytes.Buffer) error { return report.HTML(b, sample.Suite()) }))
	for _, want := range []string{
		`aria-label="GOSPA split of run 1 over time"`, // the failing run is plotted
		`aria-label="GOSPA and OSPA over time"`,
		`aria-label="NIS over time"`,
		"<h3>Per-object RMSE</h3>",
		`<td>rib</td><td class="n">17.46</td><td class="n">3.02</td><td class="n">86</td>`,
		"<th class=\"n\">Mean OSPA (m)</th>",
	} {
		if n := strings.Count(html, want); n != 1 {
			t.Errorf("html has %q %d times, want once", want, n)
		}
	}
	// The NIS band is drawn step by step behind the average.
	i := strings.Index(html, `aria-label="NIS over time"`)
	if i < 0 || !strings.Contains(html[i:], `class="band"`) {
		t.Error("NIS plot without its band")
	}
}
