package runner

import (
	"math"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/metrics"
	"trackgate/harness/mot"
	"trackgate/harness/result"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
	"trackgate/reference/tracker"
)

// planar returns the truth of one step with objects at the given (x, y)
// positions, state [x, vx, y, vy] with the given velocities.
func planar(step int, ids []string, xy [][4]float64) mot.Truth {
	tr := mot.Truth{Step: step}
	for i, id := range ids {
		tr.Objects = append(tr.Objects, mot.TruthState{Object: id, X: []float64{xy[i][0], xy[i][1], xy[i][2], xy[i][3]}})
	}
	return tr
}

func est(track string, x ...float64) mot.Estimate {
	return mot.Estimate{Track: track, Mean: x}
}

// TestSurfaceGOSPASplitPublished: the stored parts of each step's GOSPAᵖ
// are the hand-computed localisation, missed and false parts and add up
// to the stored GOSPA to the power p; their time averages are stored too.
//
// Formula: A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson,
// "Generalized optimal sub-pattern assignment metric", 20th Int. Conf. on
// Information Fusion (FUSION), 2017, Proposition 1 (α = 2:
// GOSPAᵖ = min_γ Σ_{γ} dᵖ + (cᵖ/2)·(m + n − 2|γ|)). Every case is computed
// by hand from that formula; case G1 (X = {(0,0), (10,0)},
// Y = {(1,0), (10,2)}, c = 5): the pairs are 1 m and 2 m apart, both below
// c, so with p = 2 GOSPA² = 1² + 2² = 5 (GOSPA = √5, loc 5, no miss, no
// false) and with p = 1 GOSPA = 1 + 2 = 3.
func TestSurfaceGOSPASplitPublished(t *testing.T) {
	for _, tt := range []struct {
		name                string
		truth               [][4]float64
		tracks              [][4]float64
		p, c                float64
		gospa               float64
		loc, missed, falsep float64
	}{
		// G1, by hand as above.
		{"G1 p=2", [][4]float64{{0, 0, 0, 0}, {10, 0, 0, 0}}, [][4]float64{{1, 0, 0, 0}, {10, 0, 2, 0}}, 2, 5, math.Sqrt(5), 5, 0, 0},
		{"G1 p=1", [][4]float64{{0, 0, 0, 0}, {10, 0, 0, 0}}, [][4]float64{{1, 0, 0, 0}, {10, 0, 2, 0}}, 1, 5, 3, 3, 0, 0},
		// One track 5 m (3-4-5) from the first object; the second object
		// missed: 25 + 20²/2 = 225, GOSPA 15.
		{"one missed", [][4]float64{{0, 0, 0, 0}, {100, 0, 0, 0}}, [][4]float64{{3, 0, 4, 0}}, 2, 20, 15, 25, 200, 0},
		// A track 30 m off (beyond c = 20) counts as one miss and one
		// false track: 200 + 200 = 400, GOSPA 20; another false track far
		// away adds 200: 600.
		{"beyond cut-off", [][4]float64{{0, 0, 0, 0}}, [][4]float64{{30, 0, 0, 0}, {500, 0, 500, 0}}, 2, 20, math.Sqrt(600), 0, 200, 400},
		{"empty both", nil, nil, 2, 20, 0, 0, 0, 0},
	} {
		t.Run(tt.name, func(t *testing.T) {
			var ids []string
			for i := range tt.truth {
				ids = append(ids, string(rune('a'+i)))
			}
			fr := mot.Frame{Step: 0}
			for i, y := range tt.tracks {
				fr.Tracks = append(fr.Tracks, est(string(rune('A'+i)), y[0], y[1], y[2], y[3]))
			}
			// Two identical steps, so the time averages equal the step's.
			run := mot.Run{Truth: []mot.Truth{planar(0, ids, tt.truth), planar(1, ids, tt.truth)}}
			fr2 := fr
			fr2.Step = 1
			rs := score(run, []mot.Frame{fr, fr2}, []int{0, 2}, []int{1, 3}, tt.p, tt.c, 4)
			if rs.err != nil {
				t.Fatal(rs.err)
			}
			m := rs.metrics
			for k := 0; k < 2; k++ {
				if math.Abs(m.GOSPA[k]-tt.gospa) > 1e-12 {
					t.Errorf("step %d: GOSPA %v, want %v", k, m.GOSPA[k], tt.gospa)
				}
				if math.Abs(m.GOSPALocalisation[k]-tt.loc) > 1e-12 || m.GOSPAMissed[k] != tt.missed || m.GOSPAFalse[k] != tt.falsep {
					t.Errorf("step %d: parts %v + %v + %v, want %v + %v + %v", k, m.GOSPALocalisation[k], m.GOSPAMissed[k], m.GOSPAFalse[k], tt.loc, tt.missed, tt.falsep)
				}
				sum := m.GOSPALocalisation[k] + m.GOSPAMissed[k] + m.GOSPAFalse[k]
				if math.Abs(sum-math.Pow(m.GOSPA[k], tt.p)) > 1e-9*math.Max(1, sum) {
					t.Errorf("step %d: parts add to %v, GOSPA^p is %v", k, sum, math.Pow(m.GOSPA[k], tt.p))
				}
			}
			if math.Abs(m.MeanGOSPALocalisation-tt.loc) > 1e-12 || m.MeanGOSPAMissed != tt.missed || m.MeanGOSPAFalse != tt.falsep {
				t.Errorf("time averages %v, %v, %v; want %v, %v, %v", m.MeanGOSPALocalisation, m.MeanGOSPAMissed, m.MeanGOSPAFalse, tt.loc, tt.missed, tt.falsep)
			}
		})
	}
}

