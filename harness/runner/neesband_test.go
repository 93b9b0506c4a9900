package runner

import (
	"math"
	"slices"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/metrics"
	"trackgate/harness/result"
)

// TestNEESBandByStepPublished: each step's stored band is the chi-square
// band of that step's own number of values, steps without a value are left
// out of the bands exactly as they are left out of the NEES series, and
// the single band is stored only when every step has the same count.
//
// Check values: Bar-Shalom, Li, Kirubarajan, "Estimation with Applications
// to Tracking and Navigation", Wiley, 2001, §5.4.2 (M·ε̄ ~ χ²_{M·n} for the
// average of M independent NEES values of dimension n); the 95 % intervals
// for n = 4 are [3.2545596500, 4.8211579101] for M = 50 and
// [3.4648176536, 4.5730548197] for M = 100 (χ² quantiles by
// scipy.stats.chi2.ppf, /work/shared/CHECK-VALUES.md §3.2).
func TestNEESBandByStepPublished(t *testing.T) {
	const (
		lo50, hi50   = 3.2545596500, 4.8211579101
		lo100, hi100 = 3.4648176536, 4.5730548197
	)
	for _, tt := range []struct {
		name              string
		perRun            []int // matched tracks per run at each step (5 runs)
		value             []float64
		nees, lows, highs []float64
		steps             []int
		lo, hi            float64 // the single band; 0, 0 for none
	}{
		{"counts 50, none, 100", []int{10, 0, 20}, []float64{4, 9, 4.7},
			[]float64{4, 4.7}, []float64{lo50, lo100}, []float64{hi50, hi100}, []int{0, 2}, 0, 0},
		{"counts 100, 50, 100", []int{20, 10, 20}, []float64{4.6, 4.7, 3.5},
			[]float64{4.6, 4.7, 3.5}, []float64{lo100, lo50, lo100}, []float64{hi100, hi50, hi100}, []int{0, 1, 2}, 0, 0},
		{"none, 50, 50", []int{0, 10, 10}, []float64{1, 4, 3},
			[]float64{4, 3}, []float64{lo50, lo50}, []float64{hi50, hi50}, []int{1, 2}, lo50, hi50},
	} {
		t.Run(tt.name, func(t *testing.T) {
			s := bandScenario(5, tt.perRun, tt.value)
			if err := Judge(s, config.Config{}); err != nil {
				t.Fatal(err)
			}
			m := s.Scenarios[0].Metrics
			if len(m.NEES) != len(tt.nees) || len(m.NEESLowByStep) != len(tt.nees) || len(m.NEESHighByStep) != len(tt.nees) {
				t.Fatalf("%d averages, %d lower and %d upper bounds; want %d of each", len(m.NEES), len(m.NEESLowByStep), len(m.NEESHighByStep), len(tt.nees))
			}
			for j := range tt.nees {
				if math.Abs(m.NEES[j]-tt.nees[j]) > 1e-12 {
					t.Errorf("average %d is %g, want %g", j, m.NEES[j], tt.nees[j])
				}
				if math.Abs(m.NEESLowByStep[j]-tt.lows[j]) > 1e-9 || math.Abs(m.NEESHighByStep[j]-tt.highs[j]) > 1e-9 {
					t.Errorf("band %d is [%.10f, %.10f], want [%.10f, %.10f]", j, m.NEESLowByStep[j], m.NEESHighByStep[j], tt.lows[j], tt.highs[j])
				}
			}
			if !slices.Equal(m.NEESSteps, tt.steps) {
				t.Errorf("steps of the averages %v, want %v", m.NEESSteps, tt.steps)
			}
			if math.Abs(m.NEESLow-tt.lo) > 1e-9 || math.Abs(m.NEESHigh-tt.hi) > 1e-9 || (tt.lo == 0) != (m.NEESLow == 0) {
				t.Errorf("single band [%.10f, %.10f], want [%.10f, %.10f]", m.NEESLow, m.NEESHigh, tt.lo, tt.hi)
			}
			// The fraction in band judges each average against its own
			// bounds.
			in := 0
			for j, v := range m.NEES {
				if m.NEESLowByStep[j] <= v && v <= m.NEESHighByStep[j] {
					in++
				}
			}
			if want := float64(in) / float64(len(m.NEES)); m.NEESInBand != want {
				t.Errorf("in band %g, want %g from the per-step bounds", m.NEESInBand, want)
			}
		})
	}
}

