package sample

import (
	"fmt"
	"math"
	"math/rand/v2"

	"trackgate/harness/metrics"
	"trackgate/harness/result"
)

// Suite returns the demonstration suite: the four scenarios of the package
// documentation, with runs and traces.
func Suite() *result.Suite {
	s := &result.Suite{
		Version: result.Version,
		Tool:    "trackgate 0.3.0",
		Platform: result.Platform{
			GoVersion: "go1.26.8", GOOS: "linux", GOARCH: "amd64", GOAMD64: "v1",
		},
		Tracker: result.Tracker{
			Command: []string{"./bin/berth-tracker", "--mode", "jsonl"},
			Name:    "berth-tracker",
			Version: "2.4.1",
		},
		Against: "both",
		Scenarios: []result.Scenario{
			harbour(),
			convoy(),
			coastal(),
			warehouse(),
		},
	}
	s.Status = result.Pass
	for _, sc := range s.Scenarios {
		s.Status = result.Worst(s.Status, sc.Status)
	}
	return s
}

// ptr returns a pointer to a copy of v.
func ptr[T any](v T) *T { return &v }

// object is a constant-velocity mover in the plane.
type object struct {
	id             string
	x, y, vx, vy   float64
	appear, vanish int // steps [appear, vanish)
}

// world simulates objects for a number of steps and builds a trace: noisy
// detections with clutter, a smoothed reference estimate with 2-sigma
// ellipses and a tracker estimate offset from it by jitter.
type world struct {
	rng      *rand.Rand
	steps    int
	dt       float64
	sigma    float64 // measurement standard deviation, metres
	clutter  int     // clutter detections per step (max)
	area     [4]float64
	oneDim   bool
	trackerJ float64 // tracker jitter about the reference, metres
}

func (w *world) trace(objs []object) *result.Trace {
	tr := &result.Trace{Detections: make([][]result.Point, w.steps)}
	for _, o := range objs {
		truth := result.Path{ID: o.id}
		ref := result.Path{ID: "R-" + o.id}
		trk := result.Path{ID: "T-" + o.id}
		var ex, ey float64
		started := false
		for k := 0; k < w.steps; k++ {
			if k < o.appear || k >= o.vanish {
				continue
			}
			t := float64(k) * w.dt
			x := o.x + o.vx*t
			y := o.y + o.vy*t
			if w.oneDim {
				y = 0
			}
			truth.Points = append(truth.Points, result.Point{Step: k, X: round(x), Y: round(y)})
			mx := x + w.sigma*w.rng.NormFloat64()
			my := y + w.sigma*w.rng.NormFloat64()
			if w.oneDim {
				my = 0
			}
			if w.rng.Float64() < 0.92 { // probability of detection
				tr.Detections[k] = append(tr.Detections[k], result.Point{Step: k, X: round(mx), Y: round(my)})
			}
			if !started {
				ex, ey, started = mx, my, true
			} else {
				ex = 0.6*ex + 0.4*mx + 0.6*o.vx*w.dt
				ey = 0.6*ey + 0.4*my + 0.6*o.vy*w.dt
			}
			if w.oneDim {
				ey = 0
			}
			// The 2-sigma ellipse shrinks as the track settles.
			s := 2 * w.sigma * (0.7 + 1.5*math.Exp(-float64(k-o.appear)/4))
			rho := 0.2 * math.Sin(float64(k)/5)
			el := [3]float64{round(s * s), round(rho * s * s), round(0.8 * s * s)}
			if w.oneDim {
				el = [3]float64{round(s * s), 0, 0}
			}
			ref.Points = append(ref.Points, result.Point{Step: k, X: round(ex), Y: round(ey), Ellipse: ptr(el)})
			jx := ex + w.trackerJ*w.rng.NormFloat64()
			jy := ey + w.trackerJ*w.rng.NormFloat64()
			if w.oneDim {
				jy = 0
			}
			trk.Points = append(trk.Points, result.Point{Step: k, X: round(jx), Y: round(jy), Ellipse: ptr(el)})
		}
		tr.Truth = append(tr.Truth, truth)
		tr.Reference = append(tr.Reference, ref)
		tr.Tracker = append(tr.Tracker, trk)
	}
	for k := 0; k < w.steps; k++ {
		n := w.rng.IntN(w.clutter + 1)
		for i := 0; i < n; i++ {
			x := w.area[0] + (w.area[1]-w.area[0])*w.rng.Float64()
			y := w.area[2] + (w.area[3]-w.area[2])*w.rng.Float64()
			if w.oneDim {
				y = 0
			}
			tr.Detections[k] = append(tr.Detections[k], result.Point{Step: k, X: round(x), Y: round(y)})
		}
	}
	tr.Associations = make([]string, w.steps)
	for k := range tr.Associations {
		tr.Associations[k] = "same"
	}
	return tr
}

