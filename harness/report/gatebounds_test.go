package report

import (
	"math"
	"testing"

	"trackgate/harness/result"
)

// TestGateBounds: a paired gate's decision rests on a one-sided bound (its
// High is +Inf), which the reports must not print as an interval.
func TestGateBounds(t *testing.T) {
	tests := []struct {
		name      string
		low, high float64
		want      string
	}{
		{"two-sided", 5.91, 7.11, "in [5.91, 7.11]"},
		{"one-sided lower bound of a paired gate", 0.32, math.Inf(1), "with one-sided lower bound 0.32"},
		{"one-sided upper bound", math.Inf(-1), 4, "with one-sided upper bound 4"},
		{"no bound at all", math.Inf(-1), math.Inf(1), "in [-Inf, +Inf]"},
	}
	for _, tt := range tests {
		if got := gateBounds(result.Gate{Low: tt.low, High: tt.high}); got != tt.want {
			t.Errorf("%s: gateBounds = %q, want %q", tt.name, got, tt.want)
		}
	}
}
