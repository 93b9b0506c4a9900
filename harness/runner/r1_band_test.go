package runner

import (
	"math"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/metrics"
	"trackgate/harness/result"
)

// bandScenario builds a scenario of runs whose NEES samples are invented:
// at step k every run holds perRun[k] matched tracks, each with NEES
// value[k]; state dimension 4.
func bandScenario(runs int, perRun []int, value []float64) *result.Suite {
	sc := result.Scenario{Name: "canal-lock-barges", StateDim: 4, RunsPlanned: runs, Status: result.Pass}
	for r := 0; r < runs; r++ {
		m := &result.RunMetrics{}
		for k, n := range perRun {
			m.GOSPA = append(m.GOSPA, 1)
			var vs []float64
			for range n {
				vs = append(vs, value[k])
			}
			m.NEESSamples = append(m.NEESSamples, vs)
		}
		sc.Runs = append(sc.Runs, result.Run{Index: r, Status: result.Pass, Metrics: m,
			Values: []result.Value{{Metric: MetricMeanGOSPA, Value: 1}}})
	}
	return &result.Suite{Scenarios: []result.Scenario{sc}}
}

// TestNEESBandUsesSampleCount: the stored NEES band is the chi-square band
// of the number of values each step averages (runs × matched tracks), not
// of the number of runs.
//
// The check values are Bar-Shalom, Li, Kirubarajan, "Estimation with
// Applications to Tracking and Navigation", Wiley, 2001, §5.4.2: M·ε̄ ~
// χ²_{M·n} for the average of M independent NEES values of dimension n,
// with the 95 % interval for n = 4 and M = 50 being [3.2545596500,
// 4.8211579101] and for M = 100 [3.4648176536, 4.5730548197]
// (χ² quantiles by scipy.stats.chi2.ppf, /work/shared/CHECK-VALUES.md §3.2).
func TestNEESBandUsesSampleCount(t *testing.T) {
	for _, tt := range []struct {
		name         string
		perRun       []int
		value        []float64
		lo, hi       float64 // the stored band; 0, 0 for none
		inBand, mean float64
	}{
		// 5 runs × 10 tracks = 50 values at every step.
		{"same count", []int{10, 10}, []float64{4, 4.7}, 3.2545596500, 4.8211579101, 1, 4},
		// 50 values at step 0, 100 at step 1: 4.7 is inside the band of
		// 50 values but outside that of 100.
		{"counts differ", []int{10, 20}, []float64{4, 4.7}, 0, 0, 0.5, 4},
	} {
		t.Run(tt.name, func(t *testing.T) {
			s := bandScenario(5, tt.perRun, tt.value)
			if err := Judge(s, config.Config{}); err != nil {
				t.Fatal(err)
			}
			m := s.Scenarios[0].Metrics
			if m == nil {
				t.Fatal("no summary")
			}
			if math.Abs(m.NEESLow-tt.lo) > 1e-9 || math.Abs(m.NEESHigh-tt.hi) > 1e-9 {
				t.Errorf("band [%.10f, %.10f], want [%.10f, %.10f]", m.NEESLow, m.NEESHigh, tt.lo, tt.hi)
			}
			if tt.lo > 0 {
				lo, hi := metrics.Interval(4, 50, NEESConfidence)
				if m.NEESLow != lo || m.NEESHigh != hi {
					t.Errorf("band [%g, %g] is not metrics.Interval(4, 50) = [%g, %g]", m.NEESLow, m.NEESHigh, lo, hi)
				}
				if rlo, rhi := metrics.Interval(4, 5, NEESConfidence); m.NEESLow == rlo || m.NEESHigh == rhi {
					t.Errorf("band is the one for 5 runs")
				}
			}
			if m.NEESInBand != tt.inBand || m.NEESConfidence != NEESConfidence {
				t.Errorf("in band %g at confidence %g, want %g at %g", m.NEESInBand, m.NEESConfidence, tt.inBand, NEESConfidence)
			}
			if len(m.NEES) != 2 || m.NEES[0] != tt.mean {
				t.Errorf("per-step NEES %v, want 2 steps starting at %g", m.NEES, tt.mean)
			}
		})
	}
}
