package result_test

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/config"
	"trackgate/harness/result"
	"trackgate/harness/runner"
)

// seriesParts builds a pair of partial summaries of the "berth" scenario:
// part A holds run 0, part B runs 1–3, so the run-count weights are ¼ and
// ¾. The numbers are chosen so that every pooled value can be worked by
// hand (see TestMergePoolsNewSeries).
func seriesParts() (a, b *result.Suite) {
	a, b = part(0, 2, 0), part(1, 2, 1, 2, 3)
	a.Scenarios[0].Metrics = &result.Metrics{Runs: 1, GOSPA: []float64{4, 8}, MeanGOSPA: 6, PositionRMSE: 2,
		GOSPALocalisation: []float64{4, 8}, GOSPAMissed: []float64{2, 0}, GOSPAFalse: []float64{0, 6},
		MeanGOSPALocalisation: 6, MeanGOSPAMissed: 1, MeanGOSPAFalse: 3,
		OSPA: []float64{1, 3}, MeanOSPA: 2,
		Objects: []result.ObjectError{
			{Object: "barge", RMSEPosition: 3, RMSEVelocity: 1, Steps: 10},
			{Object: "tug", RMSEPosition: 2, RMSEVelocity: 0.5, Steps: 5},
		},
		NIS: []float64{2, 4}, NISSteps: []int{1, 2}, MeanNIS: 3, NISSamplesInBand: 0.5,
		NISLowByStep: []float64{0.1, 0.1}, NISHighByStep: []float64{7, 7}, NISConfidence: 0.95, NISInBand: 1,
	}
	b.Scenarios[0].Metrics = &result.Metrics{Runs: 3, GOSPA: []float64{8, 4, 2}, MeanGOSPA: 2, PositionRMSE: 4,
		GOSPALocalisation: []float64{8, 4, 2}, GOSPAMissed: []float64{2, 4, 0}, GOSPAFalse: []float64{4, 0, 0},
		MeanGOSPALocalisation: 2, MeanGOSPAMissed: 5, MeanGOSPAFalse: 1,
		OSPA: []float64{3, 1, 5}, MeanOSPA: 6,
		Objects: []result.ObjectError{
			{Object: "barge", RMSEPosition: 1, RMSEVelocity: 2, Steps: 30},
			{Object: "pilot-boat", RMSEPosition: 4, RMSEVelocity: 1, Steps: 12},
		},
		NIS: []float64{1, 2, 3}, NISSteps: []int{0, 2, 3}, MeanNIS: 2, NISSamplesInBand: 0.9,
		NISLowByStep: []float64{0.3, 0.3, 0.3}, NISHighByStep: []float64{5, 5, 5}, NISConfidence: 0.95, NISInBand: 1,
	}
	return a, b
}

// TestMergePoolsNewSeries checks the pooling rules of Merge's doc comment
// for the GOSPA split, OSPA, per-object errors and NIS on numbers worked by
// hand; the NIS bands, which depend on per-step sample counts, are dropped
// with a note.
func TestMergePoolsNewSeries(t *testing.T) {
	a, b := seriesParts()
	got, err := result.Merge(a, b)
	if err != nil {
		t.Fatal(err)
	}
	want := &result.Metrics{
		Runs: 4,
		// (1·4 + 3·8)/4 = 7, (1·8 + 3·4)/4 = 5, 2 (B alone).
		GOSPA:        []float64{7, 5, 2},
		MeanGOSPA:    3,                   // (6 + 3·2)/4
		PositionRMSE: math.Sqrt(52 / 4.0), // sqrt((1·4 + 3·16)/4)
		// Step by step like GOSPA.
		GOSPALocalisation: []float64{7, 5, 2},
		GOSPAMissed:       []float64{2, 3, 0},   // (2+6)/4, (0+12)/4, 0
		GOSPAFalse:        []float64{3, 1.5, 0}, // (0+12)/4, (6+0)/4, 0
		// (6 + 3·2)/4, (1 + 3·5)/4, (3 + 3·1)/4.
		MeanGOSPALocalisation: 3, MeanGOSPAMissed: 4, MeanGOSPAFalse: 1.5,
		OSPA:     []float64{2.5, 1.5, 5}, // (1+9)/4, (3+3)/4, 5
		MeanOSPA: 5,                      // (2 + 3·6)/4
		Objects: []result.ObjectError{
			// sqrt((10·9 + 30·1)/40), sqrt((10·1 + 30·4)/40), 10 + 30.
			{Object: "barge", RMSEPosition: math.Sqrt(3), RMSEVelocity: math.Sqrt(3.25), Steps: 40},
			{Object: "pilot-boat", RMSEPosition: 4, RMSEVelocity: 1, Steps: 12},
			{Object: "tug", RMSEPosition: 2, RMSEVelocity: 0.5, Steps: 5},
		},
		// By step: step 0 B alone, step 1 A alone, step 2 (1·4 + 3·2)/4,
		// step 3 B alone.
		NIS:      []float64{1, 2, 2.5, 3},
		NISSteps: []int{0, 1, 2, 3},
		MeanNIS:  2.25, // (3 + 3·2)/4
		// (0.5 + 3·0.9)/4; the bands and NISInBand are dropped.
		NISSamplesInBand: 0.8,
	}
	if d := cmp.Diff(want, got.Scenarios[0].Metrics, cmpopts.EquateApprox(0, 1e-12)); d != "" {
		t.Errorf("pooled metrics (-want +got):\n%s", d)
	}
	if len(got.Notes) != 1 || !strings.Contains(got.Notes[0], "per-step NEES and NIS bands") || !strings.Contains(got.Notes[0], `"berth"`) {
		t.Errorf("notes = %q, want one about the dropped per-step bands of berth", got.Notes)
	}
}