// TestSurfaceOSPAPublished: the stored OSPA of each step is metrics.OSPA
// on the same sets with the order and cut-off of GOSPA, and matches a hand
// computation of the definition.
//
// Formula: D. Schuhmacher, B.-T. Vo, B.-N. Vo, "A consistent metric for
// performance evaluation of multi-object filters", IEEE Trans. Signal
// Processing 56(8):3447–3457, 2008, Definition 3: for m ≤ n,
// OSPAᵖ = (1/n)·[min_π Σ d⁽ᶜ⁾ᵖ + cᵖ·(n − m)].
func TestSurfaceOSPAPublished(t *testing.T) {
	truth := [][]mot.Truth{
		// Step 0: two objects, one track 5 m from the first:
		// (1/2)·(25 + 400) = 212.5.
		{planar(0, []string{"a", "b"}, [][4]float64{{0, 0, 0, 0}, {100, 0, 0, 0}})},
	}[0]
	truth = append(truth, planar(1, []string{"a", "b"}, [][4]float64{{0, 0, 0, 0}, {100, 0, 0, 0}}))
	frames := []mot.Frame{
		{Step: 0, Tracks: []mot.Estimate{est("A", 3, 0, 4, 0)}},
		// Step 1: both covered, 1 m and 2 m off: (1/2)·(1 + 4) = 2.5.
		{Step: 1, Tracks: []mot.Estimate{est("A", 1, 0, 0, 0), est("B", 100, 0, 2, 0)}},
	}
	want := []float64{math.Sqrt(212.5), math.Sqrt(2.5)}
	rs := score(mot.Run{Truth: truth}, frames, []int{0, 2}, nil, 2, 20, 4)
	if rs.err != nil {
		t.Fatal(rs.err)
	}
	var ws metrics.Workspace
	params := metrics.Params{Order: 2, Cutoff: 20, Components: []int{0, 2}}
	for k := range want {
		if math.Abs(rs.metrics.OSPA[k]-want[k]) > 1e-12 {
			t.Errorf("step %d: OSPA %v, want %v by hand", k, rs.metrics.OSPA[k], want[k])
		}
		var x, y [][]float64
		for _, o := range truth[k].Objects {
			x = append(x, o.X)
		}
		for _, e := range frames[k].Tracks {
			y = append(y, e.Mean)
		}
		o, err := ws.OSPA(x, y, params)
		if err != nil {
			t.Fatal(err)
		}
		if rs.metrics.OSPA[k] != o.Value {
			t.Errorf("step %d: OSPA %v, metrics.OSPA %v", k, rs.metrics.OSPA[k], o.Value)
		}
	}
	if m := (want[0] + want[1]) / 2; math.Abs(rs.metrics.MeanOSPA-m) > 1e-12 {
		t.Errorf("mean OSPA %v, want %v", rs.metrics.MeanOSPA, m)
	}
}

