package compare

import (
	"math"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/mot"
)

func TestFrames(t *testing.T) {
	cov := func(v float64) mot.Mat { m, _ := mot.MatFromRows([][]float64{{v, 0}, {0, 1}}); return m }
	want := []mot.Frame{
		{Step: 0, Tracks: []mot.Estimate{{Track: "ferry", Mean: []float64{100, 2, 50}, Cov: cov(4)}}},
		{Step: 1, Tracks: []mot.Estimate{{Track: "ferry", Mean: []float64{102, 2, 50}, Cov: cov(4), Detection: 3, HasDetection: true}, {Track: "tug", Mean: []float64{0, 0, 0}}}},
		{Step: 2, Tracks: nil},
	}
	got := []mot.Frame{
		{Step: 0, Tracks: []mot.Estimate{{Track: "c1", Mean: []float64{100, 2, 50 + 1e-13}, Cov: cov(4)}}},
		{Step: 1, Tracks: []mot.Estimate{{Track: "c1", Mean: []float64{102, 2, 50.001}, Cov: cov(4.5), Detection: mot.NoDetection, HasDetection: true}, {Track: "c5", Mean: []float64{1, 1, 1}}}},
		{Step: 3, Tracks: nil},
	}
	p := Profile{Mean: Rule{Abs: 1e-9}, Cov: Rule{Rel: 0.01}}
	res := Frames(p, want, got, map[string]string{"c1": "ferry"})
	ignore := cmpopts.IgnoreFields(Diff{}, "Err", "Bound", "Excess", "ULPs", "Rule")
	wantDiffs := []Diff{
		{Kind: Value, Path: "step 1 / track ferry / mean[2]", Want: 50, Got: 50.001},
		{Kind: Association, Path: "step 1 / track ferry / detection", Want: 3, Got: -1},
		{Kind: Value, Path: "step 1 / track ferry / cov[0,0]", Want: 4, Got: 4.5},
		{Kind: Missing, Path: "step 1 / track tug"},
		{Kind: Extra, Path: "step 1 / tracker track c5"},
		{Kind: Missing, Path: "step 2"},
		{Kind: Extra, Path: "step 3"},
	}
	if diff := cmp.Diff(wantDiffs, res.Diffs, ignore); diff != "" {
		t.Errorf("Frames diffs (-want +got):\n%s", diff)
	}
	d := res.Diffs[0]
	// 50.001 − 50 in float64 (not in exact constant arithmetic); the bound
	// is the absolute 1e-9.
	hi, lo := 50.001, 50.0
	if d.Err != hi-lo || d.Bound != 1e-9 || d.Excess != d.Err-1e-9 || d.Rule != p.Mean {
		t.Errorf("diff figures = %+v", d)
	}
	if res.Compared != 3+4+3+4 {
		t.Errorf("Compared = %d, want 14", res.Compared)
	}
	if w := res.Worst(1); len(w) != 1 || w[0].Path != "step 1 / track ferry / mean[2]" {
		t.Errorf("Worst(1) = %v", w)
	}
}

func TestFramesNotOneToOne(t *testing.T) {
	want := []mot.Frame{{Step: 4, Tracks: []mot.Estimate{{Track: "barge", Mean: []float64{1}}}}}
	got := []mot.Frame{{Step: 4, Tracks: []mot.Estimate{{Track: "a", Mean: []float64{1}}, {Track: "b", Mean: []float64{7}}}}}
	res := Frames(BitExact(), want, got, map[string]string{"a": "barge", "b": "barge"})
	if len(res.Diffs) != 1 || res.Diffs[0].Kind != Extra || res.Diffs[0].Path != "step 4 / tracker track b" {
		t.Errorf("Frames diffs = %v, want one Extra for tracker track b", res.Diffs)
	}
}

func TestShapeAndMetrics(t *testing.T) {
	var res Result
	res.Floats("mean", Rule{}, []float64{1, 2}, []float64{1})
	res.Mat("cov", Rule{}, mot.NewMat(2, 2), mot.NewMat(3, 3))
	if len(res.Diffs) != 2 || res.Diffs[0].Kind != Shape || res.Diffs[1].Want != 4 || res.Diffs[1].Got != 9 {
		t.Errorf("shape diffs = %+v", res.Diffs)
	}
	m := Metrics(BitExact(), map[string]float64{"gospa": 2, "nees": math.NaN(), "lost": 0},
		map[string]float64{"gospa": 2, "nees": math.NaN(), "false": 1})
	paths := []string{}
	for _, d := range m.Diffs {
		paths = append(paths, d.Kind.String()+" "+d.Path)
	}
	want := []string{"extra metric false", "missing metric lost", "value metric nees"}
	if diff := cmp.Diff(want, paths); diff != "" {
		t.Errorf("Metrics diffs (-want +got):\n%s", diff)
	}
	if !math.IsInf(m.Diffs[2].Excess, 1) {
		t.Errorf("NaN excess = %v, want +Inf", m.Diffs[2].Excess)
	}
}