// TestMergePoolsFallbacks: NIS averages without their steps are pooled by
// position (and the steps left out), an object a part gives no step count
// is pooled by run counts, a part without the GOSPA split or OSPA does not
// pull their means to zero, and parts without bands give no note.
func TestMergePoolsFallbacks(t *testing.T) {
	a, b := seriesParts()
	ma, mb := a.Scenarios[0].Metrics, b.Scenarios[0].Metrics
	ma.NISSteps = nil
	ma.Objects = []result.ObjectError{{Object: "tug", RMSEPosition: 2, RMSEVelocity: 0.5}}
	mb.Objects = []result.ObjectError{{Object: "tug", RMSEPosition: 4, RMSEVelocity: 1, Steps: 6}}
	ma.GOSPALocalisation, ma.GOSPAMissed, ma.GOSPAFalse = nil, nil, nil
	ma.MeanGOSPALocalisation, ma.MeanGOSPAMissed, ma.MeanGOSPAFalse = 0, 0, 0
	ma.OSPA, ma.MeanOSPA = nil, 0
	for _, m := range []*result.Metrics{ma, mb} {
		m.NISLowByStep, m.NISHighByStep, m.NISConfidence, m.NISInBand = nil, nil, 0, 0
	}
	got, err := result.Merge(a, b)
	if err != nil {
		t.Fatal(err)
	}
	m := got.Scenarios[0].Metrics
	// By position: (1·2 + 3·1)/4, (1·4 + 3·2)/4, 3.
	if want := []float64{1.25, 2.5, 3}; !slices.Equal(m.NIS, want) || m.NISSteps != nil {
		t.Errorf("NIS %v steps %v, want %v by position and no steps", m.NIS, m.NISSteps, want)
	}
	// sqrt((1·4 + 3·16)/4), sqrt((1·0.25 + 3·1)/4), steps 0 + 6.
	wantObj := []result.ObjectError{{Object: "tug", RMSEPosition: math.Sqrt(13), RMSEVelocity: math.Sqrt(0.8125), Steps: 6}}
	if d := cmp.Diff(wantObj, m.Objects, cmpopts.EquateApprox(0, 1e-12)); d != "" {
		t.Errorf("objects (-want +got):\n%s", d)
	}
	// B alone carries the split and OSPA.
	if m.MeanGOSPALocalisation != 2 || m.MeanGOSPAMissed != 5 || m.MeanGOSPAFalse != 1 || m.MeanOSPA != 6 {
		t.Errorf("split means %v %v %v, OSPA mean %v, want B's 2 5 1 and 6",
			m.MeanGOSPALocalisation, m.MeanGOSPAMissed, m.MeanGOSPAFalse, m.MeanOSPA)
	}
	if !slices.Equal(m.OSPA, []float64{3, 1, 5}) || !slices.Equal(m.GOSPAMissed, []float64{2, 4, 0}) {
		t.Errorf("OSPA %v, missed %v, want B's", m.OSPA, m.GOSPAMissed)
	}
	if len(got.Notes) != 0 {
		t.Errorf("notes %q, want none", got.Notes)
	}
}

// TestMergeKeepsWholeSummaryApart: a shard holding every run of a scenario
// keeps its summary, copied: changing the merged summary's series leaves
// the shard's untouched.
func TestMergeKeepsWholeSummaryApart(t *testing.T) {
	_, b := seriesParts()
	whole := part(0, 1, 0, 1, 2, 3)
	whole.Scenarios[0].Metrics = b.Scenarios[0].Metrics
	whole.Scenarios[0].Metrics.Runs = 4
	got, err := result.Merge(whole)
	if err != nil {
		t.Fatal(err)
	}
	m := got.Scenarios[0].Metrics
	if d := cmp.Diff(whole.Scenarios[0].Metrics, m); d != "" {
		t.Fatalf("whole summary changed (-shard +merged):\n%s", d)
	}
	m.OSPA[0], m.GOSPAFalse[0], m.NIS[0], m.NISSteps[0], m.NISLowByStep[0], m.Objects[0].Steps = -1, -1, -1, -1, -1, -1
	orig := whole.Scenarios[0].Metrics
	if orig.OSPA[0] != 3 || orig.GOSPAFalse[0] != 4 || orig.NIS[0] != 1 || orig.NISSteps[0] != 0 ||
		orig.NISLowByStep[0] != 0.3 || orig.Objects[0].Steps != 30 {
		t.Fatalf("the merged summary shares series with the shard's: %+v", orig)
	}
}

