package runner

import (
	"fmt"
	"slices"
	"sync"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/reference/tracker"
	"trackgate/reference/variant"
)

// flipReport is what an in-process tie-flip tracker reports.
type flipReport struct {
	name  string
	cov   bool // covariances
	assoc bool // associations
}

var flipReports = []flipReport{
	{"everything", true, true},
	{"associations only", false, true},
	{"means only", false, false},
	{"covariances only", true, false},
}

// biasAfterDeparture is the bias, in metres on the first position
// component, that the harmful tracker adds to every track from the step
// after its first departure from the reference on.
const biasAfterDeparture = 15.0

// flipTracker is the tie-flip variant of the reference run in this
// process, reporting what rep says; with bias set, from the step after
// its first departure from the reference's association on, every track's
// first mean component is moved by biasAfterDeparture. departed, if not
// nil, receives the step of the first departure of each run (−1: none).
func flipTracker(rep flipReport, bias bool, departed func(run, step int)) *Local {
	flip, _ := variant.Lookup("tie-flip")
	return &Local{
		Ready: protocol.Ready{Name: "tie-flip-" + rep.name, Version: "1", Covariance: rep.cov, Association: rep.assoc, ManyRuns: true},
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			cfg := tracker.Config{Model: s.Model, Objects: s.Objects}
			step := flip.New(cfg)
			ref := tracker.New(cfg)
			first := -1
			return func(scan mot.Scan) (mot.Frame, error) {
				f, err := step(scan)
				if err != nil {
					return f, err
				}
				rf, _, err := ref.Step(scan)
				if err != nil {
					return f, err
				}
				f.Tracks = slices.Clone(f.Tracks)
				if first >= 0 && bias {
					for i := range f.Tracks {
						f.Tracks[i].Mean = slices.Clone(f.Tracks[i].Mean)
						f.Tracks[i].Mean[0] += biasAfterDeparture
					}
				}
				if first < 0 {
					for i, t := range f.Tracks {
						if i < len(rf.Tracks) && t.Detection != rf.Tracks[i].Detection {
							first = scan.Step
							if departed != nil {
								departed(s.Run.Index, first)
							}
							break
						}
					}
				}
				for i := range f.Tracks {
					if !rep.cov {
						f.Tracks[i].Cov = mot.Mat{}
					}
					if !rep.assoc {
						f.Tracks[i].HasDetection, f.Tracks[i].Detection = false, mot.NoDetection
					}
				}
				return f, nil
			}, nil
		},
	}
}

// flipOptions checks the in-process tracker against the reference on the
// named stock scenarios, with tie-flip's tie margin.
func flipOptions(l *Local, runs int, names ...string) Options {
	var o Options
	for _, n := range names {
		o.Scenarios = append(o.Scenarios, scenarioFile(n))
	}
	o.Local = l
	o.Config = config.Config{TieMargin: variant.FlipMargin}
	o.Against, o.Runs, o.Workers = AgainstReference, runs, 1
	o.Getenv = func(string) string { return "" }
	return o
}

// TestTieFlipFollowedByTheReference: a tracker that resolves ties the other
// way (tie-flip) is compared after each tie with the reference's run down
// the tracker's branch, so it passes whatever it reports, and recording a
// tie shows the rule was at work.
func TestTieFlipFollowedByTheReference(t *testing.T) {
	for _, rep := range flipReports {
		t.Run(rep.name, func(t *testing.T) {
			s := checkOf(t, flipOptions(flipTracker(rep, false, nil), 2, "tie-mirror-pair", "convoy-parallel-trucks"))
			ties := 0
			for _, sc := range s.Scenarios {
				for _, r := range sc.Runs {
					for _, c := range r.Checks {
						ties += len(c.Ties)
						if c.Status.Rank() > result.Tie.Rank() {
							t.Errorf("%s run %d %s: %s: %s %+v", sc.Name, r.Index, c.Name, c.Status, c.Message, c.First)
						}
					}
				}
			}
			if ties == 0 {
				t.Errorf("no tie recorded: the tracker never departed, so passing proves nothing")
			}
		})
	}
}

// TestBiasAfterATieIsCaught: the same tracker with a 15 m bias from the
// step after its first departure fails the reference check at exactly
// that step with an estimate divergence, whatever it reports: the
// departed objects are still compared, with the reference's branch.
func TestBiasAfterATieIsCaught(t *testing.T) {
	for _, rep := range flipReports {
		t.Run(rep.name, func(t *testing.T) {
			departures := map[string]int{}
			var scenario string
			var mu sync.Mutex
			l := flipTracker(rep, true, func(run, step int) {
				mu.Lock()
				defer mu.Unlock()
				departures[fmt.Sprint(scenario, run)] = step
			})
			for _, name := range []string{"tie-mirror-pair", "convoy-parallel-trucks"} {
				scenario = name
				s := checkOf(t, flipOptions(l, 2, name))
				caught := 0
				for _, r := range s.Scenarios[0].Runs {
					dep, ok := departures[fmt.Sprint(name, r.Index)]
					if !ok {
						continue
					}
					caught++
					c := findCheck(t, s, 0, r.Index, "reference")
					if c.Status != result.Fail || c.First == nil {
						t.Errorf("%s run %d: reference check %s (%s), want a failure at step %d", name, r.Index, c.Status, c.Message, dep+1)
						continue
					}
					if c.First.Step != dep+1 || c.First.Kind != "estimate" {
						t.Errorf("%s run %d: first divergence at step %d of kind %s (%s), want step %d of kind estimate", name, r.Index, c.First.Step, c.First.Kind, c.First.Message, dep+1)
					}
					if r.Status != result.Fail {
						t.Errorf("%s run %d: run status %s, want fail", name, r.Index, r.Status)
					}
				}
				if caught == 0 {
					t.Errorf("%s: the tracker never departed from the reference, so the test proves nothing", name)
				}
			}
		})
	}
}
