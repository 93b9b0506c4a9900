package runner

import (
	"testing"
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
