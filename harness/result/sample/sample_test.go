package sample_test

import (
	"testing"

	"trackgate/harness/result"
	"trackgate/harness/result/sample"
)

// TestConsistent checks that the sample obeys the rules of the result
// model, so renderers are tested on data a real run could produce: every
// status is the worst of its parts, run indices count from 0 up to
// RunsPlanned, traces fit the scenario's steps.
func TestConsistent(t *testing.T) {
	s := sample.Suite()
	worst := result.Pass
	for _, sc := range s.Scenarios {
		st := result.Pass
		if len(sc.Runs) != sc.RunsPlanned {
			t.Errorf("%s: %d runs, %d planned", sc.Name, len(sc.Runs), sc.RunsPlanned)
		}
		for i, r := range sc.Runs {
			if r.Index != i {
				t.Errorf("%s: run %d has index %d", sc.Name, i, r.Index)
			}
			rs := result.Pass
			for _, c := range r.Checks {
				rs = result.Worst(rs, c.Status)
			}
			if rs != r.Status {
				t.Errorf("%s run %d: status %s, its checks say %s", sc.Name, i, r.Status, rs)
			}
			if (r.Fault != nil) != (r.Status == result.Faulted) {
				t.Errorf("%s run %d: fault %v with status %s", sc.Name, i, r.Fault != nil, r.Status)
			}
			if tr := r.Trace; tr != nil && tr.Associations != nil && len(tr.Associations) != len(tr.Detections) {
				t.Errorf("%s run %d: %d association entries for %d steps", sc.Name, i, len(tr.Associations), len(tr.Detections))
			}
			st = result.Worst(st, r.Status)
		}
		for _, g := range sc.Gates {
			st = result.Worst(st, g.Status)
		}
		if st != sc.Status {
			t.Errorf("%s: status %s, its runs and gates say %s", sc.Name, sc.Status, st)
		}
		worst = result.Worst(worst, sc.Status)
	}
	if worst != s.Status {
		t.Errorf("suite status %s, scenarios say %s", s.Status, worst)
	}
}
