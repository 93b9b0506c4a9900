package tracker

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"trackgate/harness/mot"
)

// TestAppendJSON decodes the line written for the worked scan and compares
// every field with the Detail it came from; non-finite numbers become null.
func TestAppendJSON(t *testing.T) {
	md, states, scan := workedScan(0.9)
	d, err := StepFrom(md, states, scan, 10, 0)
	if err != nil {
		t.Fatal(err)
	}
	d.Objects[1].Detection = mot.NoDetection // exercise the null forms
	d.Objects[1].NIS = math.NaN()
	d.Margin = math.Inf(1)
	d.Coasting = []string{"quay \"west\""}
	line := d.AppendJSON(nil)
	if !bytes.HasSuffix(line, []byte("}\n")) || bytes.Count(line, []byte("\n")) != 1 {
		t.Fatalf("not one line: %q", line)
	}
	var got struct {
		Step    int `json:"step"`
		Objects []struct {
			Object    string      `json:"object"`
			PredMean  []float64   `json:"predicted_mean"`
			PredCov   [][]float64 `json:"predicted_cov"`
			Detection *int        `json:"detection"`
			Mean      []float64   `json:"mean"`
			Cov       [][]float64 `json:"cov"`
			NIS       *float64    `json:"nis"`
		} `json:"objects"`
		Cost       float64  `json:"hypothesis_cost"`
		Margin     *float64 `json:"margin"`
		Best       float64  `json:"best_probability"`
		Covered    float64  `json:"covered_mass"`
		Exhaustive bool     `json:"exhaustive"`
		Coasting   []string `json:"coasting"`
	}
	dec := json.NewDecoder(bytes.NewReader(line))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&got); err != nil {
		t.Fatalf("%v in %s", err, line)
	}
	if got.Step != d.Step || got.Cost != d.Cost || got.Best != d.BestProb || got.Covered != d.CoveredMass || got.Exhaustive != d.Exhaustive {
		t.Errorf("scan fields %+v differ from the detail", got)
	}
	if got.Margin != nil || len(got.Coasting) != 1 || got.Coasting[0] != d.Coasting[0] {
		t.Errorf("margin %v, coasting %q; want null and %q", got.Margin, got.Coasting, d.Coasting)
	}
	if len(got.Objects) != 2 {
		t.Fatalf("%d objects, want 2", len(got.Objects))
	}
	o0, o1 := got.Objects[0], got.Objects[1]
	if o0.Object != "one" || o0.Detection == nil || *o0.Detection != 11 || o0.NIS == nil || *o0.NIS != d.Objects[0].NIS {
		t.Errorf("object one = %+v, want detection 11 and NIS %v", o0, d.Objects[0].NIS)
	}
	if o1.Detection != nil || o1.NIS != nil {
		t.Errorf("object two: detection %v, NIS %v; want null, null", o1.Detection, o1.NIS)
	}
	for j := 0; j < 2; j++ {
		if o0.Mean[j] != d.Objects[0].Mean[j] || o0.PredMean[j] != d.Objects[0].PredMean[j] {
			t.Errorf("object one mean[%d]: %v / %v, want %v / %v (shortest round-trip must be exact)", j, o0.Mean[j], o0.PredMean[j], d.Objects[0].Mean[j], d.Objects[0].PredMean[j])
		}
		for l := 0; l < 2; l++ {
			if o0.Cov[j][l] != d.Objects[0].Cov.At(j, l) || o0.PredCov[j][l] != d.Objects[0].PredCov.At(j, l) {
				t.Errorf("object one cov(%d,%d) differs", j, l)
			}
		}
	}
	// Fixed key order.
	want := []string{`{"step":`, `,"objects":[{"object":`, `,"predicted_mean":`, `,"predicted_cov":`, `,"detection":`, `,"mean":`, `,"cov":`, `,"nis":`, `,"hypothesis_cost":`, `,"margin":`, `,"best_probability":`, `,"covered_mass":`, `,"exhaustive":`, `,"coasting":`}
	at := 0
	for _, w := range want {
		i := strings.Index(string(line[at:]), w)
		if i < 0 {
			t.Fatalf("key %s missing or out of order in %s", w, line)
		}
		at += i + len(w)
	}
	var buf bytes.Buffer
	ex := Expected{Steps: []Detail{d, d}}
	if err := ex.WriteJSONL(&buf); err != nil || buf.String() != string(line)+string(line) {
		t.Fatalf("WriteJSONL wrote %q (%v), want the two lines", buf.String(), err)
	}
}
