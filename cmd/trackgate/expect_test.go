package main

import (
	"bytes"
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"trackgate/harness/scenario"
)

// expectKeys is the fixed key order of a reference line.
var expectKeys = []string{"step", "objects", "hypothesis_cost", "margin", "best_probability", "covered_mass", "exhaustive", "coasting"}
var objectKeys = []string{"object", "predicted_mean", "predicted_cov", "detection", "mean", "cov", "nis"}

// topKeys returns the keys of the JSON object in data in their order.
func topKeys(t *testing.T, data []byte) []string {
	t.Helper()
	dec := json.NewDecoder(bytes.NewReader(data))
	if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
		t.Fatalf("line does not start an object: %v %v", tok, err)
	}
	var keys []string
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			t.Fatal(err)
		}
		keys = append(keys, tok.(string))
		var skip json.RawMessage
		if err := dec.Decode(&skip); err != nil {
			t.Fatal(err)
		}
	}
	return keys
}

// TestExpectStockScenarios runs expect on every stock scenario: one line per
// step, in order, with the fixed keys, the same bytes twice, and every live
// object of the step present.
func TestExpectStockScenarios(t *testing.T) {
	files, err := filepath.Glob("../../scenarios/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no stock scenarios found (%v)", err)
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			if testing.Short() && strings.Contains(f, "scale-") {
				t.Skip("large scenario skipped under -short")
			}
			spec, err := scenario.Load(f)
			if err != nil {
				t.Fatal(err)
			}
			var out, errb bytes.Buffer
			if code := run([]string{"expect", f}, &out, &errb); code != exitPass {
				t.Fatalf("exit %d: %s", code, errb.String())
			}
			var again bytes.Buffer
			run([]string{"expect", f, "--run", "0"}, &again, &errb)
			if !bytes.Equal(out.Bytes(), again.Bytes()) {
				t.Fatal("two runs of the same scenario and run differ")
			}
			lines := strings.Split(strings.TrimSuffix(out.String(), "\n"), "\n")
			if len(lines) != spec.Steps {
				t.Fatalf("%d lines, want one per step (%d)", len(lines), spec.Steps)
			}
			for k, line := range lines {
				if got := topKeys(t, []byte(line)); strings.Join(got, ",") != strings.Join(expectKeys, ",") {
					t.Fatalf("line %d keys %v, want %v", k+1, got, expectKeys)
				}
				var rec struct {
					Step    int               `json:"step"`
					Objects []json.RawMessage `json:"objects"`
					Best    float64           `json:"best_probability"`
					Covered float64           `json:"covered_mass"`
				}
				if err := json.Unmarshal([]byte(line), &rec); err != nil {
					t.Fatalf("line %d: %v", k+1, err)
				}
				alive := 0
				for _, o := range spec.Objects {
					if o.Alive(k) {
						alive++
					}
				}
				if rec.Step != k || len(rec.Objects) != alive {
					t.Fatalf("line %d: step %d with %d objects, want step %d with %d", k+1, rec.Step, len(rec.Objects), k, alive)
				}
				if !(rec.Best > 0 && rec.Best <= 1 && rec.Covered > 0 && rec.Covered <= 1) {
					t.Fatalf("line %d: best probability %g, covered mass %g, want both in (0, 1]", k+1, rec.Best, rec.Covered)
				}
				for _, o := range rec.Objects {
					if got := topKeys(t, o); strings.Join(got, ",") != strings.Join(objectKeys, ",") {
						t.Fatalf("line %d object keys %v, want %v", k+1, got, objectKeys)
					}
				}
			}
		})
	}
}

func TestExpectUsage(t *testing.T) {
	good := "../../scenarios/tie-mirror-pair.yaml"
	tests := []struct {
		name string
		args []string
		want int
		msg  string
	}{
		{"no-file", []string{"expect"}, exitUsage, "no scenario file"},
		{"missing-file", []string{"expect", "testdata/absent.yaml"}, exitUsage, "absent.yaml"},
		{"run-out-of-range", []string{"expect", good, "--run", "999"}, exitUsage, "--run 999"},
		{"negative-run", []string{"expect", "-run", "-1", good}, exitUsage, "--run -1"},
		{"bad-k", []string{"expect", "-k", "0", good}, exitUsage, "-k 0"},
		{"extra-arg", []string{"expect", good, "other.yaml"}, exitUsage, "unexpected argument"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			if code := run(tc.args, &out, &errb); code != tc.want || !strings.Contains(errb.String(), tc.msg) {
				t.Fatalf("exit %d, stderr %q; want exit %d mentioning %q", code, errb.String(), tc.want, tc.msg)
			}
			if out.Len() != 0 {
				t.Fatalf("stdout %q, want nothing on error", out.String())
			}
		})
	}
}
