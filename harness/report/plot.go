package report

import (
	"fmt"
	"html/template"
	"math"
	"sort"
	"strconv"
	"strings"
)

// niceNum returns a "nice" number near x (1, 2 or 5 times a power of ten):
// rounded to the nearest when round is set, else the smallest nice number
// not below x. Heckbert, Graphics Gems (1990).
func niceNum(x float64, round bool) float64 {
	if x <= 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return 1
	}
	exp := math.Floor(math.Log10(x))
	f := x / math.Pow(10, exp)
	var nf float64
	if round {
		switch {
		case f < 1.5:
			nf = 1
		case f < 3:
			nf = 2
		case f < 7:
			nf = 5
		default:
			nf = 10
		}
	} else {
		switch {
		case f <= 1:
			nf = 1
		case f <= 2:
			nf = 2
		case f <= 5:
			nf = 5
		default:
			nf = 10
		}
	}
	return nf * math.Pow(10, exp)
}

// ticks returns Heckbert's "loose" labels for the range [lo, hi] with about
// n ticks: the graph range [first, last] covers [lo, hi], and step is nice.
func ticks(lo, hi float64, n int) (first, last, step float64) {
	if !finite(lo, hi) {
		lo, hi = 0, 1
	}
	if math.IsInf(hi-lo, 0) {
		// The range overflows: halve both ends (ticks stay sensible).
		f, l, s := ticks(lo/2, hi/2, n)
		return 2 * f, 2 * l, 2 * s
	}
	if !(hi > lo) {
		// A degenerate range: open it around the value.
		d := math.Max(math.Abs(lo)*0.1, 1)
		lo, hi = lo-d, hi+d
	}
	if n < 2 {
		n = 2
	}
	r := niceNum(hi-lo, false)
	step = niceNum(r/float64(n-1), true)
	first = math.Floor(lo/step) * step
	last = math.Ceil(hi/step) * step
	return first, last, step
}

// maxTicks bounds the ticks of one axis, so absurd data (a range of 1e300
// in steps that vanish against the values) cannot stall a report.
const maxTicks = 60

// tickValues returns the multiples of step in [lo, hi], at most maxTicks.
func tickValues(lo, hi, step float64) []float64 {
	if !finite(lo, hi, step) || step <= 0 {
		return nil
	}
	var out []float64
	start := math.Ceil(lo/step) * step
	for i := 0; i < maxTicks; i++ {
		v := start + float64(i)*step
		if v > hi+step*1e-9 {
			break
		}
		out = append(out, v)
	}
	return out
}

// tickLabel formats a tick value with as many decimals as the step needs.
func tickLabel(v, step float64) string {
	dec := min(20, max(0, int(-math.Floor(math.Log10(step)))))
	if math.Abs(v) < step/1e6 {
		v = 0
	}
	return strconv.FormatFloat(v, 'f', dec, 64)
}

// f1 formats a pixel coordinate. A non-finite coordinate (which plotted
// data cannot produce, see finite) is written as 0 rather than as text an
// SVG reader rejects.
func f1(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		x = 0
	}
	return strconv.FormatFloat(x, 'f', 1, 64)
}

// frame maps data coordinates to pixels inside a plot area.
type frame struct {
	// Pixel box of the plot area.
	left, top, width, height float64
	// Data range shown.
	x0, x1, y0, y1 float64
	xstep, ystep   float64
}

func (f *frame) px(x float64) float64 { return f.left + (x-f.x0)/(f.x1-f.x0)*f.width }
func (f *frame) py(y float64) float64 { return f.top + f.height - (y-f.y0)/(f.y1-f.y0)*f.height }

// inside reports whether the data point lies in the frame's range.
func (f *frame) inside(x, y float64) bool { return x >= f.x0 && x <= f.x1 && y >= f.y0 && y <= f.y1 }

// newFrame builds a frame for data [xlo,xhi]×[ylo,yhi] with nice ticks.
// With equal set, one data unit has the same length on both axes: the
// shorter range is widened about its centre.
func newFrame(left, top, width, height, xlo, xhi, ylo, yhi float64, equal bool) *frame {
	f := &frame{left: left, top: top, width: width, height: height}
	f.x0, f.x1, f.xstep = ticks(xlo, xhi, 7)
	f.y0, f.y1, f.ystep = ticks(ylo, yhi, 5)
	if equal {
		sx := (f.x1 - f.x0) / width
		sy := (f.y1 - f.y0) / height
		s := math.Max(sx, sy) // data units per pixel
		cx, cy := (f.x0+f.x1)/2, (f.y0+f.y1)/2
		f.x0, f.x1 = cx-s*width/2, cx+s*width/2
		f.y0, f.y1 = cy-s*height/2, cy+s*height/2
		// One tick step for both axes, so the grid is square.
		_, _, st := ticks(f.x0, f.x1, 7)
		f.xstep, f.ystep = st, st
	}
	return f
}

// svg accumulates an SVG document.
type svg struct {
	b strings.Builder
}

func (s *svg) add(format string, args ...any) { fmt.Fprintf(&s.b, format, args...) }

