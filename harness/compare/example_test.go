package compare_test

import (
	"fmt"
	"math"

	"trackgate/harness/compare"
	"trackgate/harness/mot"
)

func ExampleRule_Agree() {
	r := compare.Rule{Abs: 1e-9, Rel: 1e-12}
	fmt.Println(r.Agree(1000, 1000+1e-10)) // within the absolute floor
	fmt.Println(r.Agree(0, math.Copysign(0, -1)))
	fmt.Println(r.Agree(math.NaN(), math.NaN()))
	fmt.Println(compare.ULPDistance(1, math.Nextafter(1, 2)))
	// Output:
	// true
	// true
	// false
	// 1
}

func ExampleFrames() {
	want := []mot.Frame{{Step: 17, Tracks: []mot.Estimate{{Track: "ferry", Mean: []float64{812.25, 3.5, -40}}}}}
	got := []mot.Frame{{Step: 17, Tracks: []mot.Estimate{{Track: "T4", Mean: []float64{812.25, 3.5, -40.5}}}}}
	res := compare.Frames(compare.Float64Port(), want, got, map[string]string{"T4": "ferry"})
	for _, d := range res.Diffs {
		fmt.Println(d.Path, d.Want, d.Got, d.Err)
	}
	// Output:
	// step 17 / track ferry / mean[2] -40 -40.5 0.5
}

func ExampleAlign() {
	var want, got []mot.Frame
	for k := 0; k < 3; k++ {
		x := 100 + 5*float64(k)
		want = append(want, mot.Frame{Step: k, Tracks: []mot.Estimate{
			{Track: "ferry", Mean: []float64{x, 0}}, {Track: "tug", Mean: []float64{0, x}}}})
		got = append(got, mot.Frame{Step: k, Tracks: []mot.Estimate{
			{Track: "T2", Mean: []float64{0.5, x}}, {Track: "T9", Mean: []float64{x, -1}}}})
	}
	a, err := compare.Align(want, got, compare.Options{Position: []int{0, 1}, Cutoff: 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(a.Names["T2"], a.Names["T9"], a.Cost)
	// Output:
	// tug ferry 3.75
}
