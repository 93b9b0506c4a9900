package runner

import (
	"math"
	"testing"

	"trackgate/harness/compare"
	"trackgate/harness/mot"
	"trackgate/reference/kalman"
	"trackgate/reference/tracker"
)

// TestUpdateWithScalar checks the update the conformance check computes
// for the tracker's own detection against the scalar Kalman filter in
// closed form (Bar-Shalom, Li, Kirubarajan, "Estimation with Applications
// to Tracking and Navigation", 2001, §5.2.3, eq. 5.2.3-11 to 5.2.3-16):
// with x⁻ = 10, P⁻ = 4, H = 1, R = 1 and z = 15, S = 5, K = 4/5,
// x = 10 + 4/5·5 = 14 and P = (1 − K)² P⁻ + K² R = 4/25·4 + 16/25 = 0.8.
func TestUpdateWithScalar(t *testing.T) {
	model := mot.Model{StateDim: 1, MeasDim: 1, Interval: 1, F: mot.Identity(1), Q: mot.NewMat(1, 1),
		H: mot.Identity(1), R: mot.Identity(1), PD: 0.9, GateProb: 0.999}
	f, err := kalman.New(model)
	if err != nil {
		t.Fatal(err)
	}
	od := tracker.ObjectDetail{Object: "buoy", PredMean: []float64{10}, PredCov: mot.Mat{Rows: 1, Cols: 1, Data: []float64{4}}}
	scan := mot.Scan{Step: 3, Detections: []mot.Detection{{ID: 8, Z: []float64{-40}}, {ID: 9, Z: []float64{15}}}}
	x, p, err := updateWith(f, od, 9, scan)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(x[0]-14) > 1e-12 || math.Abs(p.Data[0]-0.8) > 1e-12 {
		t.Errorf("updateWith = %v, %v; want 14, 0.8", x, p.Data)
	}
	// A miss leaves the prediction.
	x, p, _ = updateWith(f, od, mot.NoDetection, scan)
	if x[0] != 10 || p.Data[0] != 4 {
		t.Errorf("updateWith(miss) = %v, %v; want the prediction 10, 4", x, p.Data)
	}
	if _, _, err := updateWith(f, od, 77, scan); err == nil {
		t.Error("a detection outside the scan was accepted")
	}
}

// TestScoreClosedForms checks the per-step GOSPA (p = 2, α = 2, c = 20)
// against the closed forms of Rahmathullah, García-Fernández and Svensson,
// "Generalized optimal sub-pattern assignment metric", FUSION 2017, Prop. 1:
// one object matched at distance 5 (a 3-4-5 triangle) gives 5; one object
// with no track gives √(c²/2) = √200; a track 30 m away (beyond c) counts as
// a miss and a false track, √(c²/2 + c²/2) = 20.
func TestScoreClosedForms(t *testing.T) {
	truth := func(k int) mot.Truth {
		return mot.Truth{Step: k, Objects: []mot.TruthState{{Object: "tug", X: []float64{0, 1, 0, 1}}}}
	}
	run := mot.Run{Truth: []mot.Truth{truth(0), truth(1), truth(2)}}
	frames := []mot.Frame{
		{Step: 0, Tracks: []mot.Estimate{{Track: "a", Mean: []float64{3, 1, 4, 1}}}},
		{Step: 1},
		{Step: 2, Tracks: []mot.Estimate{{Track: "a", Mean: []float64{30, 1, 0, 1}}}},
	}
	rs := score(run, frames, []int{0, 2}, []int{1, 3}, 2, 20, 4)
	if rs.err != nil {
		t.Fatal(rs.err)
	}
	want := []float64{5, math.Sqrt(200), 20}
	for k, w := range want {
		if g := rs.metrics.GOSPA[k]; math.Abs(g-w) > 1e-12 {
			t.Errorf("GOSPA at step %d = %v, want %v", k, g, w)
		}
	}
	if rs.metrics.FalseTracks != 1 || rs.metrics.MissedObjects != 2 {
		t.Errorf("false tracks %d, missed object-steps %d; want 1 and 2", rs.metrics.FalseTracks, rs.metrics.MissedObjects)
	}
	if math.Abs(rs.metrics.MeanGOSPA-(25+math.Sqrt(200))/3) > 1e-12 {
		t.Errorf("mean GOSPA %v", rs.metrics.MeanGOSPA)
	}
}

func TestIsTie(t *testing.T) {
	tests := []struct {
		margin, threshold float64
		want              bool
	}{
		{0, 0, true}, // an exact tie is a tie even with no threshold
		{1e-10, 1e-9, true},
		{1e-9, 1e-9, true},
		{2e-9, 1e-9, false},
		{math.Inf(1), 1e9, false}, // a single hypothesis is never a tie
		{math.NaN(), 1, false},
	}
	for _, tt := range tests {
		if got := isTie(tt.margin, tt.threshold); got != tt.want {
			t.Errorf("isTie(%v, %v) = %v, want %v", tt.margin, tt.threshold, got, tt.want)
		}
	}
}

