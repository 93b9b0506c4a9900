package result_test

import (
	"bytes"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/result"
	"trackgate/harness/result/sample"
)

// surfaceSuite is a one-run suite carrying every metric field added for
// the GOSPA split, OSPA, per-object RMSE and NIS, at run and scenario
// level.
func surfaceSuite() *result.Suite {
	rm := &result.RunMetrics{
		GOSPA: []float64{15, 5}, MeanGOSPA: 10,
		GOSPALocalisation: []float64{25, 25}, GOSPAMissed: []float64{200, 0}, GOSPAFalse: []float64{0, 0},
		MeanGOSPALocalisation: 25, MeanGOSPAMissed: 100,
		OSPA: []float64{14.5, 5}, MeanOSPA: 9.75,
		Objects:    []result.ObjectError{{Object: "pilot-boat", RMSEPosition: 5, RMSEVelocity: 0.5, Steps: 2}},
		NIS:        []float64{3},
		NISSamples: [][]float64{{}, {3}}, MeanNIS: 3, NISSamplesInBand: 1,
	}
	m := &result.Metrics{Runs: 1, GOSPA: []float64{15, 5}, MeanGOSPA: 10,
		GOSPALocalisation: []float64{25, 25}, GOSPAMissed: []float64{200, 0}, GOSPAFalse: []float64{0, 0},
		MeanGOSPALocalisation: 25, MeanGOSPAMissed: 100, OSPA: []float64{14.5, 5}, MeanOSPA: 9.75,
		Objects: rm.Objects, NIS: []float64{3}, NISSteps: []int{1}, NISLowByStep: []float64{0.05}, NISHighByStep: []float64{7.4},
		NISConfidence: 0.95, NISInBand: 1, MeanNIS: 3, NISSamplesInBand: 1}
	return &result.Suite{Version: result.Version, Tool: "trackgate test", Against: "reference", Status: result.Pass,
		Scenarios: []result.Scenario{{Name: "pilot-station", File: "pilot-station.yaml", StateDim: 4, MeasDim: 2, Position: []int{0, 2},
			Status: result.Pass, RunsPlanned: 1, Metrics: m,
			Runs: []result.Run{{Index: 0, Seed: 9, Status: result.Pass, Checks: []result.Check{}, Metrics: rm}}}}}
}

// TestSurfaceFieldsRoundTrip: the new metric fields survive encoding and
// decoding unchanged, the schema accepts them, and the reader rejects a
// NIS band whose length disagrees with the NIS series.
func TestSurfaceFieldsRoundTrip(t *testing.T) {
	s := surfaceSuite()
	data, err := result.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	for _, key := range []string{`"gospa_localisation"`, `"mean_gospa_missed"`, `"ospa"`, `"mean_ospa"`, `"objects"`, `"rmse_velocity"`, `"nis_samples"`, `"nis_low_by_step"`, `"nis_samples_in_band"`} {
		if !bytes.Contains(data, []byte(key)) {
			t.Errorf("encoding has no %s", key)
		}
	}
	back, err := result.Unmarshal("surface.json", data)
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(s, back); d != "" {
		t.Errorf("round trip (-want +got):\n%s", d)
	}
	sch := compileSchema(t)
	if err := validate(t, sch, data); err != nil {
		t.Errorf("schema rejects the new fields: %v", err)
	}
	// The sample suite carries them too (the reports' fixtures).
	enc, err := result.Marshal(sample.Suite())
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(enc, []byte(`"gospa_localisation"`)) || !bytes.Contains(enc, []byte(`"nis_high_by_step"`)) {
		t.Error("the sample suite no longer carries the GOSPA split and the NIS band")
	}

	bad := strings.Replace(string(data), `"rmse_velocity": 0.5,`, `"rmse_velocity": 0.5, "steps_extra": 1,`, 1)
	if bad == string(data) {
		t.Fatal("the encoding of an object error changed; update the test's edit")
	}
	if err := validate(t, sch, []byte(bad)); err == nil {
		t.Error("schema accepts an unknown member of an object error")
	}
	short := surfaceSuite()
	short.Scenarios[0].Metrics.NISHighByStep = nil
	enc2, err := result.Marshal(short)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := result.Unmarshal("short.json", enc2); err == nil || !strings.Contains(err.Error(), "nis_high_by_step") {
		t.Errorf("a NIS band without its upper bounds: error %v, want one naming nis_high_by_step", err)
	}
}