// round keeps two decimals, so fixtures stay readable.
func round(x float64) float64 { return math.Round(x*100) / 100 }

// series returns n values of a GOSPA-like series: a start-up transient that
// settles to level, with noise.
func series(rng *rand.Rand, n int, level, spread float64) []float64 {
	out := make([]float64, n)
	for k := range out {
		out[k] = round(level + 3*level*math.Exp(-float64(k)/3) + spread*rng.Float64())
	}
	return out
}

func mean(xs []float64) float64 {
	if len(xs) == 0 {
		return 0
	}
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return round(s / float64(len(xs)))
}

func harbour() result.Scenario {
	rng := rand.New(rand.NewPCG(2026, 1))
	const steps, runs = 30, 3
	sc := result.Scenario{
		Name:        "crossing_harbour_ferries",
		File:        "scenarios/crossing_harbour_ferries.yaml",
		Description: "Two ferries cross the harbour mouth on opposite headings; pilot boat idles by the breakwater.",
		Hash:        "5b1f0c3e9a7d2e6b8c4f1a0d3e5b7c9a2f4e6d8b0a1c3e5f7a9b2d4c6e8f0a1b",
		StateDim:    4, MeasDim: 2, Position: []int{0, 2},
		Status: result.Pass, RunsPlanned: runs,
	}
	var all [][]float64
	var allN [][]float64
	for r := 0; r < runs; r++ {
		w := &world{rng: rng, steps: steps, dt: 2, sigma: 6, clutter: 2, area: [4]float64{-50, 450, -200, 220}, trackerJ: 0.4}
		run := result.Run{Index: r, Seed: 0x7a3c0001 + uint64(r), Status: result.Pass,
			Checks: []result.Check{
				{Name: "reference", Status: result.Pass},
				{Name: "golden", Status: result.Pass},
			}}
		g := series(rng, steps, 4.2, 1.5)
		nees := series(rng, steps, 3.6, 1.2)
		run.Metrics = &result.RunMetrics{GOSPA: g, NEES: nees, MeanGOSPA: mean(g), PositionRMSE: round(3.1 + rng.Float64()), MeanNIS: round(1.9 + 0.2*rng.Float64()), NEESStepsInBand: 0.93}
		if r == 0 {
			run.Trace = w.trace([]object{
				{id: "ferry-north", x: 0, y: 180, vx: 6.5, vy: -5.5, appear: 0, vanish: steps},
				{id: "ferry-south", x: 20, y: -170, vx: 6, vy: 5.8, appear: 2, vanish: steps},
				{id: "pilot-boat", x: 320, y: 40, vx: 0.2, vy: 0.1, appear: 0, vanish: steps},
			})
		}
		all = append(all, g)
		allN = append(allN, nees)
		sc.Runs = append(sc.Runs, run)
	}
	sc.Metrics = &result.Metrics{Runs: runs, GOSPA: avg(all), NEES: avg(allN), NEESLow: 2.65, NEESHigh: 5.51, NEESConfidence: 0.95, NEESInBand: 0.9, PositionRMSE: 3.52}
	sc.Metrics.MeanGOSPA = mean(sc.Metrics.GOSPA)
	sc.Gates = []result.Gate{{Name: "mean-gospa", Status: result.Pass, Estimate: sc.Metrics.MeanGOSPA, Low: sc.Metrics.MeanGOSPA - 0.6, High: sc.Metrics.MeanGOSPA + 0.6, Threshold: 9, Message: "mean GOSPA below 9 m"}}
	return sc
}