// TestSurfaceObjectRMSEByHand: per-object RMSE over the steps a track
// covers the object, by hand (the root mean square error, common
// practice; Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to
// Tracking and Navigation", 2001, §3.7 for the RMS error, section from
// memory).
func TestSurfaceObjectRMSEByHand(t *testing.T) {
	ids := []string{"barge", "tug"}
	pos := [][4]float64{{0, 1, 0, 1}, {200, 0, 0, -1}}
	run := mot.Run{Truth: []mot.Truth{planar(0, ids, pos), planar(1, ids, pos), planar(2, ids, pos)}}
	frames := []mot.Frame{
		// barge: position error (3, 4), velocity error (1, 0).
		{Step: 0, Tracks: []mot.Estimate{est("t1", 3, 2, 4, 1)}},
		// barge uncovered; tug: position error (0, 1), velocity (0, 2).
		{Step: 1, Tracks: []mot.Estimate{est("t2", 200, 0, 1, 1)}},
		// barge: position error (6, 8), velocity error (0, −2); tug: exact.
		{Step: 2, Tracks: []mot.Estimate{est("t1", 6, 1, 8, -1), est("t2", 200, 0, 0, -1)}},
	}
	rs := score(run, frames, []int{0, 2}, []int{1, 3}, 2, 20, 4)
	if rs.err != nil {
		t.Fatal(rs.err)
	}
	want := []result.ObjectError{
		{Object: "barge", RMSEPosition: math.Sqrt((25 + 100) / 2.0), RMSEVelocity: math.Sqrt((1 + 4) / 2.0), Steps: 2},
		{Object: "tug", RMSEPosition: math.Sqrt((1 + 0) / 2.0), RMSEVelocity: math.Sqrt((4 + 0) / 2.0), Steps: 2},
	}
	got := rs.metrics.Objects
	if len(got) != len(want) {
		t.Fatalf("objects %+v, want %+v", got, want)
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.Object != w.Object || g.Steps != w.Steps || math.Abs(g.RMSEPosition-w.RMSEPosition) > 1e-12 || math.Abs(g.RMSEVelocity-w.RMSEVelocity) > 1e-12 {
			t.Errorf("object %d: %+v, want %+v", i, g, w)
		}
	}
}

// nisModel is a constant-velocity model in one axis, state [x, vx], with
// the position measured.
func nisModel() mot.Model {
	return mot.Model{StateDim: 2, MeasDim: 1, Interval: 1, PD: 0.9,
		F: mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, 1, 0, 1}},
		Q: mot.Mat{Rows: 2, Cols: 2, Data: []float64{0.5, 0, 0, 0.5}},
		H: mot.Mat{Rows: 1, Cols: 2, Data: []float64{1, 0}},
		R: mot.Mat{Rows: 1, Cols: 1, Data: []float64{0.5}}}
}

