package runner

import (
	"fmt"
	"sync"
	"testing"

	"trackgate/harness/result"
)

// TestConformanceWithoutAssociationsAtATie: a tracker that reports
// covariances but not associations and resolves ties the other way
// (tie-flip) is judged by the conformance check against the update under
// the hypothesis of the tied cluster nearest its estimates: the
// conformance check records a tie rather than a regression. With a bias
// from the step after its first departure on, the conformance check fails
// at exactly that step with an estimate divergence (the restart from the
// biased state cannot explain the added bias).
func TestConformanceWithoutAssociationsAtATie(t *testing.T) {
	rep := flipReport{"covariances only", true, false}
	names := []string{"tie-mirror-pair", "convoy-parallel-trucks"}
	t.Run("harmless", func(t *testing.T) {
		s := checkOf(t, flipOptions(flipTracker(rep, false, nil), 2, names...))
		ties := 0
		for i, sc := range s.Scenarios {
			for _, r := range sc.Runs {
				c := findCheck(t, s, i, r.Index, "conformance")
				ties += len(c.Ties)
				if c.Status.Rank() > result.Tie.Rank() {
					t.Errorf("%s run %d conformance: %s: %s %+v", sc.Name, r.Index, c.Status, c.Message, c.First)
				}
				for _, d := range c.Ties {
					if d.Kind != "association" || d.Margin == nil || *d.Margin > 0.5 || d.Probability == nil {
						t.Errorf("%s run %d: tie %+v, want an association tie with a margin within 0.5 and a probability", sc.Name, r.Index, d)
					}
				}
			}
		}
		if ties == 0 {
			t.Errorf("the conformance check recorded no tie: the tracker never departed, so passing proves nothing")
		}
	})
	t.Run("biased", func(t *testing.T) {
		var mu sync.Mutex
		departures := map[string]int{}
		var scenario string
		l := flipTracker(rep, true, func(run, step int) {
			mu.Lock()
			defer mu.Unlock()
			departures[fmt.Sprint(scenario, run)] = step
		})
		caught := 0
		for _, name := range names {
			scenario = name
			s := checkOf(t, flipOptions(l, 2, name))
			for _, r := range s.Scenarios[0].Runs {
				dep, ok := departures[fmt.Sprint(name, r.Index)]
				if !ok {
					continue
				}
				caught++
				c := findCheck(t, s, 0, r.Index, "conformance")
				if c.Status != result.Fail || c.First == nil {
					t.Errorf("%s run %d: conformance %s (%s), want a failure at step %d", name, r.Index, c.Status, c.Message, dep+1)
					continue
				}
				if c.First.Step != dep+1 || c.First.Kind != "estimate" {
					t.Errorf("%s run %d: first divergence at step %d of kind %s (%s), want step %d of kind estimate", name, r.Index, c.First.Step, c.First.Kind, c.First.Message, dep+1)
				}
			}
		}
		if caught == 0 {
			t.Errorf("the tracker never departed from the reference, so the test proves nothing")
		}
	})
}