func avg(rows [][]float64) []float64 {
	out := make([]float64, len(rows[0]))
	for k := range out {
		s := 0.0
		for _, r := range rows {
			s += r[k]
		}
		out[k] = round(s / float64(len(rows)))
	}
	return out
}

func convoy() result.Scenario {
	rng := rand.New(rand.NewPCG(2026, 2))
	const steps, runs = 24, 2
	sc := result.Scenario{
		Name:        "convoy_quarry_lorries",
		File:        "scenarios/convoy_quarry_lorries.yaml",
		Description: "Three lorries leave the quarry gate nose to tail along the haul road; the empty third one closes up and passes the second at the weighbridge lay-by (along-road position only).",
		Hash:        "c0ffee11d2a3b4c5d6e7f8091a2b3c4d5e6f708192a3b4c5d6e7f8091a2b3c4d",
		StateDim:    2, MeasDim: 1, Position: []int{0},
		Status: result.Tie, RunsPlanned: runs,
	}
	for r := 0; r < runs; r++ {
		w := &world{rng: rng, steps: steps, dt: 1, sigma: 1.5, clutter: 1, area: [4]float64{0, 260, 0, 0}, oneDim: true, trackerJ: 0.15}
		run := result.Run{Index: r, Seed: 0x51de0000 + uint64(r), Status: result.Pass,
			Checks: []result.Check{{Name: "reference", Status: result.Pass}, {Name: "golden", Status: result.Pass}}}
		g := series(rng, steps, 1.8, 0.8)
		run.Metrics = &result.RunMetrics{GOSPA: g, MeanGOSPA: mean(g), PositionRMSE: round(0.9 + 0.3*rng.Float64())}
		if r == 1 {
			run.Status = result.Tie
			run.Checks[0] = result.Check{Name: "reference", Status: result.Tie,
				Message: "association changed at step 14, within the ambiguity threshold",
				Ties: []result.Divergence{{Step: 14, Kind: "association", Objects: []string{"lorry-2", "lorry-3"},
					Message: "detections 31 and 32 swapped between lorry-2 and lorry-3", Margin: ptr(0.041), Probability: ptr(0.47)}}}
		}
		if r == 1 {
			run.Trace = w.trace([]object{
				{id: "lorry-1", x: 12, vx: 9.5, appear: 0, vanish: steps},
				{id: "lorry-2", x: 0, vx: 9.0, appear: 0, vanish: steps},
				{id: "lorry-3", x: -14, vx: 9.8, appear: 1, vanish: steps},
			})
			run.Trace.Associations[14] = "tie"
			run.Trace.Associations[15] = "tie"
		}
		sc.Runs = append(sc.Runs, run)
	}
	sc.Metrics = &result.Metrics{Runs: runs, GOSPA: avg([][]float64{sc.Runs[0].Metrics.GOSPA, sc.Runs[1].Metrics.GOSPA}), PositionRMSE: 1.02, IDSwitches: 1}
	sc.Metrics.MeanGOSPA = mean(sc.Metrics.GOSPA)
	return sc
}

