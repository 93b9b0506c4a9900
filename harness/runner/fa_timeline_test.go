package runner

import (
	"slices"
	"testing"

	"trackgate/harness/result"
)

// TestTimelineFollowsTheBranch: after a tie the tracker resolves the other
// way (tie-flip, no bias), the timeline reads the reference check's own
// judgement, made down the tracker's branch: it shows the tie and never
// "differs", while the run itself is a tie. With a clear association
// change (the quay fixture's stray return, taken at step 1) the same
// timeline still says "differs".
func TestTimelineFollowsTheBranch(t *testing.T) {
	o := flipOptions(flipTracker(flipReports[0], false, nil), 2, "tie-mirror-pair", "convoy-parallel-trucks")
	o.AllTraces = true
	s := checkOf(t, o)
	ties := 0
	for _, sc := range s.Scenarios {
		for _, r := range sc.Runs {
			if r.Trace == nil {
				t.Fatalf("%s run %d has no trace", sc.Name, r.Index)
			}
			got := r.Trace.Associations
			if len(got) == 0 {
				t.Fatalf("%s run %d: empty timeline", sc.Name, r.Index)
			}
			if slices.Contains(got, "differs") {
				t.Errorf("%s run %d (status %s): timeline %v says differs for a harmless flip", sc.Name, r.Index, r.Status, got)
			}
			if r.Status.Rank() > result.Tie.Rank() {
				t.Errorf("%s run %d: status %s, want at most a tie", sc.Name, r.Index, r.Status)
			}
			for _, l := range got {
				if l == "tie" {
					ties++
				}
			}
		}
	}
	if ties == 0 {
		t.Errorf("no step labelled tie: the tracker never departed, so the test proves nothing")
	}

	q := quayCheck(t, false, true)
	if got := q.Scenarios[0].Runs[0].Trace.Associations; len(got) < 2 || got[1] != "differs" {
		t.Errorf("quay stray return: timeline %v, want differs at step 1", got)
	}
}
