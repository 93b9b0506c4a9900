package sim

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"trackgate/harness/mot"
)

func matOf(t *testing.T, rows [][]float64) mot.Mat {
	t.Helper()
	m, ok := mot.MatFromRows(rows)
	if !ok {
		t.Fatalf("ragged rows %v", rows)
	}
	return m
}

// TestFactorMatchesCholesky checks factor against gonum's Cholesky
// factorisation (gonum v0.17.0, an independent library): for a symmetric
// positive definite A, L·D^½ is the Cholesky factor, which is unique.
func TestFactorMatchesCholesky(t *testing.T) {
	tests := []struct {
		name string
		a    [][]float64
	}{
		{"diagonal", [][]float64{{4, 0}, {0, 9}}},
		{"correlated 2x2", [][]float64{{36, 12}, {12, 16}}},
		{"3x3", [][]float64{{2.5, 0.4, -0.3}, {0.4, 1.2, 0.25}, {-0.3, 0.25, 0.8}}},
		{"scales apart", [][]float64{{1e6, 10, 0}, {10, 1e-2, 1e-4}, {0, 1e-4, 3e-6}}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			a := matOf(t, tt.a)
			g, err := factor("A", a)
			if err != nil {
				t.Fatalf("factor: %v", err)
			}
			n := a.Rows
			sym := mat.NewSymDense(n, append([]float64(nil), a.Data...))
			var ch mat.Cholesky
			if !ch.Factorize(sym) {
				t.Fatal("gonum Cholesky failed on a positive definite matrix")
			}
			var l mat.TriDense
			ch.LTo(&l)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					want := l.At(i, j)
					got := g[i*n+j]
					if math.Abs(got-want) > 1e-12*math.Sqrt(a.At(i, i)*a.At(j, j))+1e-300 {
						t.Errorf("G[%d][%d] = %v, want %v (gonum Cholesky)", i, j, got, want)
					}
				}
			}
		})
	}
}

// TestFactorSingular checks the rank-deficient discrete white-noise
// acceleration Q of one axis, q·[[Δt⁴/4, Δt³/2], [Δt³/2, Δt²]] (Bar-Shalom,
// Li, Kirubarajan 2001, §6.3.2, from memory): it has rank 1, so the second
// column of G must be zero and G Gᵀ must give Q back. A Cholesky
// factorisation fails or divides by a rounding residue here.
func TestFactorSingular(t *testing.T) {
	for _, dt := range []float64{0.1, 1, 2, 3.7} {
		md := cvModel(dt, 0.3, 1)
		g, err := factor("Q", md.Q)
		if err != nil {
			t.Fatalf("dt=%v: factor(Q): %v", dt, err)
		}
		n := 4
		for _, c := range []int{1, 3} {
			for i := 0; i < n; i++ {
				if g[i*n+c] != 0 {
					t.Errorf("dt=%v: G[%d][%d] = %v, want 0 (rank-one axis)", dt, i, c, g[i*n+c])
				}
			}
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				var s float64
				for k := 0; k < n; k++ {
					s += g[i*n+k] * g[j*n+k]
				}
				want := md.Q.At(i, j)
				if math.Abs(s-want) > 1e-12*math.Sqrt(md.Q.At(i, i)*md.Q.At(j, j)) {
					t.Errorf("dt=%v: (G Gᵀ)[%d][%d] = %v, want %v", dt, i, j, s, want)
				}
			}
		}
	}
	// The zero matrix is a valid (degenerate) covariance.
	g, err := factor("Z", mot.NewMat(3, 3))
	if err != nil {
		t.Fatalf("factor(0): %v", err)
	}
	for i, v := range g {
		if v != 0 {
			t.Errorf("factor(0)[%d] = %v, want 0", i, v)
		}
	}
}

func TestFactorRejects(t *testing.T) {
	tests := []struct {
		name   string
		a      mot.Mat
		reason string
	}{
		{"indefinite", matOf(t, [][]float64{{1, 2}, {2, 1}}), "positive semi-definite"},
		{"zero diagonal with coupling", matOf(t, [][]float64{{0, 1}, {1, 0}}), "positive semi-definite"},
		{"negative variance", matOf(t, [][]float64{{-1, 0}, {0, 1}}), "non-negative variance"},
		{"asymmetric", matOf(t, [][]float64{{2, 1}, {0, 2}}), "symmetric"},
		{"NaN", matOf(t, [][]float64{{2, math.NaN()}, {math.NaN(), 2}}), "finite"},
		{"Inf", matOf(t, [][]float64{{math.Inf(1), 0}, {0, 2}}), "finite"},
		{"not square", mot.NewMat(2, 3), "square"},
		{"singular and indefinite", matOf(t, [][]float64{{1, 1, 0}, {1, 1, 0}, {0, 0, -1e-3}}), "variance"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := factor("A", tt.a)
			if err == nil {
				t.Fatalf("factor(%v) succeeded, want an error about %q", tt.a.Data, tt.reason)
			}
			if !strings.HasPrefix(err.Error(), "A") || !strings.Contains(err.Error(), tt.reason) {
				t.Errorf("factor error = %q, want it to start with the name and mention %q", err, tt.reason)
			}
		})
	}
}