func coastal() result.Scenario {
	rng := rand.New(rand.NewPCG(2026, 3))
	const steps, runs = 40, 3
	sc := result.Scenario{
		Name:        "clutter_coastal_radar",
		File:        "scenarios/clutter_coastal_radar.yaml",
		Description: "Shore radar watches two fishing boats and a RIB through sea clutter off the headland.",
		Hash:        "9e8d7c6b5a4f3e2d1c0b9a8f7e6d5c4b3a2f1e0d9c8b7a6f5e4d3c2b1a0f9e8d",
		StateDim:    4, MeasDim: 2, Position: []int{0, 2},
		Status: result.Fail, RunsPlanned: runs,
	}
	for r := 0; r < runs; r++ {
		w := &world{rng: rng, steps: steps, dt: 3, sigma: 15, clutter: 9, area: [4]float64{-600, 900, -400, 800}, trackerJ: 2}
		run := result.Run{Index: r, Seed: 0xc0a57000 + uint64(r), Status: result.Pass,
			Checks: []result.Check{{Name: "reference", Status: result.Pass}, {Name: "golden", Status: result.Pass}}}
		g := series(rng, steps, 11, 5)
		nees := series(rng, steps, 4.4, 2)
		run.Metrics = &result.RunMetrics{GOSPA: g, NEES: nees, MeanGOSPA: mean(g), PositionRMSE: round(9 + 2*rng.Float64()), FalseTracks: rng.IntN(2)}
		if r == 1 {
			run.Status = result.Fail
			first := &result.Divergence{Step: 23, Kind: "association", Objects: []string{"rib", "clutter det 412"},
				Message: "tracker updated track rib with clutter detection 412; reference kept detection 409",
				Margin:  ptr(4.73), Probability: ptr(0.0183)}
			run.Checks[0] = result.Check{Name: "reference", Status: result.Fail,
				Message: "association departs from the reference at step 23",
				First:   first,
				Diffs: []result.Diff{
					{Path: "step 23 / track rib / mean[0]", Want: 412.37, Got: 455.02, Tolerance: "abs 0.5 + rel 1e-6", Excess: 42.15},
					{Path: "step 23 / track rib / mean[2]", Want: 218.9, Got: 241.64, Tolerance: "abs 0.5 + rel 1e-6", Excess: 22.24},
					{Path: "step 24 / track rib / mean[1]", Want: -4.1, Got: 7.77, Tolerance: "abs 0.05 + rel 1e-6", Excess: 11.82},
					{Path: "step 24 / track rib / cov[0][0]", Want: 180.2, Got: 96.4, Tolerance: "rel 1e-3", Excess: 0.464},
				},
				Truncated: 37}
			run.Checks[1] = result.Check{Name: "golden", Status: result.Fail,
				Message:   "41 values beyond tolerance against golden/clutter_coastal_radar/berth-tracker.jsonl",
				First:     &result.Divergence{Step: 23, Kind: "estimate", Objects: []string{"rib"}, Message: "track rib position departs from the blessed run"},
				Diffs:     []result.Diff{{Path: "step 23 / track rib / mean[0]", Want: 412.41, Got: 455.02, Tolerance: "abs 1e-6 + rel 1e-9", Excess: 42.61}},
				Truncated: 40}
			run.Trace = w.trace([]object{
				{id: "trawler", x: -400, y: 500, vx: 3.5, vy: -0.6, appear: 0, vanish: steps},
				{id: "crabber", x: 600, y: -250, vx: -2.2, vy: 2.4, appear: 5, vanish: steps},
				{id: "rib", x: 100, y: 100, vx: 2.5, vy: 1.0, appear: 3, vanish: 36},
			})
			// From step 23 the tracker follows clutter instead of the RIB.
			for i := range run.Trace.Tracker[2].Points {
				p := &run.Trace.Tracker[2].Points[i]
				if p.Step >= 23 {
					p.X = round(p.X + 14*float64(p.Step-22))
					p.Y = round(p.Y + 8*float64(p.Step-22))
				}
			}
			for k := 23; k < 36; k++ {
				run.Trace.Associations[k] = "differs"
			}
			for k := 23; k < steps; k++ {
				g[k] = round(g[k] + 30 + 2*float64(k-23))
			}
			run.Metrics.MeanGOSPA = mean(g)
			run.Metrics.IDSwitches = 1
		}
		sc.Runs = append(sc.Runs, run)
	}
	sc.Metrics = &result.Metrics{Runs: runs,
		GOSPA:   avg([][]float64{sc.Runs[0].Metrics.GOSPA, sc.Runs[1].Metrics.GOSPA, sc.Runs[2].Metrics.GOSPA}),
		NEES:    avg([][]float64{sc.Runs[0].Metrics.NEES, sc.Runs[1].Metrics.NEES, sc.Runs[2].Metrics.NEES}),
		NEESLow: 2.65, NEESHigh: 5.51, NEESConfidence: 0.95, NEESInBand: 0.775, PositionRMSE: 10.4, IDSwitches: 1, FalseTracks: 2}
	sc.Metrics.MeanGOSPA = mean(sc.Metrics.GOSPA)
	addSplit(&sc, 40, []result.ObjectError{
		{Object: "crabber", RMSEPosition: 8.91, RMSEVelocity: 1.37, Steps: 105},
		{Object: "rib", RMSEPosition: 17.46, RMSEVelocity: 3.02, Steps: 86},
		{Object: "trawler", RMSEPosition: 9.38, RMSEVelocity: 1.21, Steps: 120},
	})
	sc.Gates = []result.Gate{
		{Name: "mean-gospa", Status: result.Fail, Estimate: sc.Metrics.MeanGOSPA, Low: sc.Metrics.MeanGOSPA - 4, High: sc.Metrics.MeanGOSPA + 4, Threshold: 20, Message: fmt.Sprintf("mean GOSPA %.1f m over the 20 m limit", sc.Metrics.MeanGOSPA)},
		{Name: "nees-in-band", Status: result.Pass, Estimate: 0.775, Low: 0.62, High: 0.89, Threshold: 0.7, Message: "NEES within the 95% band on 77.5% of steps"},
	}
	return sc
}

