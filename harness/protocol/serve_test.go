package protocol

import (
	"bytes"
	"errors"
	"strings"
	"testing"

	"trackgate/harness/mot"
)

// TestServe drives Serve with two runs and checks every reply line,
// written out by hand.
func TestServe(t *testing.T) {
	start, _ := AppendStart(nil, harbourStart())
	scan0, _ := AppendScan(nil, mot.Scan{Step: 0, Time: 0, Detections: []mot.Detection{{ID: 0, Z: []float64{1, 2}}}})
	scan1, _ := AppendScan(nil, mot.Scan{Step: 1, Time: 2})
	in := strings.Join([]string{string(start), string(scan0), string(scan1), `{"type":"stop"}`,
		string(start), string(scan0), `{"type":"stop"}`}, "\n") + "\n"
	runs := 0
	begin := func(s Start) (StepFunc, error) {
		runs++
		run := runs
		return func(scan mot.Scan) (mot.Frame, error) {
			f := mot.Frame{Step: scan.Step}
			for _, d := range scan.Detections {
				f.Tracks = append(f.Tracks, mot.Estimate{Track: s.Objects[0].ID, Mean: []float64{d.Z[0], float64(run)},
					Detection: d.ID, HasDetection: true})
			}
			return f, nil
		}, nil
	}
	var out bytes.Buffer
	if err := Serve(strings.NewReader(in), &out, Ready{Name: "echo", Version: "2", ManyRuns: true}, begin); err != nil {
		t.Fatal(err)
	}
	ready := `{"type":"ready","protocol":1,"tracker":"echo","version":"2","reports":{"covariance":false,"detection":false},"many_runs":true}`
	want := ready + "\n" +
		`{"type":"tracks","step":0,"tracks":[{"id":"tug","mean":[1,1],"detection":0}]}` + "\n" +
		`{"type":"tracks","step":1,"tracks":[]}` + "\n" +
		ready + "\n" +
		`{"type":"tracks","step":0,"tracks":[{"id":"tug","mean":[1,2],"detection":0}]}` + "\n"
	if out.String() != want {
		t.Errorf("Serve wrote\n%s\nwant\n%s", out.String(), want)
	}
}

func TestServeErrors(t *testing.T) {
	start, _ := AppendStart(nil, harbourStart())
	begin := func(Start) (StepFunc, error) {
		return func(mot.Scan) (mot.Frame, error) { return mot.Frame{}, errors.New("filter diverged") }, nil
	}
	tests := []struct{ name, in, want string }{
		{"scan first", `{"type":"scan","step":0,"time":0,"detections":[]}` + "\n", "stdin:1: scan outside a run"},
		{"no stop", string(start) + "\n", "stdin:1: input ended inside a run"},
		{"step error", string(start) + "\n" + `{"type":"scan","step":0,"time":0,"detections":[]}` + "\n", "stdin:2: step 0: filter diverged"},
		{"bad line", "{\n", "stdin:1:2: unexpected end of line"},
	}
	for _, tt := range tests {
		err := Serve(strings.NewReader(tt.in), &bytes.Buffer{}, Ready{Name: "x"}, begin)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: Serve error %v, want %q", tt.name, err, tt.want)
		}
	}
}
