package report

import (
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"trackgate/harness/result"
)

// TestTicks checks the loose labelling of Heckbert, "Nice Numbers for
// Graph Labels", Graphics Gems (1990), worked by hand from the published
// algorithm: range = nicenum(hi−lo, false), d = nicenum(range/(n−1), true),
// graph from floor(lo/d)·d to ceil(hi/d)·d.
func TestTicks(t *testing.T) {
	tests := []struct {
		lo, hi            float64
		n                 int
		first, last, step float64
		why               string
	}{
		// 543−105 = 438 → nice (ceil) 500; 500/4 = 125 → rounded 100.
		{105, 543, 5, 100, 600, 100, "hand derivation"},
		// 0.87 → 1; 1/6 ≈ 0.167 → 0.2.
		{0.03, 0.9, 7, 0, 1, 0.2, "hand derivation"},
		// 41 → 50; 50/6 ≈ 8.33 → 10.
		{-12, 29, 7, -20, 30, 10, "hand derivation"},
		// Degenerate range 3..3 opens to 2..4: 2 → 2; 2/4 = 0.5 → 0.5.
		{3, 3, 5, 2, 4, 0.5, "degenerate range widened by max(10%, 1)"},
	}
	for _, tt := range tests {
		first, last, step := ticks(tt.lo, tt.hi, tt.n)
		if !close(first, tt.first) || !close(last, tt.last) || !close(step, tt.step) {
			t.Errorf("ticks(%v, %v, %d) = %v, %v, %v, want %v, %v, %v (%s)", tt.lo, tt.hi, tt.n, first, last, step, tt.first, tt.last, tt.step, tt.why)
		}
	}
	for _, x := range []float64{1e-4, 0.37, 1, 2.5, 7.1, 350, 9.9e5} {
		for _, round := range []bool{false, true} {
			v := niceNum(x, round)
			m := v / math.Pow(10, math.Floor(math.Log10(v)+1e-12))
			if !close(m, 1) && !close(m, 2) && !close(m, 5) {
				t.Errorf("niceNum(%v, %v) = %v, not 1, 2 or 5 times a power of ten", x, round, v)
			}
			if !round && v < x {
				t.Errorf("niceNum(%v, false) = %v is below x", x, v)
			}
		}
	}
}

func close(a, b float64) bool { return math.Abs(a-b) <= 1e-9*math.Max(1, math.Abs(b)) }

// TestEllipseAxes compares the closed-form eigen-decomposition of a
// symmetric 2×2 matrix with gonum's EigenSym (an independent library) and
// with a matrix built from known axes: R(30°)·diag(9, 1)·R(30°)ᵀ =
// [7, 2√3; 2√3, 3] has semi-axes 3 and 1 at 30° (hand derivation).
func TestEllipseAxes(t *testing.T) {
	r1, r2, th, ok := ellipseAxes(7, 2*math.Sqrt(3), 3)
	if !ok || !close(r1, 3) || !close(r2, 1) || !close(th, math.Pi/6) {
		t.Errorf("ellipseAxes(7, 2√3, 3) = %v, %v, %v, %v; want 3, 1, π/6", r1, r2, th, ok)
	}
	cases := [][3]float64{{4, 0, 1}, {1, 0, 4}, {2, 1.5, 2}, {10, -3, 1}, {0.01, 0.002, 0.03}, {5, 0, 5}}
	for _, c := range cases {
		r1, r2, th, ok := ellipseAxes(c[0], c[1], c[2])
		if !ok {
			t.Errorf("ellipseAxes(%v) not ok", c)
			continue
		}
		var eig mat.EigenSym
		if !eig.Factorize(mat.NewSymDense(2, []float64{c[0], c[1], c[1], c[2]}), true) {
			t.Fatal("gonum EigenSym failed")
		}
		vals := eig.Values(nil) // ascending
		if !close(r1*r1, vals[1]) || !close(r2*r2, vals[0]) {
			t.Errorf("ellipseAxes(%v) axes² = %v, %v; gonum eigenvalues %v", c, r1*r1, r2*r2, vals)
		}
		// The major axis direction must be an eigenvector of the larger
		// eigenvalue: A·u = λ₁·u.
		ux, uy := math.Cos(th), math.Sin(th)
		ax, ay := c[0]*ux+c[1]*uy, c[1]*ux+c[2]*uy
		if math.Abs(ax-vals[1]*ux) > 1e-9*vals[1] || math.Abs(ay-vals[1]*uy) > 1e-9*vals[1] {
			t.Errorf("ellipseAxes(%v): angle %v is not along the major eigenvector", c, th)
		}
	}
	for _, bad := range [][3]float64{{1, 2, 1}, {math.NaN(), 0, 1}, {math.Inf(1), 0, 1}} {
		if _, _, _, ok := ellipseAxes(bad[0], bad[1], bad[2]); ok {
			t.Errorf("ellipseAxes(%v) ok for a matrix that is not positive semi-definite or finite", bad)
		}
	}
}