// TestSurfaceNISByHand: the NIS of a track's update from its own previous
// estimate, by hand. Previous estimate x = [0, 1], P = I; F = [[1, 1],
// [0, 1]], Q = ½I: x⁻ = [1, 1], P⁻ = F P Fᵀ + Q = [[2.5, 1], [1, 1.5]];
// H = [1, 0], R = ½: S = 3; z = 4 gives ν = 3 and NIS = 9/3 = 3, z = 0
// gives ν = −1 and NIS = 1/3. The NIS needs no ground truth: with the buoy
// 500 m away, beyond the GOSPA cut-off of 20 m, the track is a false track
// for GOSPA and still gives the same sample. Formula: Bar-Shalom, Li, Kirubarajan,
// "Estimation with Applications to Tracking and Navigation", Wiley, 2001,
// §5.2 (innovation covariance S = H P⁻ Hᵀ + R) and §5.4.2 (NIS νᵀS⁻¹ν).
func TestSurfaceNISByHand(t *testing.T) {
	eye := mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, 0, 0, 1}}
	truth := func(k int, x float64) mot.Truth {
		return mot.Truth{Step: k, Objects: []mot.TruthState{{Object: "buoy", X: []float64{x, 1}}}}
	}
	for _, tt := range []struct {
		name    string
		z       float64
		hasDet  bool
		prevCov mot.Mat
		far     bool      // the buoy beyond the cut-off from the track
		want    []float64 // samples at step 1; nil for none
	}{
		{"ahead", 4, true, eye, false, []float64{3}},
		{"beyond the cut-off", 4, true, eye, true, []float64{3}},
		{"behind", 0, true, eye, false, []float64{1.0 / 3}},
		{"no association reported", 4, false, eye, false, nil},
		{"no previous covariance", 4, true, mot.Mat{}, false, nil},
	} {
		t.Run(tt.name, func(t *testing.T) {
			off := 0.0
			if tt.far {
				off = 500
			}
			run := mot.Run{
				Truth: []mot.Truth{truth(0, off), truth(1, 1+off)},
				Scans: []mot.Scan{{Step: 0}, {Step: 1, Detections: []mot.Detection{{ID: 7, Z: []float64{tt.z}}}}},
			}
			frames := []mot.Frame{
				{Step: 0, Tracks: []mot.Estimate{{Track: "T", Mean: []float64{0, 1}, Cov: tt.prevCov}}},
				{Step: 1, Tracks: []mot.Estimate{{Track: "T", Mean: []float64{1, 1}, Cov: eye, Detection: 7, HasDetection: tt.hasDet}}},
			}
			if !tt.hasDet {
				frames[1].Tracks[0].Detection = mot.NoDetection
			}
			rs := score(run, frames, []int{0}, []int{1}, 2, 20, 2)
			if rs.err != nil {
				t.Fatal(rs.err)
			}
			if tt.far && (rs.metrics.FalseTracks == 0 || rs.metrics.GOSPAFalse[1] == 0) {
				t.Fatalf("the track is not beyond the cut-off: %+v", rs.metrics)
			}
			if err := addNIS(rs, nisModel(), run.Scans, frames); err != nil {
				t.Fatal(err)
			}
			m := rs.metrics
			if tt.want == nil {
				if m.NISSamples != nil || m.NIS != nil || m.MeanNIS != 0 {
					t.Errorf("NIS recorded without a sample: %v %v %v", m.NISSamples, m.NIS, m.MeanNIS)
				}
				return
			}
			if len(m.NISSamples) != 2 || len(m.NISSamples[0]) != 0 || len(m.NISSamples[1]) != 1 {
				t.Fatalf("samples %v, want none at step 0 and one at step 1", m.NISSamples)
			}
			if g := m.NISSamples[1][0]; math.Abs(g-tt.want[0]) > 1e-12 {
				t.Errorf("NIS %v, want %v", g, tt.want[0])
			}
			if len(m.NIS) != 1 || m.NIS[0] != m.NISSamples[1][0] || m.MeanNIS != m.NISSamples[1][0] {
				t.Errorf("series %v, mean %v", m.NIS, m.MeanNIS)
			}
			// χ²₁ two-sided 95 %: [0.000982069, 5.023886187]
			// (scipy.stats.chi2.ppf(0.025 and 0.975, 1); 0.001 and 5.024
			// in the NIST/SEMATECH e-Handbook of Statistical Methods,
			// 2012, §1.3.6.7.4, critical values of the chi-square
			// distribution, ν = 1): both samples lie inside.
			if m.NISSamplesInBand != 1 {
				t.Errorf("fraction in band %v, want 1", m.NISSamplesInBand)
			}
		})
	}
}

