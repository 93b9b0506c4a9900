package kalman_test

import (
	"fmt"

	"trackgate/harness/mot"
	"trackgate/reference/kalman"
)

// A static quantity measured ten times with a noisy altimeter, the inputs
// of A. Becker's kalmanfilter.net "Kalman Filter in one dimension",
// Example 5: x₀ = 60, p₀ = 225, r = 25. The page ends at 49.57 m with
// variance 2.47.
func ExampleFilter() {
	model := mot.Model{
		StateDim: 1, MeasDim: 1, Interval: 1,
		F: mot.Identity(1), Q: mot.NewMat(1, 1), H: mot.Identity(1),
		R: mot.Mat{Rows: 1, Cols: 1, Data: []float64{25}},
	}
	f, err := kalman.New(model)
	if err != nil {
		fmt.Println(err)
		return
	}
	x, p := []float64{60}, []float64{225}
	for _, z := range []float64{48.54, 47.11, 55.01, 55.15, 49.89, 40.85, 46.72, 50.05, 51.27, 49.95} {
		f.PredictTo(x, p, x, p)
		if _, err := f.Update(x, p, x, p, []float64{z}); err != nil {
			fmt.Println(err)
			return
		}
	}
	fmt.Printf("estimate %.2f, variance %.2f\n", x[0], p[0])
	// Output: estimate 49.57, variance 2.47
}
