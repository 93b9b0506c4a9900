package tracker

import (
	"math"
	"testing"

	"trackgate/harness/mot"
	"trackgate/reference/assign"
)

// FuzzStepFrom builds small scans from the fuzz input and checks that a
// step never panics, that its optimum equals one dense solve of the whole
// augmented matrix and brute force, that the posterior numbers are
// probabilities, and that the per-cluster records are consistent
// (checkPerCluster).
func FuzzStepFrom(f *testing.F) {
	f.Add([]byte{2, 3, 9, 0, 0, 50, 50, 10, 10, 48, 52, 200, 3, 1, 1})
	f.Add([]byte{1, 0, 255})
	f.Add([]byte{4, 6, 0, 10, 10, 11, 11, 12, 12, 13, 13, 10, 10, 11, 11, 12, 12, 13, 13, 14, 14, 9, 9})
	f.Fuzz(func(t *testing.T, data []byte) {
		next := func() byte {
			if len(data) == 0 {
				return 0
			}
			b := data[0]
			data = data[1:]
			return b
		}
		nObj, nDet := 1+int(next()%4), int(next()%7)
		var pd, lambda float64
		switch b := next(); {
		case b < 16:
			pd = 1
		default:
			pd = 0.3 + 0.69*float64(b)/255
		}
		if b := next(); b >= 32 {
			lambda = float64(b) / 2550
		}
		md := posModel(0, 1, pd, lambda, 0.999)
		states := make([]State, nObj)
		for i := range states {
			states[i] = State{ID: string(rune('p' + i)), Mean: []float64{float64(next()) / 8, float64(next()) / 8},
				Cov: mot.Mat{Rows: 2, Cols: 2, Data: []float64{1 + float64(next()%8), 0.5, 0.5, 1 + float64(next()%8)}}, Predicted: true}
		}
		scan := mot.Scan{Step: 1}
		for j := 0; j < nDet; j++ {
			scan.Detections = append(scan.Detections, mot.Detection{ID: j, Z: []float64{float64(next()) / 8, float64(next()) / 8}})
		}
		d, err := StepFrom(md, states, scan, 1+int(next()%6), 0)
		if err != nil {
			t.Fatalf("StepFrom: %v", err)
		}
		if len(d.Coasting) == 0 {
			_, total, err := assign.Solve(d.Costs.Dense(), nObj, nDet+nObj)
			if err != nil || !near(d.Cost, total, 1e-9, 1e-12) {
				t.Fatalf("clustered optimum %.15g, dense solve %.15g (%v)", d.Cost, total, err)
			}
			all := bruteForce(d.Costs.Dense(), nObj, nDet)
			if !near(all[0], d.Cost, 1e-9, 1e-12) {
				t.Fatalf("optimum %.15g, brute force %.15g", d.Cost, all[0])
			}
		}
		if !(d.Margin >= 0) || !(d.BestProb > 0 && d.BestProb <= 1) || !(d.CoveredMass > 0 && d.CoveredMass <= 1) {
			t.Fatalf("margin %g, best %g, covered %g", d.Margin, d.BestProb, d.CoveredMass)
		}
		var sum float64
		for q, h := range d.Hypotheses {
			if math.IsNaN(h.Prob) || h.Prob < 0 || (q > 0 && h.Cost < d.Hypotheses[q-1].Cost) {
				t.Fatalf("hypothesis %d: cost %g, probability %g", q, h.Cost, h.Prob)
			}
			sum += h.Prob
		}
		if sum > 1+1e-12 {
			t.Fatalf("probabilities sum to %.15g", sum)
		}
		checkPerCluster(t, &d)
		for _, o := range d.Objects {
			for _, v := range append(append([]float64{}, o.Mean...), o.Cov.Data...) {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("object %s: non-finite state %v %v", o.Object, o.Mean, o.Cov.Data)
				}
			}
		}
	})
}