func warehouse() result.Scenario {
	rng := rand.New(rand.NewPCG(2026, 4))
	const steps, runs = 50, 2
	sc := result.Scenario{
		Name:        "occlusion_warehouse_forklift",
		File:        "scenarios/occlusion_warehouse_forklift.yaml",
		Description: "A forklift passes behind racking aisle C while a picker walks the cross aisle.",
		Hash:        "0a1b2c3d4e5f60718293a4b5c6d7e8f90a1b2c3d4e5f60718293a4b5c6d7e8f9",
		StateDim:    4, MeasDim: 2, Position: []int{0, 2},
		Status: result.Faulted, RunsPlanned: runs,
	}
	for r := 0; r < runs; r++ {
		w := &world{rng: rng, steps: steps, dt: 0.5, sigma: 0.12, clutter: 1, area: [4]float64{0, 40, 0, 25}, trackerJ: 0.01}
		run := result.Run{Index: r, Seed: 0xf0f0 + uint64(r), Status: result.Pass,
			Checks: []result.Check{{Name: "reference", Status: result.Pass}}}
		g := series(rng, steps, 0.3, 0.1)
		run.Metrics = &result.RunMetrics{GOSPA: g, MeanGOSPA: mean(g), PositionRMSE: round(0.1 + 0.05*rng.Float64())}
		if r == 0 {
			run.Status = result.Faulted
			run.Checks[0] = result.Check{Name: "reference", Status: result.Faulted, Message: "tracker faulted at step 41; later steps not compared",
				First: &result.Divergence{Step: 41, Kind: "fault", Message: "tracker process exited with signal SIGSEGV"}}
			run.Fault = &result.Fault{Class: "crash", Step: 41, Line: 42,
				Message: "tracker exited with signal SIGSEGV while answering scan 41",
				Excerpt: `{"step":41,"tracks":[{"id":"fl-7","mean":[18.2,0.9,`,
				Stderr:  "berth-tracker: gating: occluded track fl-7 has covariance trace 1.3e+05\nassert failed: P[0][0] > 0 && P < \"limit\" & retry\x07\nSegmentation fault (core dumped)\n"}
			run.Trace = w.trace([]object{
				{id: "forklift", x: 2, y: 6, vx: 0.9, vy: 0.05, appear: 0, vanish: 41},
				{id: "picker", x: 20, y: 1, vx: 0.02, vy: 0.55, appear: 4, vanish: 41},
			})
			run.Trace.Detections = run.Trace.Detections[:41]
			run.Trace.Associations = run.Trace.Associations[:41]
			// Nothing is measured after the crash.
			run.Metrics.GOSPA = run.Metrics.GOSPA[:41]
			run.Metrics.MeanGOSPA = mean(run.Metrics.GOSPA)
		}
		sc.Runs = append(sc.Runs, run)
	}
	return sc
}

