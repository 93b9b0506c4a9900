package tracker

import (
	"math/rand/v2"
	"testing"

	"trackgate/harness/mot"
	"trackgate/reference/assign"
)

// scene builds predicted states of a 4-D constant-velocity model for
// `objects` objects spread uniformly over a side×side square, a detection
// of 90 % of them and `clutter` uniform clutter detections.
func scene(objects, clutter int, side float64) (*engine, []string, [][]float64, [][]float64, mot.Scan) {
	rng := rand.New(rand.NewPCG(20261201, uint64(objects)))
	md := mot.Model{StateDim: 4, MeasDim: 2, Interval: 1,
		F:  mot.Mat{Rows: 4, Cols: 4, Data: []float64{1, 1, 0, 0, 0, 1, 0, 0, 0, 0, 1, 1, 0, 0, 0, 1}},
		Q:  mot.Mat{Rows: 4, Cols: 4, Data: []float64{0.25, 0.5, 0, 0, 0.5, 1, 0, 0, 0, 0, 0.25, 0.5, 0, 0, 0.5, 1}},
		H:  mot.Mat{Rows: 2, Cols: 4, Data: []float64{1, 0, 0, 0, 0, 0, 1, 0}},
		R:  mot.Mat{Rows: 2, Cols: 2, Data: []float64{4, 0, 0, 4}},
		PD: 0.9, ClutterDensity: float64(clutter) / (side * side), GateProb: 0.999,
	}
	eng, err := newEngine(md, DefaultK, 0)
	if err != nil {
		panic(err)
	}
	ids := make([]string, objects)
	xs := make([][]float64, objects)
	ps := make([][]float64, objects)
	var scan mot.Scan
	for i := range ids {
		ids[i] = "o" + string(rune('0'+i%10)) + string(rune('0'+i/10%10)) + string(rune('0'+i/100))
		x, y := rng.Float64()*side, rng.Float64()*side
		xs[i] = []float64{x, 1, y, -1}
		ps[i] = []float64{6, 2, 0, 0, 2, 2, 0, 0, 0, 0, 6, 2, 0, 0, 2, 2}
		if rng.Float64() < 0.9 {
			scan.Detections = append(scan.Detections, mot.Detection{ID: len(scan.Detections), Z: []float64{x + 3*rng.NormFloat64(), y + 3*rng.NormFloat64()}})
		}
	}
	for len(scan.Detections) < objects*9/10+clutter {
		scan.Detections = append(scan.Detections, mot.Detection{ID: len(scan.Detections), Z: []float64{rng.Float64() * side, rng.Float64() * side}})
	}
	return eng, ids, xs, ps, scan
}

func benchScene(b *testing.B, objects, clutter int, side float64) {
	eng, ids, xs, ps, scan := scene(objects, clutter, side)
	d, err := eng.associate(0, ids, xs, ps, scan)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := eng.associate(0, ids, xs, ps, scan); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(d.Clusters), "clusters")
	b.ReportMetric(float64(len(scan.Detections)), "detections")
}

// BenchmarkScan100 is one GNN scan of 100 objects and 200 detections (90
// object detections, 110 clutter) on a 300 m square: gating, clustering,
// k = 10 ranking, posterior and updates.
func BenchmarkScan100(b *testing.B) { benchScene(b, 100, 110, 300) }

// BenchmarkScan1000Spread is a 1000-object scene spread over a 6 km square
// with 1000 clutter detections.
func BenchmarkScan1000Spread(b *testing.B) { benchScene(b, 1000, 1000, 6000) }

// BenchmarkDense1000 solves the same 1000-object scene as one augmented
// matrix without clustering, for contrast.
func BenchmarkDense1000(b *testing.B) {
	eng, ids, xs, ps, scan := scene(1000, 1000, 6000)
	d, err := eng.associate(0, ids, xs, ps, scan)
	if err != nil {
		b.Fatal(err)
	}
	dense := d.Costs.Dense()
	rows, cols := len(ids), len(scan.Detections)+len(ids)
	var ws assign.Workspace
	out := make([]int, rows)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ws.Solve(dense, rows, cols, out); err != nil {
			b.Fatal(err)
		}
	}
}
