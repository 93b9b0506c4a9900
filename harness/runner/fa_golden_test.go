package runner

import (
	"fmt"
	"strings"
	"sync"
	"testing"

	"trackgate/harness/result"
)

// goldenFlipOptions checks the in-process tie-flip tracker against goldens
// blessed from the reference in root, with tie-flip's tie margin, in CI
// mode (a missing golden fails).
func goldenFlipOptions(l *Local, root string, against Against, names ...string) Options {
	o := flipOptions(l, 2, names...)
	o.GoldenDir, o.TrackerName, o.GoldenRuns = root, "harbour-tracker", 2
	o.Against, o.CI = against, true
	return o
}

// TestGoldenAssociationFollowsTheBranch: goldens blessed from the
// reference, checked with a tracker that resolves ties the other way
// (tie-flip, no bias): a changed association against the golden after the
// tracker's first tie is judged as the reference check judges it down the
// tracker's branch, not by the margins of the reference's own run (which,
// on convoy run 1 at step 5, are clear although the branch's are within
// the tie margin), so the golden check is a tie, against the goldens only
// (the reference check then runs for the judgement alone) and against
// both. The same tracker with a bias after its first departure fails the
// golden check.
func TestGoldenAssociationFollowsTheBranch(t *testing.T) {
	names := []string{"tie-mirror-pair", "convoy-parallel-trucks"}
	var files []string
	for _, n := range names {
		files = append(files, scenarioFile(n))
	}
	root := t.TempDir()
	if rep := blessInto(t, root, false, nil, files...); rep.ExitCode() != 0 {
		t.Fatalf("bless: exit %d, problems %v", rep.ExitCode(), rep.Problems)
	}
	golden := func(s *result.Suite) (worst result.Status, ties int, msgs []string) {
		worst = result.Pass
		for _, sc := range s.Scenarios {
			for _, r := range sc.Runs {
				for _, c := range r.Checks {
					if c.Name != "golden" {
						continue
					}
					worst = result.Worst(worst, c.Status)
					ties += len(c.Ties)
					msgs = append(msgs, fmt.Sprintf("%s run %d: %s: %s %+v", sc.Name, r.Index, c.Status, c.Message, c.First))
				}
			}
		}
		return worst, ties, msgs
	}
	for _, against := range []Against{AgainstGolden, AgainstBoth} {
		t.Run(fmt.Sprint("harmless/", against), func(t *testing.T) {
			s := checkOf(t, goldenFlipOptions(flipTracker(flipReports[0], false, nil), root, against, names...))
			worst, ties, msgs := golden(s)
			if len(msgs) == 0 {
				t.Fatal("no golden check ran")
			}
			if worst.Rank() > result.Tie.Rank() {
				t.Errorf("golden check %s, want at most a tie:\n%s", worst, strings.Join(msgs, "\n"))
			}
			if ties == 0 {
				t.Errorf("no tie recorded against the golden: the tracker never departed from it, so passing proves nothing")
			}
			if s.Status.Rank() > result.Tie.Rank() {
				t.Errorf("suite %s, want at most a tie", s.Status)
			}
		})
	}
	t.Run("biased", func(t *testing.T) {
		var mu sync.Mutex
		departed := 0
		l := flipTracker(flipReports[0], true, func(int, int) { mu.Lock(); departed++; mu.Unlock() })
		s := checkOf(t, goldenFlipOptions(l, root, AgainstGolden, names...))
		worst, _, msgs := golden(s)
		if departed == 0 {
			t.Fatal("the tracker never departed, so the bias was never applied")
		}
		if worst != result.Fail {
			t.Errorf("golden check %s, want fail:\n%s", worst, strings.Join(msgs, "\n"))
		}
	})
}
