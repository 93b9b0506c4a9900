package tracker

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"

	"trackgate/harness/mot"
	"trackgate/reference/assign"
)

func near(got, want, abs, rel float64) bool {
	return math.Abs(got-want) <= abs+rel*math.Abs(want)
}

// posModel is a 2-D position-only model (F = I, Q = qI, H = I, R = rI).
func posModel(q, r, pd, lambda, pg float64) mot.Model {
	return mot.Model{
		StateDim: 2, MeasDim: 2, Interval: 1,
		F: mot.Identity(2), Q: mot.Mat{Rows: 2, Cols: 2, Data: []float64{q, 0, 0, q}},
		H: mot.Identity(2), R: mot.Mat{Rows: 2, Cols: 2, Data: []float64{r, 0, 0, r}},
		PD: pd, ClutterDensity: lambda, GateProb: pg,
	}
}

// workedScan is the GNN example of CHECK-VALUES §6.3 (values computed there
// with scipy 1.10.1 / numpy 1.24.2 and checked by brute force; the cost
// follows Blackman & Popoli 1999, §6.5 (section number from memory),
// c = −ln(P_D·g/λ), miss −ln(1−P_D)).
// Track 1: ẑ = (0,0), S = [[4,1],[1,3]]; track 2: ẑ = (5,5), S = 2I;
// P_D = 0.9, λ = 0.01, P_G = 0.99. With R = 0.5·I the predicted covariances
// are S − R.
func workedScan(pd float64) (mot.Model, []State, mot.Scan) {
	md := posModel(0, 0.5, pd, 0.01, 0.99)
	states := []State{
		{ID: "one", Mean: []float64{0, 0}, Cov: mot.Mat{Rows: 2, Cols: 2, Data: []float64{3.5, 1, 1, 2.5}}, Predicted: true},
		{ID: "two", Mean: []float64{5, 5}, Cov: mot.Mat{Rows: 2, Cols: 2, Data: []float64{1.5, 0, 0, 1.5}}, Predicted: true},
	}
	scan := mot.Scan{Step: 3, Detections: []mot.Detection{
		{ID: 11, Z: []float64{1, 1}}, {ID: 12, Z: []float64{4, 4.5}},
		{ID: 13, Z: []float64{2.5, 2.5}}, {ID: 14, Z: []float64{20, -20}},
	}}
	return md, states, scan
}

