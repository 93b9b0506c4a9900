package tracker_test

import (
	"fmt"

	"trackgate/harness/mot"
	"trackgate/reference/tracker"
)

// The scan of CHECK-VALUES §6.3: two objects in a marina, four detections.
// The printed values agree with that table (best −2.891997663610, second
// best −1.698815845428); the probabilities are exp(−cost) over the sum for
// all ten events listed there (0.704, 0.213, 0.042, computed from the table
// with Python 3.11 math.exp).
func ExampleStepFrom() {
	model := mot.Model{
		StateDim: 2, MeasDim: 2, Interval: 1,
		F: mot.Identity(2), Q: mot.NewMat(2, 2), H: mot.Identity(2),
		R:  mot.Mat{Rows: 2, Cols: 2, Data: []float64{0.5, 0, 0, 0.5}},
		PD: 0.9, ClutterDensity: 0.01, GateProb: 0.99,
	}
	states := []tracker.State{
		{ID: "skiff", Mean: []float64{0, 0}, Cov: mot.Mat{Rows: 2, Cols: 2, Data: []float64{3.5, 1, 1, 2.5}}, Predicted: true},
		{ID: "dinghy", Mean: []float64{5, 5}, Cov: mot.Mat{Rows: 2, Cols: 2, Data: []float64{1.5, 0, 0, 1.5}}, Predicted: true},
	}
	scan := mot.Scan{Step: 7, Detections: []mot.Detection{
		{ID: 1, Z: []float64{1, 1}}, {ID: 2, Z: []float64{4, 4.5}},
		{ID: 3, Z: []float64{2.5, 2.5}}, {ID: 4, Z: []float64{20, -20}},
	}}
	d, err := tracker.StepFrom(model, states, scan, 3, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, o := range d.Objects {
		fmt.Printf("%s <- detection %d\n", o.Object, o.Detection)
	}
	fmt.Printf("cost %.4f, margin %.4f\n", d.Cost, d.Margin)
	for _, h := range d.Hypotheses {
		fmt.Printf("%v cost %.4f p %.3f\n", h.Assoc, h.Cost, h.Prob)
	}
	// Output:
	// skiff <- detection 1
	// dinghy <- detection 2
	// cost -2.8920, margin 1.1932
	// [1 2] cost -2.8920 p 0.704
	// [3 2] cost -1.6988 p 0.213
	// [1 3] cost -0.0795 p 0.042
}
