package scenario

import (
	"testing"

	"trackgate/harness/mot"
)

func TestCholesky(t *testing.T) {
	tests := []struct {
		name   string
		rows   [][]float64
		want   int // row where the factorisation fails, −1 when positive definite
		reason string
	}{
		{
			name: "textbook example",
			// A = LLᵀ with L = [[2,0,0],[6,1,0],[−8,5,3]]; the example of the
			// Wikipedia article "Cholesky decomposition" (from memory), checked
			// by multiplying L by Lᵀ by hand.
			rows: [][]float64{{4, 12, -16}, {12, 37, -43}, {-16, -43, 98}},
			want: -1,
		},
		{
			name: "indefinite",
			// Eigenvalues 1 ± 2: not positive definite; the second pivot is
			// 1 − 2²/1 = −3.
			rows: [][]float64{{1, 2}, {2, 1}},
			want: 1,
		},
		{
			name:   "singular",
			rows:   [][]float64{{1, 1}, {1, 1}},
			want:   1,
			reason: "positive semi-definite is not enough: the second pivot is exactly 0",
		},
		{"negative first pivot", [][]float64{{-1, 0}, {0, 1}}, 0, ""},
		{"identity", [][]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}, -1, ""},
		{
			name:   "DWNA process noise",
			rows:   [][]float64{{0.25, 0.5}, {0.5, 1}},
			want:   1,
			reason: "DWNA Q has rank 1 (CHECK-VALUES §8.1), which is why a random walk's covariance must be positive definite but CV's Q is never checked",
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m, _ := mot.MatFromRows(tc.rows)
			if got := cholesky(m); got != tc.want {
				t.Errorf("cholesky(%v) = %d, want %d %s", tc.rows, got, tc.want, tc.reason)
			}
		})
	}
}
