package result_test

import (
	"bytes"
	"math"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"trackgate/harness/result"
)

// gatedSuite is a one-run suite with every per-run gate input filled in,
// including an empty NEES step and a non-finite value.
func gatedSuite() *result.Suite {
	return &result.Suite{Version: result.Version, Tool: "trackgate test", Against: "both", Status: result.Pass,
		Tracker: result.Tracker{Command: []string{"./lock-keeper"}, Name: "lock-keeper", Version: "2"},
		Scenarios: []result.Scenario{{Name: "sluice-approach", File: "sluice-approach.yaml", Status: result.Pass,
			StateDim: 4, MeasDim: 2, Position: []int{0, 2}, RunsPlanned: 1,
			Runs: []result.Run{{Index: 0, Seed: 11, Status: result.Pass, Checks: []result.Check{},
				Metrics: &result.RunMetrics{GOSPA: []float64{1.5, 2.25, 0.75}, NEES: []float64{3.9, 4.1},
					NEESSamples: [][]float64{{3.9}, {}, {4.0, 4.2}}},
				Values:          []result.Value{{Metric: "mean_gospa", Value: 1.5}, {Metric: "mean_nees", Value: math.Inf(1)}},
				ReferenceValues: []result.Value{{Metric: "mean_gospa", Value: 1.25}},
				BlessedValues:   []result.Value{{Metric: "mean_gospa", Value: 1.5}},
			}},
		}},
	}
}

// TestGateInputsRoundTrip: the per-run gate inputs survive a write and a
// read bit for bit (the merge of shards judges gates on them), and the
// written file conforms to schema.json, checked with an independent JSON
// Schema draft 2020-12 validator (github.com/santhosh-tekuri/jsonschema).
func TestGateInputsRoundTrip(t *testing.T) {
	data, err := result.Marshal(gatedSuite())
	if err != nil {
		t.Fatal(err)
	}
	back, err := result.Unmarshal("gated.json", data)
	if err != nil {
		t.Fatal(err)
	}
	again, err := result.Marshal(back)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(data, again) {
		t.Errorf("round trip changed the bytes:\n%s\n---\n%s", data, again)
	}
	r := back.Scenarios[0].Runs[0]
	if v, ok := result.Lookup(r.Values, "mean_nees"); !ok || !math.IsInf(v, 1) {
		t.Errorf("mean_nees read back as %g, %v", v, ok)
	}
	if _, ok := result.Lookup(r.ReferenceValues, "mean_nees"); ok {
		t.Error("Lookup found a metric that is not there")
	}
	if got := r.Metrics.NEESSamples; len(got) != 3 || len(got[1]) != 0 || got[2][1] != 4.2 {
		t.Errorf("NEES samples read back as %v", got)
	}

	c := jsonschema.NewCompiler()
	c.DefaultDraft(jsonschema.Draft2020)
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(result.Schema()))
	if err != nil {
		t.Fatal(err)
	}
	if err := c.AddResource("schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile("schema.json")
	if err != nil {
		t.Fatal(err)
	}
	inst, err := jsonschema.UnmarshalJSON(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	if err := sch.Validate(inst); err != nil {
		t.Errorf("the result does not conform to schema.json: %v", err)
	}
	// A value without its metric name must not conform.
	bad := bytes.Replace(data, []byte(`"metric": "mean_gospa", `), nil, 1)
	inst, err = jsonschema.UnmarshalJSON(bytes.NewReader(bad))
	if err != nil {
		t.Fatal(err)
	}
	if err := sch.Validate(inst); err == nil {
		t.Error("a value without a metric name conforms to schema.json")
	}
}
