package report_test

import (
	"bytes"
	"context"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"trackgate/harness/report"
	"trackgate/harness/result"
	"trackgate/harness/result/sample"
)

func TestHTMLContent(t *testing.T) {
	out := string(render(t, func(b *bytes.Buffer) error { return report.HTML(b, sample.Suite()) }))
	// Self-contained: no scripts, no external references. The SVG
	// namespace is a name, not a fetched resource.
	rest := strings.ReplaceAll(out, `xmlns="http://www.w3.org/2000/svg"`, "")
	for _, bad := range []string{"<script", "http://", "https://", "<link", "@import", "url("} {
		if strings.Contains(rest, bad) {
			t.Errorf("page contains %q", bad)
		}
	}
	// One plane plot per scenario with a trace; 1-D convoy against time.
	if n := strings.Count(out, `aria-label="positions in the plane"`); n != 3 {
		t.Errorf("%d plane plots, want 3", n)
	}
	if n := strings.Count(out, `aria-label="position against time"`); n != 1 {
		t.Errorf("%d position-against-time plots, want 1 (convoy)", n)
	}
	if n := strings.Count(out, `aria-label="NEES over time"`); n != 2 {
		t.Errorf("%d NEES plots, want 2 (harbour, coastal)", n)
	}
	for _, want := range []string{
		"Plots show run 1 (seed 3232067585), the first run that did not pass.",
		`<ellipse class="refell"`,
		`class="diverge"`,
		"<title>first divergence, step 23 (association)</title>",
		`<rect class="differs"`,
		`<rect class="tiecell"`,
		`<rect class="band"`,
		"Segmentation fault (core dumped)",
		`retry\x07`,
	} {
		if !strings.Contains(out, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	// The divergence ring marks only the track named in the divergence
	// (the RIB), not every track at that step.
	if n := len(regexp.MustCompile(`<circle class="diverge"[^>]*><title>first divergence`).FindAllString(out, -1)); n != 1 {
		t.Errorf("%d divergence rings, want 1", n)
	}
	h := string(render(t, func(b *bytes.Buffer) error { return report.HTML(b, hostile()) }))
	if strings.Contains(h, "<script>alert") || strings.Contains(h, "\x1b") || strings.Contains(h, "\x00") {
		t.Error("hostile text reaches the page unescaped")
	}
	if !strings.Contains(h, "crossing_&lt;script&gt;alert(1)&lt;/script&gt;") {
		t.Error("scenario name not shown escaped")
	}
}

// browser returns the path of a headless-capable Chromium, or "".
func browser() string {
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome", "google-chrome-stable"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	return ""
}

// runBrowser loads file in headless Chromium with extra arguments and
// returns its standard output and standard error.
func runBrowser(t *testing.T, bin, file string, extra ...string) (string, string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	args := append([]string{"--headless", "--no-sandbox", "--disable-gpu",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--no-first-run", "--user-data-dir=" + t.TempDir(), "--enable-logging=stderr", "--v=0",
		"--hide-scrollbars"}, extra...)
	args = append(args, "file://"+file)
	cmd := exec.CommandContext(ctx, bin, args...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("%s: %v\n%s", bin, err, stderr.String())
	}
	return stdout.String(), stderr.String()
}

// consoleErrors returns the lines where the page logged an error or threw.
func consoleErrors(stderr string) []string {
	var out []string
	for _, l := range strings.Split(stderr, "\n") {
		if strings.Contains(l, "CONSOLE") && (strings.Contains(l, "Uncaught") || strings.Contains(strings.ToLower(l), "error")) {
			out = append(out, l)
		}
	}
	return out
}

// TestHTMLInBrowser loads the page in headless Chromium: no console
// errors, and a screenshot shows the tracker (orange) and reference (blue)
// tracks and the divergence marks (red), which a blank plot would not.
func TestHTMLInBrowser(t *testing.T) {
	if testing.Short() {
		t.Skip("browser test skipped in -short mode")
	}
	bin := browser()
	if bin == "" {
		t.Skip("no Chromium found (install Debian's chromium package to run this test)")
	}
	dir := t.TempDir()

	// The console check must be able to fail: a page that throws is caught.
	broken := filepath.Join(dir, "broken.html")
	os.WriteFile(broken, []byte(`<!DOCTYPE html><html><body><script>throw new Error("quay wall");</script></body></html>`), 0o644)
	if _, stderr := runBrowser(t, bin, broken, "--window-size=400,300", "--screenshot="+filepath.Join(dir, "broken.png")); len(consoleErrors(stderr)) == 0 {
		t.Fatalf("a page that throws shows no console error; the check is blind:\n%s", stderr)
	}

	// Only the failing coastal scenario, so the screenshot shows its plots.
	s := sample.Suite()
	s.Scenarios = []result.Scenario{s.Scenarios[2]}
	page := filepath.Join(dir, "coastal.html")
	var buf bytes.Buffer
	if err := report.HTML(&buf, s); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(page, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	// The page's SVG holds the tracks as polylines with their points.
	trk := regexp.MustCompile(`<polyline class="trk" points="([^"]*)"`).FindAllStringSubmatch(buf.String(), -1)
	if len(trk) < 3 {
		t.Fatalf("page has %d tracker polylines, want ≥ 3 (three tracks)", len(trk))
	}
	for _, m := range trk[:3] {
		if n := len(strings.Fields(m[1])); n < 10 {
			t.Errorf("tracker polyline with %d points, want ≥ 10", n)
		}
	}
	// One browser run: console errors from its log, pixels from its
	// screenshot.
	shot := filepath.Join(dir, "shot.png")
	_, stderr := runBrowser(t, bin, page, "--window-size=1100,1900", "--screenshot="+shot)
	if errs := consoleErrors(stderr); len(errs) > 0 {
		t.Errorf("console errors:\n%s", strings.Join(errs, "\n"))
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	orange := countNear(img, 0xe0, 0x62, 0x0d, 40)
	blue := countNear(img, 0x1f, 0x63, 0xb5, 40)
	red := countNear(img, 0xc0, 0x39, 0x2b, 30)
	t.Logf("screenshot %v: %d orange, %d blue, %d red pixels", img.Bounds().Size(), orange, blue, red)
	if orange < 300 || blue < 150 || red < 30 {
		t.Errorf("plots look blank: %d tracker-orange, %d reference-blue, %d divergence-red pixels", orange, blue, red)
	}
	// Keep the screenshot to look at: go test -artifacts -outputdir DIR.
	if data, err := os.ReadFile(shot); err == nil {
		os.WriteFile(filepath.Join(t.ArtifactDir(), "coastal.png"), data, 0o644)
	}
}

// countNear counts pixels within tol (per channel) of the colour r, g, b.
func countNear(img image.Image, r, g, b uint8, tol int) int {
	n := 0
	bd := img.Bounds()
	for y := bd.Min.Y; y < bd.Max.Y; y++ {
		for x := bd.Min.X; x < bd.Max.X; x++ {
			cr, cg, cb, _ := img.At(x, y).RGBA()
			if near(int(cr>>8), int(r), tol) && near(int(cg>>8), int(g), tol) && near(int(cb>>8), int(b), tol) {
				n++
			}
		}
	}
	return n
}

func near(a, b, tol int) bool { return a-b <= tol && b-a <= tol }
