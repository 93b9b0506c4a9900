package runner

import (
	"context"
	"math"
	"strings"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/reference/tracker"
	"trackgate/reference/variant"
)

// consistencyScenario is a linear-Gaussian scenario with P_D = 1 and no
// clutter: one object, constant velocity in 2-D (n = 4), 60 steps, 50 runs.
const consistencyScenario = "testdata/canal-barge-consistency.yaml"

// variantLocal runs a variant of the reference tracker in process.
func variantLocal(t testing.TB, name string) *Local {
	v, ok := variant.Lookup(name)
	if !ok {
		t.Fatalf("no variant %q", name)
	}
	return &Local{
		Ready: protocol.Ready{Name: "variant-" + name, Version: "1", Covariance: true, Association: true},
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			return protocol.StepFunc(v.New(tracker.Config{Model: s.Model, Objects: s.Objects})), nil
		},
	}
}

// inflatedNoise is the reference tracker filtering with its measurement
// noise covariance R multiplied by 16 (σ four times the sensor's): a
// mistuned but otherwise correct tracker, measurably less accurate than
// the Kalman filter with the true R, which minimises the mean squared
// error among linear estimators (Bar-Shalom, Li, Kirubarajan 2001, §5.2).
func inflatedNoise() *Local {
	return &Local{
		Ready: protocol.Ready{Name: "inflated-noise", Version: "1", Covariance: true, Association: true},
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			m := s.Model
			m.R = m.R.Clone()
			for i := range m.R.Data {
				m.R.Data[i] *= 16
			}
			ref := tracker.New(tracker.Config{Model: m, Objects: s.Objects})
			return func(scan mot.Scan) (mot.Frame, error) {
				f, _, err := ref.Step(scan)
				return f, err
			}, nil
		},
	}
}

// consistencyGate: the mean over runs of each run's fraction of steps whose
// NEES lies in its single-run 95 % band, [0.4844, 11.1433] for n = 4
// (/work/shared/CHECK-VALUES.md §3.2, scipy chi2.ppf), must be at least
// 0.85. A consistent filter has 0.95 in expectation; 0.85 is the 0.1 %
// binomial quantile of 60 independent steps (51/60; exact binomial sum,
// common practice as the steps of one run are correlated).
func consistencyGate() config.Gate {
	limit := 0.85
	return config.Gate{Metric: MetricNEESInBand, LowerIsWorse: true, Limit: &limit}
}

func gateNamed(t *testing.T, sc result.Scenario, name string) result.Gate {
	t.Helper()
	for _, g := range sc.Gates {
		if g.Name == name {
			return g
		}
	}
	t.Fatalf("scenario %s has no gate %q: %+v", sc.Name, name, sc.Gates)
	return result.Gate{}
}