// addSplit fills the GOSPA split, OSPA, per-object errors and NIS of sc's
// runs and summary from their GOSPA series, without random draws (so the
// other scenarios' draws are unchanged): at each step GOSPAᵖ (p = 2) is
// split into missed and false parts of whole multiples of c²/2, half of
// what exceeds c²/2 each, the rest localisation; OSPA is 0.8·GOSPA capped
// at c; two NIS samples per step from step 1 swing around 2 (the mean of
// χ²₂). The summary averages the runs as the runner's summary does.
func addSplit(sc *result.Scenario, c float64, objects []result.ObjectError) {
	half := c * c / 2
	var locs, misses, falses, ospas, nis [][]float64
	m := sc.Metrics
	for ri := range sc.Runs {
		rm := sc.Runs[ri].Metrics
		n := len(rm.GOSPA)
		rm.GOSPALocalisation, rm.GOSPAMissed, rm.GOSPAFalse = make([]float64, n), make([]float64, n), make([]float64, n)
		rm.OSPA, rm.NISSamples = make([]float64, n), make([][]float64, n)
		rm.MeanGOSPALocalisation, rm.MeanGOSPAMissed, rm.MeanGOSPAFalse = 0, 0, 0
		rm.NIS = nil
		for k, g := range rm.GOSPA {
			power := g * g
			extra := math.Floor(math.Max(0, power-half) / 2 / half)
			rm.GOSPAMissed[k], rm.GOSPAFalse[k] = extra*half, extra*half
			rm.GOSPALocalisation[k] = power - 2*extra*half
			rm.OSPA[k] = round(math.Min(c, 0.8*g))
			rm.NISSamples[k] = []float64{}
			if k > 0 {
				a := round(2 + 1.6*math.Sin(float64(3*k+ri)))
				b := round(2 + 1.2*math.Cos(float64(5*k+2*ri)))
				rm.NISSamples[k] = []float64{a, b}
				rm.NIS = append(rm.NIS, (a+b)/2)
			}
		}
		rm.MeanGOSPALocalisation, rm.MeanGOSPAMissed, rm.MeanGOSPAFalse = mean(rm.GOSPALocalisation), mean(rm.GOSPAMissed), mean(rm.GOSPAFalse)
		rm.MeanOSPA = mean(rm.OSPA)
		rm.Objects = objects
		locs, misses, falses, ospas = append(locs, rm.GOSPALocalisation), append(misses, rm.GOSPAMissed), append(falses, rm.GOSPAFalse), append(ospas, rm.OSPA)
		for k, v := range rm.NISSamples {
			for len(nis) <= k {
				nis = append(nis, nil)
			}
			nis[k] = append(nis[k], v...)
		}
		m.MeanGOSPALocalisation += rm.MeanGOSPALocalisation / float64(len(sc.Runs))
		m.MeanGOSPAMissed += rm.MeanGOSPAMissed / float64(len(sc.Runs))
		m.MeanGOSPAFalse += rm.MeanGOSPAFalse / float64(len(sc.Runs))
		m.MeanOSPA += rm.MeanOSPA / float64(len(sc.Runs))
	}
	m.GOSPALocalisation, m.GOSPAMissed, m.GOSPAFalse, m.OSPA = avg(locs), avg(misses), avg(falses), avg(ospas)
	m.Objects = objects
	lo, hi := metrics.Interval(sc.MeasDim, 1, 0.95)
	total, inside, sum := 0, 0, 0.0
	for _, vs := range nis {
		for _, v := range vs {
			total++
			sum += v
			if v >= lo && v <= hi {
				inside++
			}
		}
	}
	for ri := range sc.Runs {
		rm := sc.Runs[ri].Metrics
		all, in := 0, 0
		s := 0.0
		for _, vs := range rm.NISSamples {
			for _, v := range vs {
				all++
				s += v
				if v >= lo && v <= hi {
					in++
				}
			}
		}
		rm.MeanNIS, rm.NISSamplesInBand = s/float64(all), float64(in)/float64(all)
	}
	m.MeanNIS, m.NISSamplesInBand = sum/float64(total), float64(inside)/float64(total)
	cons, err := metrics.CheckConsistency(nis, sc.MeasDim, 0.95)
	if err != nil {
		panic("sample: " + err.Error())
	}
	for _, st := range cons.Steps {
		if st.Count > 0 {
			m.NIS = append(m.NIS, st.Mean)
			m.NISSteps = append(m.NISSteps, st.Step)
			m.NISLowByStep = append(m.NISLowByStep, st.Lo)
			m.NISHighByStep = append(m.NISHighByStep, st.Hi)
		}
	}
	m.NISConfidence, m.NISInBand = 0.95, cons.InsideFraction
}