func TestHypothesisProb(t *testing.T) {
	d := &tracker.Detail{Hypotheses: []tracker.Hypothesis{
		{Prob: 0.6, Assoc: []int{1, 2}},
		{Prob: 0.3, Assoc: []int{2, 1}},
		{Prob: 0.1, Assoc: []int{1, mot.NoDetection}},
	}}
	tests := []struct {
		assoc []int
		want  float64 // −1: none
	}{
		{[]int{2, 1}, 0.3},
		{[]int{1, -2}, 0.6}, // the most probable agreeing with what was reported
		{[]int{-2, mot.NoDetection}, 0.1},
		{[]int{2, 2}, -1},
	}
	for _, tt := range tests {
		p := hypothesisProb(d, tt.assoc)
		if (p == nil) != (tt.want < 0) || (p != nil && *p != tt.want) {
			t.Errorf("hypothesisProb(%v) = %v, want %v", tt.assoc, p, tt.want)
		}
	}
}

// TestAlignRunAnchored: two tracks swap paths after an ambiguous step; the
// whole-run pairing would swap their names, the anchored pairing keeps the
// names they had before the tie.
func TestAlignRunAnchored(t *testing.T) {
	at := func(name string, x float64) mot.Estimate { return mot.Estimate{Track: name, Mean: []float64{x, 0}} }
	want := []mot.Frame{
		{Step: 0, Tracks: []mot.Estimate{at("west", -2), at("east", 2)}},
		{Step: 1, Tracks: []mot.Estimate{at("west", 5), at("east", -5)}},
		{Step: 2, Tracks: []mot.Estimate{at("west", 9), at("east", -9)}},
		{Step: 3, Tracks: []mot.Estimate{at("west", 9), at("east", -9)}},
	}
	got := []mot.Frame{
		{Step: 0, Tracks: []mot.Estimate{at("A", -2), at("B", 2)}},
		{Step: 1, Tracks: []mot.Estimate{at("A", -5), at("B", 5)}},
		{Step: 2, Tracks: []mot.Estimate{at("A", -9), at("B", 9), at("C", 40)}},
		{Step: 3, Tracks: []mot.Estimate{at("A", -9), at("B", 9), at("C", 40)}},
	}
	steps := []tracker.Detail{{Margin: 3}, {Margin: 0}, {Margin: 3}, {Margin: 3}}
	opts := compare.Options{Position: []int{0}, Cutoff: 20}
	names, err := alignRun(want, got, steps, 0, opts)
	if err != nil {
		t.Fatal(err)
	}
	if names["A"] != "west" || names["B"] != "east" || len(names) != 2 {
		t.Errorf("anchored names = %v, want A→west, B→east and C unpaired", names)
	}
	whole, err := compare.Align(want, got, opts)
	if err != nil {
		t.Fatal(err)
	}
	if whole.Names["A"] != "east" {
		t.Errorf("the whole-run pairing no longer swaps the names (%v): this test no longer shows why anchoring matters", whole.Names)
	}
}

// TestStartedFrom: a track paired with one object whose first estimate is
// another object's prior updated with the tracker's detection is found to
// have started from that other object.
func TestStartedFrom(t *testing.T) {
	model := mot.Model{StateDim: 1, MeasDim: 1, Interval: 1, F: mot.Identity(1), Q: mot.NewMat(1, 1),
		H: mot.Identity(1), R: mot.Identity(1), PD: 0.9, GateProb: 0.999}
	f, err := kalman.New(model)
	if err != nil {
		t.Fatal(err)
	}
	one := func(v float64) mot.Mat { return mot.Mat{Rows: 1, Cols: 1, Data: []float64{v}} }
	objs := map[string]mot.Object{
		"skiff": {ID: "skiff", Mean: []float64{0}, Cov: one(4), Appear: 2},
		"barge": {ID: "barge", Mean: []float64{10}, Cov: one(4), Appear: 2},
	}
	d := &tracker.Detail{Objects: []tracker.ObjectDetail{{Object: "skiff"}, {Object: "barge"}}}
	scan := mot.Scan{Step: 2, Detections: []mot.Detection{{ID: 4, Z: []float64{15}}}}
	// barge's prior updated with z = 15: 10 + 4/5·5 = 14, P = 0.8 (the
	// scalar closed form of TestUpdateWithScalar).
	est := mot.Estimate{Track: "t1", Mean: []float64{14}, Cov: one(0.8), Detection: 4, HasDetection: true}
	if got := startedFrom(f, compare.Float64Port(), 2, est, d, objs, "skiff", scan); got != "barge" {
		t.Errorf("startedFrom = %q, want barge", got)
	}
	est.Mean[0] = 13
	if got := startedFrom(f, compare.Float64Port(), 2, est, d, objs, "skiff", scan); got != "" {
		t.Errorf("startedFrom of an estimate no prior explains = %q, want none", got)
	}
}
