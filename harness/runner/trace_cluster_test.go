package runner

import (
	"slices"
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
)

// TestTimelineJudgesByCluster: the association timeline labels a step the
// way the verdicts judge it, by the margins of the clusters where the
// tracker's association changed, not by the scan's smallest margin. At
// step 1 of the quay fixture the pallets' cluster is an exact tie (margin
// 0, which is also the scan's margin) and the forklift's is clear (margin
// (3.6 − 0.016)/2 ≈ 1.79, worked by hand in the fixture): flipping the
// pallets is a "tie", taking the forklift's stray return "differs", and
// doing both "differs", since one changed cluster is clear.
func TestTimelineJudgesByCluster(t *testing.T) {
	for _, tt := range []struct {
		name                string
		flipTied, takeStray bool
		want                string
	}{
		{"unchanged", false, false, "same"},
		{"flip-tied", true, false, "tie"},
		{"take-stray", false, true, "differs"},
		{"both", true, true, "differs"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			s := quayCheck(t, tt.flipTied, tt.takeStray)
			tr := s.Scenarios[0].Runs[0].Trace
			if tr == nil {
				t.Fatal("run 0 has no trace")
			}
			got := tr.Associations
			t.Logf("timeline %v", got)
			if len(got) != 4 {
				t.Fatalf("timeline %v, want one label for each of the 4 steps", got)
			}
			if got[0] != "same" {
				t.Fatalf("step 0 labelled %q, want same (nothing is changed before step 1)", got[0])
			}
			if got[1] != tt.want {
				t.Fatalf("step 1 labelled %q, want %q (timeline %v)", got[1], tt.want, got)
			}
		})
	}
}

// TestTimelineSkipsUnreported: a step at which the tracker reports no
// association for its tracks (HasDetection false, Detection NoDetection)
// is not a change, as the verdicts do not judge it one: the reference run
// that keeps quiet at step 1 is "same" throughout and passes.
func TestTimelineSkipsUnreported(t *testing.T) {
	inner := quayTracker(false, false)
	var o Options
	o.Scenarios = []string{quayFile}
	o.Against, o.Workers = AgainstReference, 1
	o.Getenv = func(string) string { return "" }
	o.Config.TieMargin = 0.01
	o.Local = &Local{
		Ready: inner.Ready,
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			step, err := inner.Begin(s)
			if err != nil {
				return nil, err
			}
			return func(scan mot.Scan) (mot.Frame, error) {
				f, err := step(scan)
				if scan.Step == 1 {
					for i := range f.Tracks {
						f.Tracks[i].Detection, f.Tracks[i].HasDetection = mot.NoDetection, false
					}
				}
				return f, err
			}, nil
		},
	}
	s := checkOf(t, o)
	tr := s.Scenarios[0].Runs[0].Trace
	if tr == nil {
		t.Fatal("run 0 has no trace")
	}
	if want := []string{"same", "same", "same", "same"}; !slices.Equal(tr.Associations, want) {
		t.Fatalf("timeline %v, want %v (status %s)", tr.Associations, want, s.Status)
	}
	if s.Status != result.Pass {
		t.Fatalf("suite status %s, want pass", s.Status)
	}
}