func TestWorkedGNNExample(t *testing.T) {
	md, states, scan := workedScan(0.9)
	d, err := StepFrom(md, states, scan, 10, 0)
	if err != nil {
		t.Fatal(err)
	}
	inf := math.Inf(1)
	miss := 2.302585092994
	want := []float64{
		-1.2357122402, 2.7642877598, -0.0425304221, inf, miss, inf,
		inf, -1.6562854234, 1.1562145766, inf, inf, miss,
	}
	got := d.Costs.Dense()
	for i := range want {
		if math.IsInf(want[i], 1) != math.IsInf(got[i], 1) || (!math.IsInf(want[i], 1) && !near(got[i], want[i], 1e-9, 0)) {
			t.Errorf("cost entry (%d,%d) = %.10f, want %.10f", i/6, i%6, got[i], want[i])
		}
	}
	// Ranked hypotheses, CHECK-VALUES §6.3: associations by detection id.
	const m = mot.NoDetection
	ranked := []struct {
		cost  float64
		assoc [2]int
	}{
		{-2.891997663610, [2]int{11, 12}}, {-1.698815845428, [2]int{13, 12}},
		{-0.079497663610, [2]int{11, 13}}, {0.646299669633, [2]int{m, 12}},
		{1.066872852745, [2]int{11, m}}, {2.260054670927, [2]int{13, m}},
		{3.458799669633, [2]int{m, 13}}, {3.920502336390, [2]int{12, 13}},
		{4.605170185988, [2]int{m, m}}, {5.066872852745, [2]int{12, m}},
	}
	if len(d.Hypotheses) != len(ranked) {
		t.Fatalf("%d hypotheses, want %d", len(d.Hypotheses), len(ranked))
	}
	var z float64
	for _, h := range ranked {
		z += math.Exp(-h.cost)
	}
	var sum float64
	for q, h := range d.Hypotheses {
		w := ranked[q]
		if !near(h.Cost, w.cost, 1e-9, 0) || h.Assoc[0] != w.assoc[0] || h.Assoc[1] != w.assoc[1] {
			t.Errorf("hypothesis %d = (%.12f, %v), want (%.12f, %v)", q+1, h.Cost, h.Assoc, w.cost, w.assoc)
		}
		if p := math.Exp(-w.cost) / z; !near(h.Prob, p, 1e-12, 1e-9) {
			t.Errorf("hypothesis %d: probability %.12g, want %.12g", q+1, h.Prob, p)
		}
		sum += h.Prob
	}
	if !near(sum, 1, 1e-12, 0) || !near(d.CoveredMass, 1, 1e-12, 0) || !d.Exhaustive {
		t.Errorf("probabilities sum to %.15g, covered %.15g, exhaustive %v; want 1, 1, true", sum, d.CoveredMass, d.Exhaustive)
	}
	if !near(d.Cost, -2.891997663610, 1e-9, 0) || !near(d.Margin, -1.698815845428+2.891997663610, 1e-9, 0) {
		t.Errorf("(cost, margin) = (%.12f, %.12f), want (−2.891997663610, 1.193181818182)", d.Cost, d.Margin)
	}
	if d.Objects[0].Detection != 11 || d.Objects[1].Detection != 12 || d.Clusters != 1 {
		t.Errorf("associations (%d, %d) in %d clusters, want (11, 12) in 1", d.Objects[0].Detection, d.Objects[1].Detection, d.Clusters)
	}
	// NIS of the chosen pairs equals their gating distance d² (§6.3 table).
	if !near(d.Objects[0].NIS, 0.454545454545, 1e-11, 0) || !near(d.Objects[1].NIS, 0.625, 1e-11, 0) {
		t.Errorf("NIS = (%.12g, %.12g), want (0.454545454545, 0.625)", d.Objects[0].NIS, d.Objects[1].NIS)
	}
}

// TestBestProbabilityFallsWithPD: on the fixed scan of CHECK-VALUES §6.3,
// whose best hypothesis detects both objects, lowering P_D raises every
// miss hypothesis against it, so the best hypothesis's posterior must fall.
// This test is the check that shows it.
func TestBestProbabilityFallsWithPD(t *testing.T) {
	prev := 2.0
	for _, pd := range []float64{0.99, 0.95, 0.9, 0.8, 0.6, 0.4} {
		md, states, scan := workedScan(pd)
		d, err := StepFrom(md, states, scan, 10, 0)
		if err != nil {
			t.Fatal(err)
		}
		if d.Hypotheses[0].Assoc[0] != 11 || d.Hypotheses[0].Assoc[1] != 12 {
			t.Fatalf("P_D=%g: best hypothesis %v, want [11 12]", pd, d.Hypotheses[0].Assoc)
		}
		if !(d.BestProb < prev) {
			t.Errorf("P_D=%g: best probability %.6f, not below %.6f at the higher P_D", pd, d.BestProb, prev)
		}
		prev = d.BestProb
	}
}

// bruteForce lists the cost of every feasible association event of the
// augmented matrix (rows × (nd + rows)), by exhaustive enumeration.
func bruteForce(cost []float64, rows, nd int) []float64 {
	cols := nd + rows
	var out []float64
	used := make([]bool, nd)
	var walk func(i int, acc float64)
	walk = func(i int, acc float64) {
		if i == rows {
			out = append(out, acc)
			return
		}
		for j := 0; j < nd; j++ {
			if !used[j] && !math.IsInf(cost[i*cols+j], 1) {
				used[j] = true
				walk(i+1, acc+cost[i*cols+j])
				used[j] = false
			}
		}
		if c := cost[i*cols+nd+i]; !math.IsInf(c, 1) {
			walk(i+1, acc+c)
		}
	}
	walk(0, 0)
	sort.Float64s(out)
	return out
}