func esc(s string) string { return template.HTMLEscapeString(s) }

// axes draws the grid, tick labels and axis titles.
func (s *svg) axes(f *frame, xtitle, ytitle string) {
	s.add(`<rect class="area" x="%s" y="%s" width="%s" height="%s"/>`, f1(f.left), f1(f.top), f1(f.width), f1(f.height))
	for _, v := range tickValues(f.x0, f.x1, f.xstep) {
		x := f.px(v)
		s.add(`<line class="grid" x1="%s" y1="%s" x2="%s" y2="%s"/>`, f1(x), f1(f.top), f1(x), f1(f.top+f.height))
		s.add(`<text class="tick" x="%s" y="%s" text-anchor="middle">%s</text>`, f1(x), f1(f.top+f.height+14), esc(tickLabel(v, f.xstep)))
	}
	for _, v := range tickValues(f.y0, f.y1, f.ystep) {
		y := f.py(v)
		s.add(`<line class="grid" x1="%s" y1="%s" x2="%s" y2="%s"/>`, f1(f.left), f1(y), f1(f.left+f.width), f1(y))
		s.add(`<text class="tick" x="%s" y="%s" text-anchor="end">%s</text>`, f1(f.left-5), f1(y+4), esc(tickLabel(v, f.ystep)))
	}
	s.add(`<text class="axis" x="%s" y="%s" text-anchor="middle">%s</text>`, f1(f.left+f.width/2), f1(f.top+f.height+32), esc(xtitle))
	s.add(`<text class="axis" transform="translate(%s %s) rotate(-90)" text-anchor="middle">%s</text>`, f1(f.left-42), f1(f.top+f.height/2), esc(ytitle))
}

// legendItem is one entry of a legend.
type legendItem struct {
	class, label string
	marker       string // "line", "dot", "band"
}

func (s *svg) legend(x, y float64, items []legendItem) {
	for i, it := range items {
		yy := y + float64(i)*16
		switch it.marker {
		case "dot":
			s.add(`<circle class="%s" cx="%s" cy="%s" r="3"/>`, it.class, f1(x+10), f1(yy))
		case "band":
			s.add(`<rect class="%s" x="%s" y="%s" width="20" height="8"/>`, it.class, f1(x), f1(yy-4))
		default:
			s.add(`<line class="%s" x1="%s" y1="%s" x2="%s" y2="%s"/>`, it.class, f1(x), f1(yy), f1(x+20), f1(yy))
		}
		s.add(`<text class="legend" x="%s" y="%s">%s</text>`, f1(x+26), f1(yy+4), esc(it.label))
	}
}

// ellipseAxes returns the semi-axes and orientation (radians,
// anticlockwise from the x axis) of the ellipse whose matrix is
// [a b; b c]: the square roots of its eigenvalues and the angle of the
// first eigenvector. ok is false when the matrix is not positive
// semi-definite or not finite.
func ellipseAxes(a, b, c float64) (r1, r2, theta float64, ok bool) {
	if math.IsNaN(a+b+c) || math.IsInf(a+b+c, 0) {
		return 0, 0, 0, false
	}
	mid := (a + c) / 2
	h := math.Hypot((a-c)/2, b)
	l1, l2 := mid+h, mid-h
	if l2 < -1e-12*math.Max(1, math.Abs(l1)) {
		return 0, 0, 0, false
	}
	return math.Sqrt(l1), math.Sqrt(math.Max(l2, 0)), 0.5 * math.Atan2(2*b, a-c), true
}

// polyline writes the points as an SVG polyline of class class; title
// becomes a tooltip. Fewer than two points draw nothing.
func (s *svg) polyline(class, title string, xs, ys []float64) {
	if len(xs) < 2 {
		if len(xs) == 1 {
			s.add(`<circle class="%s" cx="%s" cy="%s" r="2.5"><title>%s</title></circle>`, class, f1(xs[0]), f1(ys[0]), esc(title))
		}
		return
	}
	var pts strings.Builder
	for i := range xs {
		if i > 0 {
			pts.WriteByte(' ')
		}
		pts.WriteString(f1(xs[i]) + "," + f1(ys[i]))
	}
	s.add(`<polyline class="%s" points="%s"><title>%s</title></polyline>`, class, pts.String(), esc(title))
}

// label is a text placed at a pixel position.
type label struct {
	x, y float64
	text string
}

// labels draws the labels, moving them apart vertically where two would
// overlap (closer than 12 px in height and 70 px in width).
func (s *svg) labels(ls []label) {
	sort.SliceStable(ls, func(i, j int) bool { return ls[i].y < ls[j].y })
	for i := range ls {
		for j := 0; j < i; j++ {
			if math.Abs(ls[i].x-ls[j].x) < 70 && ls[i].y-ls[j].y < 12 {
				ls[i].y = ls[j].y + 12
			}
		}
	}
	for _, l := range ls {
		s.add(`<text class="label" x="%s" y="%s">%s</text>`, f1(l.x), f1(l.y), esc(l.text))
	}
}
