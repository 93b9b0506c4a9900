package assign

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// benchPool builds count rows×cols matrices of uniform [0,1) costs. With
// gated set, about 90 % of the entries are +Inf except along a random
// row→column map that stays finite, so a full assignment always exists (the
// same construction as the scipy timing script of PERF-ANCHORS §1).
func benchPool(rows, cols, count int, gated bool) [][]float64 {
	rng := rand.New(rand.NewPCG(uint64(rows)*7919+uint64(cols), 2026))
	pool := make([][]float64, count)
	for p := range pool {
		c := make([]float64, rows*cols)
		for k := range c {
			c[k] = rng.Float64()
		}
		if gated {
			keep := rng.Perm(max(rows, cols))
			for i := 0; i < rows; i++ {
				for j := 0; j < cols; j++ {
					kept := (rows <= cols && keep[i] == j) || (rows > cols && keep[j] == i)
					if !kept && rng.Float64() < 0.9 {
						c[i*cols+j] = math.Inf(1)
					}
				}
			}
		}
		pool[p] = c
	}
	return pool
}

func BenchmarkSolve(b *testing.B) {
	cases := []struct {
		rows, cols int
		gated      bool
		noInit     bool // Crouse's method without the reduction start
	}{
		{10, 10, false, false}, {100, 100, false, false}, {500, 500, false, false},
		{1000, 1000, false, false}, {2000, 2000, false, false},
		{100, 200, false, false}, {1000, 2000, false, false},
		{1000, 1000, true, false},
		{100, 100, false, true}, {1000, 1000, false, true}, {1000, 2000, false, true},
	}
	for _, bc := range cases {
		name := fmt.Sprintf("%dx%d", bc.rows, bc.cols)
		if bc.gated {
			name += "-gated90"
		}
		if bc.noInit {
			name += "-noinit"
		}
		b.Run(name, func(b *testing.B) {
			count := 5
			if max(bc.rows, bc.cols) > 1000 {
				count = 2
			}
			pool := benchPool(bc.rows, bc.cols, count, bc.gated)
			w := Workspace{NoInit: bc.noInit}
			out := make([]int, bc.rows)
			if _, err := w.Solve(pool[0], bc.rows, bc.cols, out); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; b.Loop(); i++ {
				if _, err := w.Solve(pool[i%count], bc.rows, bc.cols, out); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkKBest(b *testing.B) {
	for _, n := range []int{20, 50} {
		b.Run(fmt.Sprintf("%dx%d-k100", n, n), func(b *testing.B) {
			pool := benchPool(n, n, 5, false)
			b.ReportAllocs()
			for i := 0; b.Loop(); i++ {
				hs, err := KBest(pool[i%len(pool)], n, n, 100)
				if err != nil || len(hs) != 100 {
					b.Fatal(len(hs), err)
				}
			}
		})
	}
}