// randomScan draws objects and detections in a square of side `side`;
// detections near objects and clutter, so that clusters of all sizes occur.
func randomScan(rng *rand.Rand, objects, clutter int, side float64) ([]State, mot.Scan) {
	states := make([]State, objects)
	scan := mot.Scan{Step: 1}
	id := 0
	for i := range states {
		x, y := rng.Float64()*side, rng.Float64()*side
		v := 0.5 + rng.Float64()
		states[i] = State{ID: string(rune('a'+i%26)) + string(rune('a'+i/26)), Mean: []float64{x, y},
			Cov: mot.Mat{Rows: 2, Cols: 2, Data: []float64{v, 0.1, 0.1, v}}, Predicted: true}
		if rng.Float64() < 0.8 {
			scan.Detections = append(scan.Detections, mot.Detection{ID: id, Z: []float64{x + rng.NormFloat64(), y + rng.NormFloat64()}})
			id++
		}
	}
	for c := 0; c < clutter; c++ {
		scan.Detections = append(scan.Detections, mot.Detection{ID: id, Z: []float64{rng.Float64() * side, rng.Float64() * side}})
		id++
	}
	rng.Shuffle(len(scan.Detections), func(a, b int) { scan.Detections[a], scan.Detections[b] = scan.Detections[b], scan.Detections[a] })
	return states, scan
}

// TestClusteringKeepsOptimum compares the clustered solution with one
// optimal solve of the whole augmented matrix (reference/assign) on
// thousands of seeded random scans.
func TestClusteringKeepsOptimum(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261201, 11))
	trials := 3000
	if testing.Short() {
		trials = 300
	}
	multi := 0
	for trial := 0; trial < trials; trial++ {
		md := posModel(0, 1, 0.5+0.49*rng.Float64(), 0.001+0.05*rng.Float64(), 0.999)
		states, scan := randomScan(rng, 1+rng.IntN(12), rng.IntN(10), 5+rng.Float64()*30)
		d, err := StepFrom(md, states, scan, 3, 0)
		if err != nil {
			t.Fatal(err)
		}
		if d.Clusters > 1 {
			multi++
		}
		_, total, err := assign.Solve(d.Costs.Dense(), len(states), len(scan.Detections)+len(states))
		if err != nil {
			t.Fatal(err)
		}
		if !near(d.Cost, total, 1e-9, 1e-12) {
			t.Fatalf("trial %d: clustered optimum %.15g, unclustered %.15g", trial, d.Cost, total)
		}
		var chosen float64
		dense := d.Costs.Dense()
		cols := len(scan.Detections) + len(states)
		for i, o := range d.Objects {
			j := len(scan.Detections) + i
			for c, id := range d.Costs.Detections {
				if id == o.Detection {
					j = c
				}
			}
			chosen += dense[i*cols+j]
		}
		if !near(chosen, d.Cost, 1e-9, 1e-12) {
			t.Fatalf("trial %d: the reported associations cost %.15g, the reported optimum %.15g", trial, chosen, d.Cost)
		}
	}
	if multi < trials/4 {
		t.Fatalf("only %d of %d scans had several clusters; the test does not exercise clustering", multi, trials)
	}
}