func TestEqualAspect(t *testing.T) {
	f := newFrame(50, 10, 500, 300, -40, 460, -210, 230, true)
	ux := f.width / (f.x1 - f.x0)
	uy := f.height / (f.y1 - f.y0)
	if !close(ux, uy) {
		t.Errorf("pixels per metre: x %v, y %v; want equal", ux, uy)
	}
	if f.x0 > -40 || f.x1 < 460 || f.y0 > -210 || f.y1 < 230 {
		t.Errorf("frame [%v,%v]×[%v,%v] does not cover the data", f.x0, f.x1, f.y0, f.y1)
	}
}

func TestLabelsApart(t *testing.T) {
	var s svg
	s.labels([]label{{100, 50, "lorry-2"}, {102, 47, "lorry-3"}, {104, 52, "lorry-1"}, {400, 50, "far"}})
	ys := map[string]float64{}
	for _, m := range regexp.MustCompile(`y="([0-9.]+)">([a-z0-9-]+)<`).FindAllStringSubmatch(s.b.String(), -1) {
		ys[m[2]], _ = strconv.ParseFloat(m[1], 64)
	}
	near := []string{"lorry-3", "lorry-2", "lorry-1"}
	for i := 1; i < len(near); i++ {
		if d := ys[near[i]] - ys[near[i-1]]; d < 12 {
			t.Errorf("%s and %s only %v px apart", near[i-1], near[i], d)
		}
	}
	if ys["far"] != 50 {
		t.Errorf("a label with room moved to y=%v", ys["far"])
	}
}

// TestPlaneFramesTracks: clutter far from the objects is left out of the
// frame instead of shrinking the tracks.
func TestPlaneFramesTracks(t *testing.T) {
	tr := &result.Trace{
		Truth:      []result.Path{{ID: "skiff", Points: []result.Point{{Step: 0, X: 0, Y: 0}, {Step: 1, X: 10, Y: 5}}}},
		Detections: [][]result.Point{{{Step: 0, X: 0.5, Y: 0.2}, {Step: 0, X: 9000, Y: -4000}}, {{Step: 1, X: 9.7, Y: 5.1}}},
	}
	out := string(planePlot(tr, marks{first: -1}))
	dets := regexp.MustCompile(`<circle class="det"[^>]*r="2.2"`) // not the legend's
	if n := len(dets.FindAllString(out, -1)); n != 2 {
		t.Errorf("%d detections drawn, want the 2 near the skiff", n)
	}
	// The x ticks stay at the skiff's scale (steps of a few metres).
	if strings.Contains(out, ">9000<") || strings.Contains(out, ">5000<") {
		t.Error("the frame stretched to the far clutter")
	}
	// Without objects or tracks, the detections set the frame.
	only := string(planePlot(&result.Trace{Detections: tr.Detections}, marks{first: -1}))
	if n := len(dets.FindAllString(only, -1)); n != 3 {
		t.Errorf("%d detections drawn with nothing else to frame, want 3", n)
	}
}