// TestSurfaceReferenceNISIsItsOwn: scored on the reference's own frames,
// every NIS sample equals the NIS the reference tracker recorded for that
// update (tracker.ObjectDetail.NIS): the track's previous frame is the
// reference's posterior, so predicting it with the model is the
// reference's own prediction. An independent path through the reference
// tracker's association code.
func TestSurfaceReferenceNISIsItsOwn(t *testing.T) {
	spec, err := scenario.Load(scenarioFile("crossing-harbour-vessels"))
	if err != nil {
		t.Fatal(err)
	}
	sm, err := sim.Prepare(spec)
	if err != nil {
		t.Fatal(err)
	}
	run := sm.Run(0)
	ex, err := tracker.RunAll(tracker.Config{Model: spec.Model, Objects: objectsOf(spec), K: 4}, run)
	if err != nil {
		t.Fatal(err)
	}
	pos, vel := axes(spec)
	rs := score(run, ex.Frames, pos, vel, 2, DefaultCutoff, spec.Model.StateDim)
	if rs.err != nil {
		t.Fatal(rs.err)
	}
	if err := addNIS(rs, spec.Model, run.Scans, ex.Frames); err != nil {
		t.Fatal(err)
	}
	m := rs.metrics
	compared := 0
	for k, vals := range m.NISSamples {
		own := map[string]float64{}
		for _, od := range ex.Steps[k].Objects {
			own[od.Object] = od.NIS
		}
		i := 0
		for _, e := range ex.Frames[k].Tracks {
			if !e.HasDetection || e.Detection == mot.NoDetection || k == 0 {
				continue
			}
			if !hasTrack(ex.Frames[k-1], e.Track) {
				continue
			}
			if i >= len(vals) {
				t.Fatalf("step %d: %d samples, track %s has none", k, len(vals), e.Track)
			}
			w, ok := own[e.Track]
			if !ok {
				t.Fatalf("step %d: the reference has no detail for track %s", k, e.Track)
			}
			if math.Abs(vals[i]-w) > 1e-9*math.Max(1, w) {
				t.Errorf("step %d track %s: NIS %v, the reference's own %v", k, e.Track, vals[i], w)
			}
			i++
			compared++
		}
		if i != len(vals) {
			t.Errorf("step %d: %d samples, %d expected", k, len(vals), i)
		}
	}
	if compared < 20 {
		t.Fatalf("only %d samples compared; the scenario no longer exercises the NIS", compared)
	}
	// For a consistent filter the NIS is χ²_m: its mean should be near m
	// (Bar-Shalom, Li, Kirubarajan 2001, §5.4.2); a loose sanity bound.
	if mm := float64(spec.Model.MeasDim); m.MeanNIS < 0.5*mm || m.MeanNIS > 1.5*mm {
		t.Errorf("mean NIS %v far from %v", m.MeanNIS, mm)
	}
}

func hasTrack(f mot.Frame, name string) bool {
	for _, e := range f.Tracks {
		if e.Track == name && e.Cov.Rows > 0 {
			return true
		}
	}
	return false
}