// judgedRuns builds runs of a scenario with per-run metrics drawn from a
// seeded source: every run has the same number of NIS and NEES samples at
// each step (none at step 0), and the objects are covered for different
// numbers of steps in different runs.
func judgedRuns(n int) []result.Run {
	rng := rand.New(rand.NewPCG(4471, 93))
	draw := func(k int, scale float64) []float64 {
		out := make([]float64, k)
		for i := range out {
			out[i] = float64(scale * rng.Float64())
		}
		return out
	}
	var runs []result.Run
	for i := range n {
		m := &result.RunMetrics{GOSPA: draw(5, 10), PositionRMSE: 1 + rng.Float64(), IDSwitches: i % 2,
			GOSPALocalisation: draw(5, 40), GOSPAMissed: draw(5, 20), GOSPAFalse: draw(5, 20), OSPA: draw(5, 6)}
		m.MeanGOSPA, m.MeanOSPA = 10*rng.Float64(), 6*rng.Float64()
		m.MeanGOSPALocalisation, m.MeanGOSPAMissed, m.MeanGOSPAFalse = 40*rng.Float64(), 20*rng.Float64(), 20*rng.Float64()
		m.Objects = []result.ObjectError{
			{Object: "ferry", RMSEPosition: 1 + rng.Float64(), RMSEVelocity: rng.Float64(), Steps: 2 + i},
			{Object: "launch", RMSEPosition: 2 + rng.Float64(), RMSEVelocity: rng.Float64(), Steps: 5 - i},
		}
		m.NISSamples = [][]float64{{}, draw(2, 6), draw(1, 6), draw(2, 6), draw(2, 6)}
		m.NEESSamples = [][]float64{{}, draw(2, 8), draw(2, 8), draw(1, 8), draw(2, 8)}
		var sum float64
		for _, s := range m.NISSamples {
			for _, v := range s {
				sum += v
			}
		}
		m.MeanNIS = sum / 7
		runs = append(runs, result.Run{Index: i, Seed: uint64(500 + i), Status: result.Pass, Metrics: m, Values: []result.Value{}})
	}
	return runs
}

// judgedScenario is a scenario holding runs, summarised by runner.Judge
// as if they were all its runs.
func judgedScenario(t *testing.T, runs []result.Run) result.Scenario {
	t.Helper()
	s := &result.Suite{Scenarios: []result.Scenario{{Name: "ferry-lane", Hash: "cc", StateDim: 4, MeasDim: 2,
		Position: []int{0, 2}, Status: result.Pass, RunsPlanned: len(runs), Runs: runs}}}
	if err := runner.Judge(s, config.Config{}); err != nil {
		t.Fatal(err)
	}
	return s.Scenarios[0]
}

// TestMergeMatchesWholeSummary: pooling the summaries that runner.Judge
// computes on two shares of a scenario's runs gives the summary it
// computes on all of them, for every field Merge pools, when each run gives
// the same number of samples at each step (the condition of Merge's doc
// comment). The whole summary is computed from the runs' own values, not
// by Merge.
func TestMergeMatchesWholeSummary(t *testing.T) {
	runs := judgedRuns(4)
	whole := judgedScenario(t, runs).Metrics
	a, b := part(0, 2), part(1, 2)
	a.Scenarios[0] = judgedScenario(t, runs[:1])
	b.Scenarios[0] = judgedScenario(t, runs[1:])
	for _, s := range []*result.Suite{a, b} {
		s.Scenarios[0].RunsPlanned = 4
		s.Scenarios = s.Scenarios[:1]
	}
	got, err := result.Merge(a, b)
	if err != nil {
		t.Fatal(err)
	}
	pooled := got.Scenarios[0].Metrics
	if whole == nil || pooled == nil || len(whole.NIS) != 4 || len(whole.Objects) != 2 {
		t.Fatalf("whole summary %+v, pooled %+v: want both, with 4 NIS averages and 2 objects", whole, pooled)
	}
	// The fields Merge drops, as its doc comment says.
	dropped := cmpopts.IgnoreFields(result.Metrics{}, "NEESSteps", "NEESLowByStep", "NEESHighByStep",
		"NEESLow", "NEESHigh", "NEESConfidence", "NEESInBand", "NISLowByStep", "NISHighByStep", "NISConfidence", "NISInBand")
	if d := cmp.Diff(whole, pooled, dropped, cmpopts.EquateApprox(0, 1e-12)); d != "" {
		t.Errorf("pooled summary differs from the whole one (-whole +pooled):\n%s", d)
	}
	if pooled.NISLowByStep != nil || pooled.NEESLowByStep != nil || pooled.NISInBand != 0 {
		t.Errorf("per-step bands kept: NIS %v NEES %v, NIS in band %v", pooled.NISLowByStep, pooled.NEESLowByStep, pooled.NISInBand)
	}
}
