package variant_test

import (
	"fmt"

	"trackgate/harness/mot"
	"trackgate/reference/tracker"
	"trackgate/reference/variant"
)

// The catalogue, harmful variants first.
func ExampleAll() {
	for _, v := range variant.All() {
		kind := "harmless"
		if v.Harmful {
			kind = "harmful"
		}
		fmt.Printf("%-18s %s\n", v.Name, kind)
	}
	// Output:
	// greedy             harmful
	// frozen-covariance  harmful
	// miss-without-pd    harmful
	// narrow-gate        harmful
	// no-clutter         harmful
	// step-late          harmful
	// no-process-noise   harmful
	// float32            harmful
	// relabel            harmless
	// shuffle            harmless
	// resum              harmless
	// tie-flip           harmless
	// fused              harmless
}

// A variant answers scans like the reference: here the narrow gate misses
// a pallet's detection one metre from its prediction, which the reference's
// 99.9 % gate takes (1-D random walk, P = R = 1, so S = 2 and d² = 0.5;
// χ²₁⁻¹(0.2) = 0.064 and χ²₁⁻¹(0.999) = 10.8).
func ExampleVariant_New() {
	md := mot.Model{StateDim: 1, MeasDim: 1, Interval: 1,
		F: mot.Identity(1), Q: mot.Identity(1), H: mot.Identity(1), R: mot.Identity(1),
		PD: 0.9, ClutterDensity: 0.01, GateProb: 0.999}
	cfg := tracker.Config{Model: md, Objects: []mot.Object{{ID: "pallet", Mean: []float64{0}, Cov: mot.Identity(1), Disappear: -1}}}
	scan := mot.Scan{Detections: []mot.Detection{{ID: 7, Z: []float64{1}}}}

	ref, _, _ := tracker.New(cfg).Step(scan)
	v, _ := variant.Lookup("narrow-gate")
	got, _ := v.New(cfg)(scan)
	fmt.Println("reference takes detection", ref.Tracks[0].Detection)
	fmt.Println("narrow-gate takes detection", got.Tracks[0].Detection)
	// Output:
	// reference takes detection 7
	// narrow-gate takes detection -1
}