// TestHypothesesAgainstBruteForce enumerates every association event of
// small scans and checks the k best costs, their exact posteriors, the
// margin and the covered mass; with enumeration off it checks that the
// listed probabilities sum to one and that the covered mass is a lower
// bound of the true share.
func TestHypothesesAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261201, 12))
	for trial := 0; trial < 600; trial++ {
		md := posModel(0, 1, 0.3+0.69*rng.Float64(), 0.001+0.1*rng.Float64(), 0.999)
		states, scan := randomScan(rng, 1+rng.IntN(5), rng.IntN(5), 3+rng.Float64()*8)
		k := 1 + rng.IntN(12)
		for _, limit := range []int{1 << 20, -1} {
			d, err := StepFrom(md, states, scan, k, limit)
			if err != nil {
				t.Fatal(err)
			}
			all := bruteForce(d.Costs.Dense(), len(states), len(scan.Detections))
			var z float64
			for _, c := range all {
				z += math.Exp(-(c - all[0]))
			}
			if want := min(k, len(all)); len(d.Hypotheses) != want {
				t.Fatalf("trial %d limit %d: %d hypotheses, want %d", trial, limit, len(d.Hypotheses), want)
			}
			var listed, sum float64
			for q, h := range d.Hypotheses {
				if !near(h.Cost, all[q], 1e-9, 1e-12) {
					t.Fatalf("trial %d limit %d: hypothesis %d costs %.15g, brute force %.15g", trial, limit, q, h.Cost, all[q])
				}
				listed += math.Exp(-(all[q] - all[0]))
				sum += h.Prob
			}
			wantMargin := math.Inf(1)
			if len(all) > 1 {
				wantMargin = all[1] - all[0]
			}
			if !(d.Margin == wantMargin || near(d.Margin, wantMargin, 1e-9, 1e-12)) {
				t.Fatalf("trial %d: margin %.15g, want %.15g", trial, d.Margin, wantMargin)
			}
			trueCover := listed / z
			if limit > 0 && !d.Exhaustive {
				t.Fatalf("trial %d: small scan not enumerated", trial)
			}
			// With enumeration off a scan is still exhaustive when Murty's
			// lists ran out before k in every cluster.
			if d.Exhaustive {
				if !near(d.BestProb, 1/z, 1e-12, 1e-9) || !near(d.CoveredMass, trueCover, 1e-12, 1e-9) {
					t.Fatalf("trial %d: (best, covered) = (%.15g, %.15g), brute force (%.15g, %.15g)", trial, d.BestProb, d.CoveredMass, 1/z, trueCover)
				}
				if !near(sum, trueCover, 1e-12, 1e-9) {
					t.Fatalf("trial %d: listed probabilities sum to %.15g, want their true share %.15g", trial, sum, trueCover)
				}
			} else {
				if !near(sum, 1, 1e-12, 0) {
					t.Fatalf("trial %d: listed probabilities sum to %.15g, want 1", trial, sum)
				}
				if d.CoveredMass > trueCover*(1+1e-12) {
					t.Fatalf("trial %d: covered-mass bound %.15g exceeds the true share %.15g", trial, d.CoveredMass, trueCover)
				}
				if len(all) <= k && !near(d.CoveredMass, 1, 1e-12, 0) {
					t.Fatalf("trial %d: every event listed but covered mass %.15g", trial, d.CoveredMass)
				}
			}
		}
	}
}

// TestCertainDetection: with P_D = 1 a miss is impossible; an object with
// no detection in its gate coasts and is reported, nothing is NaN.
func TestCertainDetection(t *testing.T) {
	md := posModel(0, 1, 1, 0.01, 0.99)
	states := []State{
		{ID: "quay", Mean: []float64{0, 0}, Cov: mot.Identity(2), Predicted: true},
		{ID: "buoy", Mean: []float64{100, 0}, Cov: mot.Identity(2), Predicted: true},
	}
	scan := mot.Scan{Step: 2, Detections: []mot.Detection{{ID: 0, Z: []float64{0.5, 0}}}}
	d, err := StepFrom(md, states, scan, 5, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Coasting) != 1 || d.Coasting[0] != "buoy" || !d.Objects[1].Coasting || d.Objects[1].Detection != mot.NoDetection {
		t.Fatalf("coasting %v, object buoy %+v; want buoy coasting", d.Coasting, d.Objects[1])
	}
	if d.Objects[0].Detection != 0 || len(d.Hypotheses) != 1 || !math.IsInf(d.Margin, 1) || d.BestProb != 1 {
		t.Fatalf("quay detection %d, %d hypotheses, margin %g, best %g; want 0, 1, +Inf, 1", d.Objects[0].Detection, len(d.Hypotheses), d.Margin, d.BestProb)
	}
	for _, v := range append(append([]float64{d.Cost, d.CoveredMass}, d.Objects[1].Mean...), d.Objects[0].Mean...) {
		if math.IsNaN(v) {
			t.Fatalf("NaN in the detail: %+v", d)
		}
	}
}

