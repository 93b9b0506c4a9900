package result_test

import (
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/result"
)

// part builds a shard of a two-scenario suite holding the given runs of
// the "berth" scenario.
func part(index, total int, runs ...int) *result.Suite {
	s := &result.Suite{
		Version: 1, Tool: "t", Against: "reference", Status: result.Pass,
		Tracker: result.Tracker{Command: []string{"trk"}, Name: "trk", Version: "1"},
		Shard:   &result.Shard{Index: index, Total: total},
		Scenarios: []result.Scenario{
			{Name: "berth", Hash: "aa", RunsPlanned: 4, Status: result.Pass, Runs: []result.Run{}},
			{Name: "slipway", Hash: "bb", Status: result.Pass, Runs: []result.Run{}},
		},
	}
	for _, r := range runs {
		s.Scenarios[0].Runs = append(s.Scenarios[0].Runs, result.Run{Index: r, Seed: uint64(100 + r), Status: result.Pass})
	}
	return s
}

func TestMergeErrors(t *testing.T) {
	tests := []struct {
		name   string
		parts  func() []*result.Suite
		want   string
		reason string
	}{
		{"no input", func() []*result.Suite { return nil }, "no shard results", ""},
		{"hash differs", func() []*result.Suite {
			a, b := part(0, 2, 0, 1), part(1, 2, 2, 3)
			b.Scenarios[0].Hash = "cc"
			return []*result.Suite{a, b}
		}, `scenario "berth": hash cc`, "the scenario file changed between shards"},
		{"tracker differs", func() []*result.Suite {
			a, b := part(0, 2, 0, 1), part(1, 2, 2, 3)
			b.Tracker.Version = "2"
			return []*result.Suite{a, b}
		}, "tracker trk 2", ""},
		{"planned run missing", func() []*result.Suite {
			return []*result.Suite{part(0, 2, 0, 1), part(1, 2, 3)}
		}, `scenario "berth": run 2 of 4 planned in no shard`, ""},
		{"run beyond plan", func() []*result.Suite {
			return []*result.Suite{part(0, 2, 0, 1), part(1, 2, 2, 3, 4)}
		}, "run index 4 outside the 4 planned", ""},
		{"duplicate run", func() []*result.Suite {
			return []*result.Suite{part(0, 2, 0, 1, 2), part(1, 2, 2, 3)}
		}, `scenario "berth" run 2 appears twice: in result 1 (shard 0/2) and result 2 (shard 1/2)`, ""},
		{"order conflict", func() []*result.Suite {
			a, b := part(0, 2, 0, 1), part(1, 2, 2, 3)
			b.Scenarios[0], b.Scenarios[1] = b.Scenarios[1], b.Scenarios[0]
			return []*result.Suite{a, b}
		}, "the other way round", ""},
		{"version differs", func() []*result.Suite {
			a, b := part(0, 2, 0, 1), part(1, 2, 2, 3)
			b.Version = 2
			return []*result.Suite{a, b}
		}, "layout version 2", ""},
		{"zero total", func() []*result.Suite {
			a := part(0, 0, 0, 1)
			return []*result.Suite{a}
		}, "at least 1", ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := result.Merge(tt.parts()...)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("Merge error = %v, want it to contain %q", err, tt.want)
			}
		})
	}
}

func TestMergeOrderAndStatus(t *testing.T) {
	a, b := part(1, 2, 3, 1), part(0, 2, 2, 0)
	a.Scenarios[0].Runs[1].Status = result.Fail
	a.Scenarios[0].Status = result.Fail
	// A scenario that failed to load carries its error in every shard.
	a.Scenarios[1].Status, b.Scenarios[1].Status = result.Error, result.Error
	got, err := result.Merge(a, b)
	if err != nil {
		t.Fatal(err)
	}
	var idx []int
	for _, r := range got.Scenarios[0].Runs {
		idx = append(idx, r.Index)
	}
	if d := cmp.Diff([]int{0, 1, 2, 3}, idx); d != "" {
		t.Errorf("run order (-want +got):\n%s", d)
	}
	if got.Scenarios[0].Status != result.Fail || got.Scenarios[1].Status != result.Error || got.Status != result.Error {
		t.Errorf("statuses %s, %s, suite %s; want fail, error, error", got.Scenarios[0].Status, got.Scenarios[1].Status, got.Status)
	}
	if got.Shard != nil {
		t.Errorf("merged Shard = %+v, want nil", got.Shard)
	}
	if a.Scenarios[0].Runs[0].Index != 3 {
		t.Error("Merge reordered its input")
	}
}

// TestMergePoolsMetrics checks the pooling formulas of Merge's doc comment
// on numbers worked by hand: part A holds 1 run, part B 3 runs.
func TestMergePoolsMetrics(t *testing.T) {
	a, b := part(0, 2, 0), part(1, 2, 1, 2, 3)
	a.Scenarios[0].Metrics = &result.Metrics{Runs: 1, GOSPA: []float64{4, 8}, MeanGOSPA: 6, PositionRMSE: 2, IDSwitches: 1,
		NEES: []float64{1, 9}, NEESLow: 0.5, NEESHigh: 6, NEESConfidence: 0.95}
	b.Scenarios[0].Metrics = &result.Metrics{Runs: 3, GOSPA: []float64{8, 4, 2}, MeanGOSPA: 2, PositionRMSE: 4, FalseTracks: 2,
		NEES: []float64{3, 1}, NEESLow: 0.5, NEESHigh: 6, NEESConfidence: 0.95}
	b.Scenarios[0].Gates = []result.Gate{{Name: "mean-gospa", Status: result.Pass}}
	got, err := result.Merge(a, b)
	if err != nil {
		t.Fatal(err)
	}
	want := &result.Metrics{
		Runs: 4,
		// step 0: (1·4 + 3·8)/4 = 7; step 1: (1·8 + 3·4)/4 = 5; step 2
		// only in B: 2.
		GOSPA:     []float64{7, 5, 2},
		MeanGOSPA: 3,                 // (6 + 3·2)/4
		NEES:      []float64{2.5, 3}, // (1+9)/4, (9+3)/4
		// No band: both parts carry [0.5, 6], but that band is for their
		// own sample counts; the average over all four runs has a
		// narrower one (Bar-Shalom, Li, Kirubarajan 2001, §5.4.2).
		PositionRMSE: math.Sqrt((4 + 3*16) / 4.0), // sqrt(Σ wᵢ rᵢ²)
		IDSwitches:   1, FalseTracks: 2,
	}
	if d := cmp.Diff(want, got.Scenarios[0].Metrics, cmpopts.EquateApprox(0, 1e-12)); d != "" {
		t.Errorf("pooled metrics (-want +got):\n%s", d)
	}
	if len(got.Scenarios[0].Gates) != 0 {
		t.Errorf("gates of a partial shard kept: %+v", got.Scenarios[0].Gates)
	}
	notes := strings.Join(got.Notes, "\n")
	if len(got.Notes) != 2 || !strings.Contains(notes, "gate decisions made on partial runs") || !strings.Contains(notes, "carry no band") {
		t.Errorf("notes = %q, want one about dropped gates and one about the dropped NEES band", got.Notes)
	}
}