// TestNEESBandByStepFollowsCounts: on a scenario whose forklifts enter and
// leave the floor, the number of NEES values differs from step to step;
// every stored bound is metrics.Interval for the count found by pooling
// the runs' own samples at that step (Bar-Shalom, Li, Kirubarajan 2001,
// §5.4.2), and no single band is stored.
func TestNEESBandByStepFollowsCounts(t *testing.T) {
	o := variantOptions("reference", scenarioFile("lifecycle-warehouse-forklifts"))
	o.Against, o.Local = AgainstReference, variantLocal(t, "resum")
	s := checkOf(t, o)
	sc := s.Scenarios[0]
	m := sc.Metrics
	if m == nil {
		t.Fatal("no summary metrics")
	}
	var pooled [][]float64
	for _, r := range sc.Runs {
		for k, vs := range r.Metrics.NEESSamples {
			for len(pooled) <= k {
				pooled = append(pooled, nil)
			}
			pooled[k] = append(pooled[k], vs...)
		}
	}
	var counts, steps []int
	var means []float64
	for k, vs := range pooled {
		if len(vs) == 0 {
			continue
		}
		steps = append(steps, k)
		sum := 0.0
		for _, v := range vs {
			sum += v
		}
		counts, means = append(counts, len(vs)), append(means, sum/float64(len(vs)))
	}
	if len(counts) != len(m.NEES) || len(m.NEESLowByStep) != len(m.NEES) || len(m.NEESHighByStep) != len(m.NEES) {
		t.Fatalf("%d steps with values, %d averages, %d and %d bounds", len(counts), len(m.NEES), len(m.NEESLowByStep), len(m.NEESHighByStep))
	}
	distinct := map[int]bool{}
	for j, c := range counts {
		distinct[c] = true
		lo, hi := metrics.Interval(sc.StateDim, c, NEESConfidence)
		if m.NEESLowByStep[j] != lo || m.NEESHighByStep[j] != hi {
			t.Errorf("step %d of the series (%d values): band [%g, %g], want [%g, %g]", j, c, m.NEESLowByStep[j], m.NEESHighByStep[j], lo, hi)
		}
		if math.Abs(m.NEES[j]-means[j]) > 1e-12*math.Max(1, means[j]) {
			t.Errorf("step %d of the series: average %g, want %g", j, m.NEES[j], means[j])
		}
	}
	if !slices.Equal(m.NEESSteps, steps) {
		t.Errorf("steps of the averages %v, want %v", m.NEESSteps, steps)
	}
	if len(distinct) < 2 {
		t.Fatalf("counts %v do not vary; the scenario no longer tests varying counts", counts)
	}
	if m.NEESLow != 0 || m.NEESHigh != 0 {
		t.Errorf("single band [%g, %g] stored although the counts vary", m.NEESLow, m.NEESHigh)
	}
	if m.NEESConfidence != NEESConfidence {
		t.Errorf("confidence %g, want %g", m.NEESConfidence, NEESConfidence)
	}
}

// TestNEESSkippedIsRecorded: the run's metrics carry the number of matched
// estimates left out of the NEES for a covariance that is not positive
// definite, equal to the nees_skipped whole-run value, and 0 without one.
func TestNEESSkippedIsRecorded(t *testing.T) {
	for _, tt := range []struct {
		name string
		step int
		want bool
	}{{"none", 1 << 30, false}, {"one track at step 6", 6, true}} {
		t.Run(tt.name, func(t *testing.T) {
			var o Options
			o.Scenarios = []string{scenarioFile("warmup-rail-carts")}
			o.Against, o.Workers, o.Runs = AgainstReference, 1, 2
			o.Getenv = func(string) string { return "" }
			o.Local = zeroCovTracker(tt.step)
			s := checkOf(t, o)
			for _, r := range s.Scenarios[0].Runs {
				if r.Metrics == nil {
					t.Fatalf("run %d has no metrics", r.Index)
				}
				v, ok := result.Lookup(r.Values, MetricNEESSkipped)
				if ok != tt.want || r.Metrics.NEESSkipped != int(v) || (tt.want && r.Metrics.NEESSkipped != 1) {
					t.Errorf("run %d: nees_skipped %d in the metrics, value %g (recorded %v)", r.Index, r.Metrics.NEESSkipped, v, ok)
				}
			}
		})
	}
}