// TestNoClutter: with λ = 0 the floor keeps every cost finite and the best
// hypothesis explains as many detections as possible, even a far one.
func TestNoClutter(t *testing.T) {
	md := posModel(0, 1, 0.9, 0, 0.999)
	states := []State{{ID: "crane", Mean: []float64{0, 0}, Cov: mot.Identity(2), Predicted: true}}
	scan := mot.Scan{Detections: []mot.Detection{{ID: 5, Z: []float64{3.5, 0}}}} // d² = 6.125
	d, err := StepFrom(md, states, scan, 4, 0)
	if err != nil {
		t.Fatal(err)
	}
	if d.Objects[0].Detection != 5 || math.IsInf(d.Cost, 0) || math.IsNaN(d.Cost) || math.IsNaN(d.BestProb) {
		t.Fatalf("detection %d, cost %g, best %g; want 5 and finite numbers", d.Objects[0].Detection, d.Cost, d.BestProb)
	}
	// The miss hypothesis is e^{−margin} ≈ 1e-298 as likely: 1 − that rounds to 1.
	if d.BestProb != 1 || !(d.Margin > 600) {
		t.Fatalf("best probability %g, margin %g; want 1 and a margin near −ln(1e-300)", d.BestProb, d.Margin)
	}
}

func TestBadInput(t *testing.T) {
	md, states, scan := workedScan(0.9)
	dup := scan
	dup.Detections = append([]mot.Detection(nil), scan.Detections...)
	dup.Detections[1].ID = 11
	short := scan
	short.Detections = []mot.Detection{{ID: 1, Z: []float64{1}}}
	nan := scan
	nan.Detections = []mot.Detection{{ID: 1, Z: []float64{1, math.NaN()}}}
	for name, sc := range map[string]mot.Scan{"duplicate": dup, "short": short, "nan": nan} {
		if _, err := StepFrom(md, states, sc, 3, 0); err == nil {
			t.Errorf("%s detection accepted", name)
		}
	}
	bad := md
	bad.PD = 0
	if _, err := StepFrom(bad, states, scan, 3, 0); err == nil {
		t.Error("P_D = 0 accepted")
	}
	bad = md
	bad.ClutterDensity = math.NaN()
	if _, err := StepFrom(bad, states, scan, 3, 0); err == nil {
		t.Error("NaN clutter density accepted")
	}
	// A covariance that is not positive definite is an error, not a panic.
	np := append([]State(nil), states...)
	np[0].Cov = mot.Mat{Rows: 2, Cols: 2, Data: []float64{-5, 0, 0, 1}}
	if _, err := StepFrom(md, np, scan, 3, 0); err == nil {
		t.Error("S not positive definite accepted")
	}
	tr := New(Config{Model: md, Objects: []mot.Object{{ID: "a", Mean: []float64{0, 0}, Cov: mot.Identity(2), Disappear: -1}}})
	if _, _, err := tr.Step(mot.Scan{Step: 2}); err != nil {
		t.Fatal(err)
	}
	if _, _, err := tr.Step(mot.Scan{Step: 2}); err == nil {
		t.Error("repeated step accepted")
	}
	if _, _, err := New(Config{Model: md, Objects: []mot.Object{{ID: "a", Mean: []float64{0}}}}).Step(scan); err == nil {
		t.Error("object prior of the wrong size accepted")
	}
	if _, _, err := New(Config{Model: md, Objects: []mot.Object{{ID: "a", Mean: []float64{0, math.Inf(1)}, Cov: mot.Identity(2)}}}).Step(scan); err == nil {
		t.Error("infinite prior mean accepted")
	}
	if _, _, err := New(Config{Model: md, Objects: []mot.Object{{ID: "a", Mean: []float64{0, 0}, Cov: mot.Identity(2)}, {ID: "a", Mean: []float64{0, 0}, Cov: mot.Identity(2)}}}).Step(scan); err == nil {
		t.Error("repeated object id accepted")
	}
}

