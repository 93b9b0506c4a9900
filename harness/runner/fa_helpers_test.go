package runner

import (
	"math"
	"testing"
)

// TestMergedMargin: the margin standing for the parts of one change is the
// largest cluster margin of tied parts and the smallest of clear ones.
func TestMergedMargin(t *testing.T) {
	ps := func(ms ...float64) []part {
		var out []part
		for i, m := range ms {
			out = append(out, part{cluster: i, margin: m})
		}
		return out
	}
	for _, tt := range []struct {
		name  string
		parts []part
		tied  bool
		want  float64
	}{
		{"one tied", ps(0.3), true, 0.3},
		{"tied takes the largest", ps(0.1, 0.4, 0.2), true, 0.4},
		{"clear takes the smallest", ps(2, 0.9, 1.5), false, 0.9},
		{"clear with a single hypothesis", ps(math.Inf(1), 3), false, 3},
		{"tied exact tie", ps(0, 0), true, 0},
	} {
		t.Run(tt.name, func(t *testing.T) {
			if got := mergedMargin(tt.parts, tt.tied); got != tt.want {
				t.Fatalf("mergedMargin = %g, want %g", got, tt.want)
			}
		})
	}
}

// TestAgreesWith: a hypothesis agrees with the tracker's associations when
// it matches every row the tracker reported (−2: nothing reported), and
// never when a row or the hypothesis is out of range.
func TestAgreesWith(t *testing.T) {
	for _, tt := range []struct {
		name        string
		rows, h, as []int
		want        bool
	}{
		{"all match", []int{0, 2}, []int{5, -1}, []int{5, 9, -1}, true},
		{"one differs", []int{0, 2}, []int{5, 7}, []int{5, 9, -1}, false},
		{"unreported row is free", []int{0, 1}, []int{5, 8}, []int{5, -2}, true},
		{"row beyond the tracker's", []int{0, 3}, []int{5, 8}, []int{5, 9, -1}, false},
		{"hypothesis too short", []int{0, 1}, []int{5}, []int{5, 9}, false},
		{"no rows", nil, nil, []int{1}, true},
	} {
		t.Run(tt.name, func(t *testing.T) {
			if got := agreesWith(tt.rows, tt.h, tt.as); got != tt.want {
				t.Fatalf("agreesWith(%v, %v, %v) = %v, want %v", tt.rows, tt.h, tt.as, got, tt.want)
			}
		})
	}
}
