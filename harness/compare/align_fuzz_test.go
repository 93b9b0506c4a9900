package compare

import (
	"fmt"
	"math"
	"testing"

	"trackgate/harness/mot"
)

// framesFrom decodes fuzz bytes into a small run: each byte pair is a
// (step, track, value) record; special byte values give NaN and ±Inf.
func framesFrom(data []byte, prefix string) []mot.Frame {
	byStep := map[int]*mot.Frame{}
	seen := map[string]bool{}
	var order []int
	for i := 0; i+2 < len(data) && i < 60; i += 3 {
		step, trk := int(data[i]%5), int(data[i+1]%4)
		v := float64(int8(data[i+2])) / 4
		switch data[i+2] {
		case 0x7f:
			v = math.NaN()
		case 0x7e:
			v = math.Inf(1)
		case 0x81:
			v = math.Inf(-1)
		}
		key := fmt.Sprint(step, trk)
		if seen[key] {
			continue
		}
		seen[key] = true
		f := byStep[step]
		if f == nil {
			f = &mot.Frame{Step: step}
			byStep[step] = f
			order = append(order, step)
		}
		f.Tracks = append(f.Tracks, mot.Estimate{Track: fmt.Sprintf("%s%d", prefix, trk), Mean: []float64{v, float64(trk)}})
	}
	out := make([]mot.Frame, 0, len(order))
	for _, s := range order {
		out = append(out, *byStep[s])
	}
	return out
}

// FuzzAlign checks on arbitrary small runs, NaN and infinities included,
// that Align never fails or panics on well-formed frames and finds the
// optimum that exhaustive enumeration finds.
func FuzzAlign(f *testing.F) {
	f.Add([]byte{0, 0, 10, 1, 0, 12, 0, 1, 200}, []byte{0, 2, 11, 1, 2, 13, 2, 3, 0x7f}, uint8(8))
	f.Add([]byte{0, 0, 0x7e, 0, 1, 0x81}, []byte{0, 0, 0x7e}, uint8(1))
	f.Fuzz(func(t *testing.T, a, b []byte, c uint8) {
		want, got := framesFrom(a, "r"), framesFrom(b, "t")
		o := Options{Position: []int{0, 1}, Cutoff: 0.25 + float64(c%32)}
		al, err := Align(want, got, o)
		if err != nil {
			t.Fatalf("Align: %v", err)
		}
		if _, err := Follow(want, got, o); err != nil {
			t.Fatalf("Follow: %v", err)
		}
		names := func(fs []mot.Frame) []string {
			seen := map[string]bool{}
			var out []string
			for _, f := range fs {
				for _, e := range f.Tracks {
					if !seen[e.Track] {
						seen[e.Track] = true
						out = append(out, e.Track)
					}
				}
			}
			return out
		}
		best := math.Inf(1)
		for _, p := range allPairings(names(got), names(want)) {
			best = math.Min(best, runCost(want, got, p, o.Cutoff))
		}
		if math.IsNaN(best) {
			t.Fatalf("brute force cost is NaN")
		}
		if math.IsNaN(al.Cost) || math.Abs(al.Cost-best) > 1e-9*math.Max(1, best) {
			t.Fatalf("Align cost %v, brute force %v", al.Cost, best)
		}
	})
}
