package runner

import (
	"slices"
	"strings"
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/reference/tracker"
)

// zeroCovTracker is the reference tracker in process, reporting an all-zero
// covariance (symmetric and positive semi-definite, so the protocol admits
// it) for every track when step < 0, else for the first track of that
// step only.
func zeroCovTracker(step int) *Local {
	return &Local{
		Ready: protocol.Ready{Name: "zero-covariance", Version: "1", Covariance: true, Association: true},
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			ref := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects})
			return func(scan mot.Scan) (mot.Frame, error) {
				f, _, err := ref.Step(scan)
				f.Tracks = slices.Clone(f.Tracks)
				for i := range f.Tracks {
					if step < 0 || scan.Step == step && i == 0 {
						n := len(f.Tracks[i].Mean)
						f.Tracks[i].Cov = mot.NewMat(n, n)
					}
				}
				return f, err
			}, nil
		},
	}
}

func valueOf(t *testing.T, vs []result.Value, name string) float64 {
	t.Helper()
	v, ok := result.Lookup(vs, name)
	if !ok {
		t.Fatalf("no value %q in %v", name, vs)
	}
	return v
}

// TestSingularCovarianceKeepsMetrics: a covariance that is not positive
// definite leaves that sample out of the NEES, is counted and said, and
// the run keeps its GOSPA and other metrics; the metrics check never errs.
func TestSingularCovarianceKeepsMetrics(t *testing.T) {
	check := func(step int) *result.Suite {
		var o Options
		o.Scenarios = []string{scenarioFile("warmup-rail-carts")}
		o.Against, o.Workers, o.Runs = AgainstReference, 1, 2
		o.Getenv = func(string) string { return "" }
		o.Local = zeroCovTracker(step)
		return checkOf(t, o)
	}
	samples := func(r result.Run) int {
		n := 0
		for _, v := range r.Metrics.NEESSamples {
			n += len(v)
		}
		return n
	}
	base := check(1 << 30) // no covariance changed
	for _, tt := range []struct {
		name string
		step int
	}{{"every track", -1}, {"one track at step 6", 6}} {
		t.Run(tt.name, func(t *testing.T) {
			s := check(tt.step)
			for _, r := range s.Scenarios[0].Runs {
				for _, c := range r.Checks {
					if c.Status == result.Error {
						t.Fatalf("run %d check %s errs: %s", r.Index, c.Name, c.Message)
					}
				}
				m := findCheck(t, s, 0, r.Index, "metrics")
				if !strings.Contains(m.Message, "not positive definite") || m.Status != result.Pass {
					t.Errorf("run %d metrics check %s: %s", r.Index, m.Status, m.Message)
				}
				if r.Metrics == nil || len(r.Metrics.GOSPA) == 0 {
					t.Fatalf("run %d lost its metrics", r.Index)
				}
				// The means are the reference's, so GOSPA is exactly the
				// reference's.
				if g, w := valueOf(t, r.Values, MetricMeanGOSPA), valueOf(t, r.ReferenceValues, MetricMeanGOSPA); g != w {
					t.Errorf("run %d mean GOSPA %g, reference %g", r.Index, g, w)
				}
				all := samples(base.Scenarios[0].Runs[r.Index])
				got, skipped := samples(r), int(valueOf(t, r.Values, MetricNEESSkipped))
				want := 1
				if tt.step < 0 {
					want = all
				}
				if skipped != want || got != all-want {
					t.Errorf("run %d: %d NEES samples and %d skipped, want %d and %d", r.Index, got, skipped, all-want, want)
				}
			}
		})
	}
}