// TestLifecycle follows objects that appear and disappear and checks Step
// against StepFrom started from the previous step's estimates.
func TestLifecycle(t *testing.T) {
	md := posModel(0.2, 1, 0.9, 1e-4, 0.999)
	md.F = mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, 0, 0, 1}}
	objs := []mot.Object{
		{ID: "tug", Mean: []float64{0, 0}, Cov: mot.Identity(2), Appear: 0, Disappear: 4},
		{ID: "barge", Mean: []float64{50, 50}, Cov: mot.Identity(2), Appear: 2, Disappear: -1},
	}
	tr := New(Config{Model: md, Objects: objs, K: 4})
	var prev mot.Frame
	for k := 0; k < 6; k++ {
		scan := mot.Scan{Step: k, Detections: []mot.Detection{
			{ID: 10 * k, Z: []float64{0.1 * float64(k), 0}}, {ID: 10*k + 1, Z: []float64{50, 50 + 0.2*float64(k)}},
		}}
		fr, d, err := tr.Step(scan)
		if err != nil {
			t.Fatal(err)
		}
		var want []string
		for _, o := range objs {
			if o.Alive(k) {
				want = append(want, o.ID)
			}
		}
		if len(fr.Tracks) != len(want) {
			t.Fatalf("step %d: %d tracks, want %v", k, len(fr.Tracks), want)
		}
		var states []State
		for i, tk := range fr.Tracks {
			if tk.Track != want[i] {
				t.Fatalf("step %d: track %q, want %q", k, tk.Track, want[i])
			}
			if tk.Track == "barge" && k == 2 && (d.Objects[i].PredMean[0] != 50 || d.Objects[i].PredCov.Data[0] != 1) {
				t.Fatalf("step 2: barge predicted %v, want its prior", d.Objects[i].PredMean)
			}
			found := false
			for _, p := range prev.Tracks {
				if p.Track == tk.Track {
					states = append(states, State{ID: p.Track, Mean: p.Mean, Cov: p.Cov})
					found = true
				}
			}
			if !found {
				for _, o := range objs {
					if o.ID == tk.Track {
						states = append(states, State{ID: o.ID, Mean: o.Mean, Cov: o.Cov, Predicted: true})
					}
				}
			}
		}
		d2, err := StepFrom(md, states, scan, 4, 0)
		if err != nil {
			t.Fatal(err)
		}
		for i := range d.Objects {
			a, b := d.Objects[i], d2.Objects[i]
			if a.Detection != b.Detection || a.Mean[0] != b.Mean[0] || a.Mean[1] != b.Mean[1] || a.Cov.Data[0] != b.Cov.Data[0] {
				t.Fatalf("step %d: Step and StepFrom differ for %s: %+v vs %+v", k, a.Object, a, b)
			}
		}
		if d.Cost != d2.Cost || d.BestProb != d2.BestProb {
			t.Fatalf("step %d: Step and StepFrom differ: cost %g/%g, best %g/%g", k, d.Cost, d2.Cost, d.BestProb, d2.BestProb)
		}
		prev = fr
	}
}

// TestGatingMatchesAllPairs checks the sorted-window prefilter: the gated
// pairs must be exactly those with d² ≤ γ over all pairs, with d² computed
// here by solving S y = ν with gonum (S = P + R for the position model).
func TestGatingMatchesAllPairs(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261201, 13))
	gamma := 13.815510557964274 // χ²₂⁻¹(0.999), CHECK-VALUES §6.2
	for trial := 0; trial < 300; trial++ {
		md := posModel(0, 1, 0.9, 0.01, 0.999)
		states, scan := randomScan(rng, 1+rng.IntN(20), rng.IntN(30), 10+rng.Float64()*40)
		d, err := StepFrom(md, states, scan, 1, -1)
		if err != nil {
			t.Fatal(err)
		}
		for i, s := range states {
			sm := mat.NewSymDense(2, []float64{s.Cov.Data[0] + 1, s.Cov.Data[1], s.Cov.Data[2], s.Cov.Data[3] + 1})
			var chol mat.Cholesky
			if !chol.Factorize(sm) {
				t.Fatal("S not positive definite")
			}
			gated := map[int]bool{}
			for _, e := range d.Costs.Gated[i] {
				gated[e.Col] = true
			}
			for j, det := range scan.Detections {
				nu := mat.NewVecDense(2, []float64{det.Z[0] - s.Mean[0], det.Z[1] - s.Mean[1]})
				var y mat.VecDense
				if err := chol.SolveVecTo(&y, nu); err != nil {
					t.Fatal(err)
				}
				d2 := mat.Dot(nu, &y)
				if math.Abs(d2-gamma) < 1e-9*gamma {
					continue // on the boundary: either answer is right
				}
				if (d2 <= gamma) != gated[j] {
					t.Fatalf("trial %d: object %d, detection %d: d² = %.12g, gated %v", trial, i, j, d2, gated[j])
				}
			}
		}
	}
}
