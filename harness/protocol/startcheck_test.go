package protocol

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"trackgate/harness/mot"
)

func rows(r ...[]float64) mot.Mat {
	m, _ := mot.MatFromRows(r)
	return m
}

// TestStartValidate changes one thing at a time in a good start message
// and checks that Validate names the field and the expectation.
func TestStartValidate(t *testing.T) {
	tests := []struct {
		name   string
		change func(s *Start)
		want   string // "" for a good message; else a prefix of the error
	}{
		{name: "good", change: func(*Start) {}},
		// Q with a 2×2 block [[a, b], [b, a]] of eigenvalues a ± b (closed
		// form, common practice): a = b gives a singular but semi-definite Q.
		{name: "singular Q allowed", change: func(s *Start) {
			s.Model.Q = rows([]float64{1, 1, 0, 0}, []float64{1, 1, 0, 0}, []float64{0, 0, 1, 0}, []float64{0, 0, 0, 1})
		}},
		{name: "no clutter box", change: func(s *Start) {
			s.Model.ClutterMean, s.Model.ClutterDensity, s.Model.ClutterMin, s.Model.ClutterMax = 0, 0, nil, nil
		}},
		// A diagonal matrix's eigenvalues are its diagonal entries.
		{name: "negative R", change: func(s *Start) { s.Model.R = rows([]float64{-4, 0}, []float64{0, 4}) },
			want: "model.R: not positive definite"},
		{name: "indefinite R", change: func(s *Start) { s.Model.R = rows([]float64{1, 2}, []float64{2, 1}) },
			want: "model.R: not positive definite"},
		{name: "singular R", change: func(s *Start) { s.Model.R = rows([]float64{4, 4}, []float64{4, 4}) },
			want: "model.R: not positive definite"},
		{name: "asymmetric R", change: func(s *Start) { s.Model.R = rows([]float64{4, 1}, []float64{0, 4}) },
			want: "model.R: not symmetric"},
		{name: "indefinite Q", change: func(s *Start) {
			s.Model.Q = rows([]float64{1, 2, 0, 0}, []float64{2, 1, 0, 0}, []float64{0, 0, 1, 0}, []float64{0, 0, 0, 1})
		}, want: "model.Q: not positive semi-definite"},
		{name: "wide H", change: func(s *Start) { s.Model.H = rows([]float64{1, 0, 0}, []float64{0, 1, 0}) },
			want: "model.H: 2×3, want meas_dim×state_dim = 2×4"},
		{name: "small F", change: func(s *Start) { s.Model.F = mot.Identity(3) }, want: "model.F: 3×3, want state_dim×state_dim = 4×4"},
		{name: "R for 3-D", change: func(s *Start) { s.Model.R = mot.Identity(3) }, want: "model.R: 3×3"},
		{name: "F overflow", change: func(s *Start) { s.Model.F.Set(0, 1, math.Inf(1)) }, want: "model.F: entry (0,1) is +Inf"},
		{name: "zero state", change: func(s *Start) { s.Model.StateDim = 0 }, want: "model.state_dim"},
		{name: "P_D zero", change: func(s *Start) { s.Model.PD = 0 }, want: "model.detect_prob: 0, want a probability in (0, 1]"},
		{name: "P_D above one", change: func(s *Start) { s.Model.PD = 1.01 }, want: "model.detect_prob"},
		{name: "P_D one", change: func(s *Start) { s.Model.PD = 1 }},
		{name: "gate one", change: func(s *Start) { s.Model.GateProb = 1 }, want: "model.gate_prob: 1, want a probability in (0, 1)"},
		{name: "negative clutter", change: func(s *Start) { s.Model.ClutterMean = -1 }, want: "model.clutter_mean"},
		{name: "negative density", change: func(s *Start) { s.Model.ClutterDensity = -1e-6 }, want: "model.clutter_density"},
		{name: "short clutter box", change: func(s *Start) { s.Model.ClutterMin = []float64{0} }, want: "model.clutter_min: lengths 1 and 2"},
		{name: "inverted clutter box", change: func(s *Start) { s.Model.ClutterMin = []float64{0, 2000} }, want: "model.clutter_min[1]"},
		{name: "duplicate id", change: func(s *Start) { s.Objects[1].ID = s.Objects[0].ID }, want: `objects[1].id: "tug" already used by objects[0]`},
		{name: "disappear at appear", change: func(s *Start) { s.Objects[1].Disappear = 5 }, want: "objects[1].disappear: 5, want a step after appear (5)"},
		{name: "disappear before appear", change: func(s *Start) { s.Objects[1].Disappear = 2 }, want: "objects[1].disappear"},
		{name: "short prior mean", change: func(s *Start) { s.Objects[0].Mean = s.Objects[0].Mean[:3] }, want: "objects[0].mean: length 3"},
		{name: "indefinite prior", change: func(s *Start) { s.Objects[0].Cov.Set(3, 3, -1) }, want: "objects[0].cov: not positive semi-definite"},
		{name: "zero interval", change: func(s *Start) { s.Model.Interval = 0 }, want: "model.interval"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := harbourStart()
			tt.change(&s)
			err := s.Validate()
			if tt.want == "" {
				if err != nil {
					t.Fatalf("Validate() = %v, want nil", err)
				}
				return
			}
			if err == nil || !strings.HasPrefix(err.Error(), tt.want) {
				t.Fatalf("Validate() = %v, want an error starting %q", err, tt.want)
			}
		})
	}
}

// TestServeRefusesBadStart checks that Serve answers a bad start message
// with a positioned error and sends no ready reply: a tracker must not
// accept a run it cannot serve.
func TestServeRefusesBadStart(t *testing.T) {
	s := harbourStart()
	s.Model.R = rows([]float64{-4, 0}, []float64{0, 4})
	line, err := AppendStart(nil, s)
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	called := false
	err = Serve(bytes.NewReader(append(line, '\n')), &out, Ready{Name: "t", Version: "1"}, func(Start) (StepFunc, error) {
		called = true
		return func(sc mot.Scan) (mot.Frame, error) { return mot.Frame{Step: sc.Step}, nil }, nil
	})
	if err == nil || !strings.HasPrefix(err.Error(), "stdin:1: model.R: not positive definite") {
		t.Errorf("Serve error %v, want stdin:1: model.R: not positive definite ...", err)
	}
	if called || out.Len() != 0 {
		t.Errorf("begin called %v, output %q: want neither for a bad start", called, out.String())
	}
}

// TestReadyInvalidUTF8 checks that a tracker name that is not UTF-8 is
// refused with the field named, not turned into U+FFFD.
func TestReadyInvalidUTF8(t *testing.T) {
	_, err := ParseReady([]byte("{\"type\":\"ready\",\"protocol\":1,\"tracker\":\"sonar\x80\",\"version\":\"1\"}"))
	if err == nil || !strings.Contains(err.Error(), "tracker: invalid UTF-8 in string") {
		t.Errorf("ParseReady error %v, want tracker: invalid UTF-8 in string", err)
	}
	_, err = ParseReady([]byte("{\"type\":\"ready\",\"protocol\":1,\"tracker\":\"sonar\",\"version\":\"\\udfff\"}"))
	if err == nil || !strings.Contains(err.Error(), "version: unpaired UTF-16 surrogate") {
		t.Errorf("ParseReady error %v, want version: unpaired UTF-16 surrogate", err)
	}
}