// TestSurfaceSummaryPools: the scenario summary averages the runs' split
// and OSPA, pools each object's RMSE weighted by its covered steps, and
// judges the per-step NIS averages against the band of their own sample
// counts. Band values: χ²₂ two-sided 95 % for one sample [0.050635616,
// 7.377758908] (scipy.stats.chi2.ppf(0.025 and 0.975, 2); 0.051 and 7.378
// in the NIST/SEMATECH e-Handbook of Statistical Methods, 2012,
// §1.3.6.7.4, critical values of the chi-square distribution, ν = 2; for
// two degrees of freedom also the closed form −2·ln(1 − q) of the χ²₂
// distribution function 1 − e^(−x/2), common practice). For the three
// samples of step 1, N·ε̄ ~ χ²₆ and the band is [1.237344246,
// 14.449375335]/3 (scipy.stats.chi2.ppf(0.025 and 0.975, 6); 1.237 and
// 14.449 in the same NIST table, ν = 6).
func TestSurfaceSummaryPools(t *testing.T) {
	runA := result.Run{Index: 0, Status: result.Pass, Values: []result.Value{}, Metrics: &result.RunMetrics{
		GOSPA: []float64{3, 5}, MeanGOSPA: 4,
		GOSPALocalisation: []float64{9, 5}, GOSPAMissed: []float64{0, 20}, GOSPAFalse: []float64{0, 0},
		MeanGOSPALocalisation: 7, MeanGOSPAMissed: 10,
		OSPA: []float64{2, 4}, MeanOSPA: 3,
		Objects:    []result.ObjectError{{Object: "skiff", RMSEPosition: 2, RMSEVelocity: 1, Steps: 1}},
		NISSamples: [][]float64{{}, {1, 9}},
	}}
	runB := result.Run{Index: 1, Status: result.Pass, Values: []result.Value{}, Metrics: &result.RunMetrics{
		GOSPA: []float64{1, 1}, MeanGOSPA: 1,
		GOSPALocalisation: []float64{1, 1}, GOSPAMissed: []float64{0, 0}, GOSPAFalse: []float64{0, 0},
		MeanGOSPALocalisation: 1,
		OSPA:                  []float64{1, 1}, MeanOSPA: 1,
		Objects: []result.ObjectError{
			{Object: "skiff", RMSEPosition: 4, RMSEVelocity: 0, Steps: 3},
			{Object: "launch", RMSEPosition: 1, RMSEVelocity: 1, Steps: 2}},
		NISSamples: [][]float64{{3}, {2}},
	}}
	s := &result.Suite{Scenarios: []result.Scenario{{Name: "marina", StateDim: 4, MeasDim: 2, RunsPlanned: 2, Runs: []result.Run{runA, runB}}}}
	if err := Judge(s, config.Config{}); err != nil {
		t.Fatal(err)
	}
	m := s.Scenarios[0].Metrics
	eq := func(what string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
			t.Errorf("%s %v, want %v", what, got, want)
		}
	}
	eq("mean localisation", m.MeanGOSPALocalisation, 4)
	eq("mean missed", m.MeanGOSPAMissed, 5)
	eq("mean false", m.MeanGOSPAFalse, 0)
	eq("mean OSPA", m.MeanOSPA, 2)
	eq("localisation at step 1", m.GOSPALocalisation[1], 3)
	eq("missed at step 1", m.GOSPAMissed[1], 10)
	eq("OSPA at step 1", m.OSPA[1], 2.5)
	if len(m.Objects) != 2 || m.Objects[0].Object != "launch" || m.Objects[1].Object != "skiff" {
		t.Fatalf("objects %+v, want launch then skiff", m.Objects)
	}
	// skiff: (1·2² + 3·4²)/4 = 13, velocity (1·1 + 3·0)/4.
	eq("skiff position RMSE", m.Objects[1].RMSEPosition, math.Sqrt(13))
	eq("skiff velocity RMSE", m.Objects[1].RMSEVelocity, 0.5)
	if m.Objects[1].Steps != 4 || m.Objects[0].Steps != 2 {
		t.Errorf("steps %d and %d, want 2 and 4", m.Objects[0].Steps, m.Objects[1].Steps)
	}
	// NIS samples: step 0 {3}, step 1 {1, 9, 2}; mean 15/4; 9 lies
	// outside [0.0506, 7.378], so 3 of 4 samples are in band.
	eq("mean NIS", m.MeanNIS, 15.0/4)
	eq("NIS samples in band", m.NISSamplesInBand, 0.75)
	if len(m.NIS) != 2 || m.NISSteps[0] != 0 || m.NISSteps[1] != 1 {
		t.Fatalf("NIS %v at steps %v", m.NIS, m.NISSteps)
	}
	eq("NIS at step 1", m.NIS[1], 4)
	if math.Abs(m.NISLowByStep[0]-0.050635616) > 1e-9 || math.Abs(m.NISHighByStep[0]-7.377758908) > 1e-9 {
		t.Errorf("band at step 0 [%v, %v], want [0.050635616, 7.377758908]", m.NISLowByStep[0], m.NISHighByStep[0])
	}
	if math.Abs(m.NISLowByStep[1]-1.237344246/3) > 1e-9 || math.Abs(m.NISHighByStep[1]-14.449375335/3) > 1e-9 {
		t.Errorf("band at step 1 [%v, %v], want [1.237344246, 14.449375335]/3", m.NISLowByStep[1], m.NISHighByStep[1])
	}
	// Step 0 (3) lies in its band; step 1 (mean 4 of 3 samples, band
	// [0.4124, 4.8165], see above) too.
	eq("steps in band", m.NISInBand, 1)
}

// BenchmarkSurfaceScoreWithNIS measures the scoring of the reference's
// frames of one run of a stock scenario: GOSPA with its split, OSPA,
// ScoreRun and the NIS.
func BenchmarkSurfaceScoreWithNIS(b *testing.B) {
	spec, err := scenario.Load(scenarioFile("crossing-harbour-vessels"))
	if err != nil {
		b.Fatal(err)
	}
	sm, err := sim.Prepare(spec)
	if err != nil {
		b.Fatal(err)
	}
	run := sm.Run(0)
	ex, err := tracker.RunAll(tracker.Config{Model: spec.Model, Objects: objectsOf(spec), K: 4}, run)
	if err != nil {
		b.Fatal(err)
	}
	pos, vel := axes(spec)
	b.ReportAllocs()
	for b.Loop() {
		rs := score(run, ex.Frames, pos, vel, 2, DefaultCutoff, spec.Model.StateDim)
		if rs.err != nil {
			b.Fatal(rs.err)
		}
		if err := addNIS(rs, spec.Model, run.Scans, ex.Frames); err != nil {
			b.Fatal(err)
		}
	}
}