// TestReferenceIsConsistent: on a linear-Gaussian scenario with P_D = 1 and
// no clutter the reference tracker is a Kalman filter with the true model,
// so its NEES ε_i(k) ~ χ²₄ and the average over N = 50 runs satisfies
// N·ε̄(k) ~ χ²₂₀₀: ε̄(k) must lie in [3.2545596500, 4.8211579101] on about
// 95 % of the steps (Bar-Shalom, Li, Kirubarajan, "Estimation with
// Applications to Tracking and Navigation", Wiley 2001, §5.4; interval
// from /work/shared/CHECK-VALUES.md §3.2, n = 4, N = 50, scipy
// chi2.ppf). With Q taken as 0 (variant no-process-noise) the filter
// trusts its prediction too much, its NEES grows and the gate must fail.
func TestReferenceIsConsistent(t *testing.T) {
	if testing.Short() {
		t.Skip("50 Monte Carlo runs of 60 steps, twice")
	}
	check := func(l *Local) result.Scenario {
		o := variantOptions("reference", consistencyScenario)
		o.Against, o.Local = AgainstReference, l
		o.Config.Gates = []config.Gate{consistencyGate()}
		s := checkOf(t, o)
		sc := s.Scenarios[0]
		if len(sc.Runs) != 50 || sc.Metrics == nil {
			t.Fatalf("%d runs, metrics %v", len(sc.Runs), sc.Metrics)
		}
		return sc
	}
	good := check(variantLocal(t, "resum")) // the reference up to the last bits
	m := good.Metrics
	if math.Abs(m.NEESLow-3.2545596500) > 1e-9 || math.Abs(m.NEESHigh-4.8211579101) > 1e-9 {
		t.Errorf("NEES band [%.10f, %.10f], want [3.2545596500, 4.8211579101]", m.NEESLow, m.NEESHigh)
	}
	if len(m.NEES) != 60 {
		t.Fatalf("%d steps with an average NEES, want 60", len(m.NEES))
	}
	// 51 of 60 steps: the 0.1 % binomial quantile of 60 steps at 0.95.
	if m.NEESInBand < 51.0/60 {
		t.Errorf("average NEES in its band on %.3f of the steps, want about 0.95 (at least 51/60); averages %v", m.NEESInBand, m.NEES)
	}
	t.Logf("consistent: average NEES in band on %.4f of the steps; Q = 0 below", m.NEESInBand)
	if g := gateNamed(t, good, MetricNEESInBand+" limit"); g.Status != result.Pass {
		t.Errorf("consistent filter: gate %s: %s", g.Status, g.Message)
	}
	if good.Status != result.Pass {
		t.Errorf("the resummed reference against the reference: status %s", good.Status)
	}

	bad := check(variantLocal(t, "no-process-noise"))
	if g := gateNamed(t, bad, MetricNEESInBand+" limit"); g.Status != result.Fail {
		t.Errorf("Q = 0: gate %s (estimate %.3f), want fail: %s", g.Status, g.Estimate, g.Message)
	}
	t.Logf("Q = 0: average NEES in band on %.4f of the steps, gate estimate %.4f", bad.Metrics.NEESInBand, gateNamed(t, bad, MetricNEESInBand+" limit").Estimate)
	if bad.Metrics.NEESInBand > 0.5 {
		t.Errorf("Q = 0: average NEES in band on %.3f of the steps, want far fewer", bad.Metrics.NEESInBand)
	}
}

// TestPairedGate: the paired gate on mean GOSPA (95 %, minimum effect
// 0.25 m) must not fire on a rerun of the blessed tracker (baseline: its
// blessed metrics on the same 50 seeds), nor on a harmless variant paired
// with the reference, and must fire on a tracker whose filter inflates R
// sixteenfold, both against the reference and against the blessed
// metrics of the unchanged tracker. Paired t interval: Gosset
// ("Student"), Biometrika 6(1):1–25, 1908; see metrics.Paired.
func TestPairedGate(t *testing.T) {
	if testing.Short() {
		t.Skip("four suites of 50 Monte Carlo runs")
	}
	root := t.TempDir()
	gate := config.Gate{Metric: MetricMeanGOSPA, Paired: &config.Paired{Confidence: 0.95, MinEffect: 0.25}}
	opts := func(l *Local, against Against) Options {
		o := variantOptions("reference", consistencyScenario)
		o.Against, o.Local = against, l
		o.GoldenDir, o.TrackerName = root, "canal-tracker"
		o.Config.Gates = []config.Gate{gate}
		o.Config.GoldenRuns = 50 // every run has blessed metrics
		return o
	}
	if _, err := Bless(context.Background(), BlessOptions{Options: opts(variantLocal(t, "resum"), AgainstBoth)}); err != nil {
		t.Fatal(err)
	}
	paired := func(l *Local, against Against) result.Gate {
		s := checkOf(t, opts(l, against))
		return gateNamed(t, s.Scenarios[0], MetricMeanGOSPA+" paired")
	}
	if g := paired(variantLocal(t, "resum"), AgainstBoth); g.Status != result.Pass || !strings.Contains(g.Message, "blessed") {
		t.Errorf("rerun of the blessed tracker: paired gate %s: %s", g.Status, g.Message)
	}
	if g := paired(variantLocal(t, "shuffle"), AgainstReference); g.Status != result.Pass || !strings.Contains(g.Message, "the reference") {
		t.Errorf("harmless variant against the reference: paired gate %s: %s", g.Status, g.Message)
	}
	for _, against := range []Against{AgainstReference, AgainstBoth} {
		g := paired(inflatedNoise(), against)
		t.Logf("R inflated, against %s: worsening %.3f m, interval [%.3f, %.3f]", against, g.Estimate, g.Low, g.High)
		base := map[Against]string{AgainstReference: "against the reference", AgainstBoth: "against the blessed metrics"}[against]
		if g.Status != result.Fail || !(g.Low > 0.25) || !strings.Contains(g.Message, base) {
			t.Errorf("R inflated, against %s: paired gate %s, interval [%.3f, %.3f]: %s", against, g.Status, g.Low, g.High, g.Message)
		}
	}
}
