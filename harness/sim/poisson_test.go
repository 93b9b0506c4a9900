package sim

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

func sortFloats(v []float64) { slices.Sort(v) }

// TestPoissonDistribution checks both branches of the sampler (Knuth below
// 10, PTRS from 10) and the switch itself against the Poisson law; see
// poissonFit for the tests and their sources.
func TestPoissonDistribution(t *testing.T) {
	for i, mean := range []float64{0.05, 0.7, 3, 9.999, 10, 23.5, 140, 2500} {
		t.Run(fmt.Sprint(mean), func(t *testing.T) {
			r := rand.New(rand.NewPCG(seedFor(t, 0x5eed), uint64(i)))
			counts := make([]int, 20000)
			for j := range counts {
				counts[j] = poisson(r, mean)
				if counts[j] < 0 {
					t.Fatalf("poisson(%v) = %d < 0", mean, counts[j])
				}
			}
			poissonFit(t, fmt.Sprintf("Poisson(%v)", mean), counts, mean)
		})
	}
}

func TestPoissonZeroMean(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for range 100 {
		if k := poisson(r, 0); k != 0 {
			t.Fatalf("poisson(0) = %d, want 0", k)
		}
	}
}

func TestKolmogorovQuantile(t *testing.T) {
	// Limiting Kolmogorov distribution upper points, as commonly tabulated
	// (e.g. 1.3581 at 0.95, 1.6276 at 0.99, 1.9495 at 0.999; from memory of
	// the standard tables derived from Smirnov, "Table for estimating the
	// goodness of fit of empirical distributions", Ann. Math. Stat.
	// 19:279–281, 1948).
	for _, tc := range []struct{ p, want float64 }{{0.95, 1.3581}, {0.99, 1.6276}, {0.999, 1.9495}} {
		if got := kolmogorovQuantile(tc.p); got < tc.want-5e-4 || got > tc.want+5e-4 {
			t.Errorf("kolmogorovQuantile(%v) = %.5f, want %.4f", tc.p, got, tc.want)
		}
	}
}
