package runner

import (
	"math"
	"slices"
	"strings"
	"testing"

	"trackgate/harness/compare"
	"trackgate/harness/mot"
	"trackgate/harness/result"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
	"trackgate/reference/kalman"
	"trackgate/reference/tracker"
	"trackgate/reference/variant"
)

// TestMahalanobis2: the squared Mahalanobis distance against a case worked
// by hand, and the cases it must refuse. For P = [[4, 2], [2, 3]],
// P⁻¹ = [[3, −2], [−2, 4]]/8, so r = (1, 2) gives
// rᵀP⁻¹r = (3 − 8 + 16)/8 = 11/8 (P. C. Mahalanobis, "On the generalized
// distance in statistics", Proc. National Institute of Sciences of India
// 2(1):49–55, 1936; the inverse of a 2×2 matrix by the adjugate, common
// practice).
func TestMahalanobis2(t *testing.T) {
	p := mot.Mat{Rows: 2, Cols: 2, Data: []float64{4, 2, 2, 3}}
	cases := []struct {
		name string
		x, m []float64
		p    mot.Mat
		want float64
	}{
		{"worked", []float64{11, 22}, []float64{10, 20}, p, 11.0 / 8},
		{"at the mean", []float64{10, 20}, []float64{10, 20}, p, 0},
		{"identity", []float64{3, 4}, []float64{0, 0}, mot.Identity(2), 25},
		{"length differs", []float64{1}, []float64{0, 0}, p, math.Inf(1)},
		{"not positive definite", []float64{1, 1}, []float64{0, 0}, mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, 2, 2, 1}}, math.Inf(1)},
		{"no covariance", []float64{1, 1}, []float64{0, 0}, mot.Mat{}, math.Inf(1)},
	}
	for _, tc := range cases {
		if got := mahalanobis2(tc.x, tc.m, tc.p); math.Abs(got-tc.want) > 1e-14 && got != tc.want {
			t.Errorf("%s: %.17g, want %.17g", tc.name, got, tc.want)
		}
	}
}

// flipJob is run i of a stock scenario checked against the tie-flip
// variant's frames, reported as rep says, paired by object id.
func flipJob(t testing.TB, name string, i int, rep flipReport) *job {
	t.Helper()
	spec, err := scenario.Load(scenarioFile(name))
	if err != nil {
		t.Fatal(err)
	}
	run := sim.Run(spec, i)
	cfg := tracker.ConfigFor(spec, 0)
	ex, err := tracker.RunAll(cfg, run)
	if err != nil {
		t.Fatal(err)
	}
	flip, _ := variant.Lookup("tie-flip")
	step := flip.New(cfg)
	j := &job{sc: &scen{spec: spec, profile: compare.Float64Port(), tie: variant.FlipMargin}, run: run, ex: ex, names: map[string]string{}}
	j.res.Tracker.Covariance, j.res.Tracker.Association = rep.cov, rep.assoc
	for _, scan := range run.Scans {
		f, err := step(scan)
		if err != nil {
			t.Fatal(err)
		}
		f.Tracks = slices.Clone(f.Tracks)
		for i := range f.Tracks {
			j.names[f.Tracks[i].Track] = f.Tracks[i].Track
			if !rep.cov {
				f.Tracks[i].Cov = mot.Mat{}
			}
			if !rep.assoc {
				f.Tracks[i].HasDetection, f.Tracks[i].Detection = false, mot.NoDetection
			}
		}
		j.res.Frames = append(j.res.Frames, f)
	}
	return j
}

// firstDeparture returns the first step at which the job's tracker frames
// take another detection than the reference for some object, with the
// frames' own associations (before they are stripped), or −1.
func firstDeparture(t testing.TB, name string, i int) int {
	j := flipJob(t, name, i, flipReports[0])
	for k, f := range j.res.Frames {
		for _, tr := range f.Tracks {
			for _, od := range j.ex.Steps[k].Objects {
				if od.Object == tr.Track && od.Detection != tr.Detection {
					return k
				}
			}
		}
	}
	return -1
}

// TestNearestHypothesis: at tie-mirror-pair's exact tie (step 1) the
// tie-flip tracker's estimates pick the reference's second hypothesis,
// the reference's own estimates its best; distances are +Inf beyond the
// margin and 0 for the hypothesis the estimates came from.
func TestNearestHypothesis(t *testing.T) {
	const k = 1
	if dep := firstDeparture(t, "tie-mirror-pair", 0); dep != k {
		t.Fatalf("tie-flip first departs at step %d, the test expects step %d", dep, k)
	}
	for _, tc := range []struct {
		name string
		own  bool // the reference's own frames rather than tie-flip's
		want int
	}{{"tie-flip", false, 1}, {"the reference", true, 0}} {
		t.Run(tc.name, func(t *testing.T) {
			j := flipJob(t, "tie-mirror-pair", 0, flipReports[2])
			d := &j.ex.Steps[k]
			f := j.res.Frames[k]
			if tc.own {
				f = j.ex.Frames[k]
			}
			parts := ambiguousParts(d, j.sc.tie)
			if len(parts) != 1 || len(parts[0].objects) != 2 {
				t.Fatalf("ambiguous parts %+v, want the two floats in one cluster", parts)
			}
			filt, err := kalman.New(j.sc.spec.Model)
			if err != nil {
				t.Fatal(err)
			}
			rank, dist := nearestHypothesis(filt, d, parts[0], j.run.Scans[k], f, newView(d, f, j.names), nil, j.sc.tie)
			if rank != tc.want {
				t.Fatalf("rank %d (distances %v), want %d", rank, dist, tc.want)
			}
			if dist[rank] > 1e-18 || !(dist[1-rank] > 1) {
				t.Errorf("distances %v: want 0 for the chosen hypothesis and clearly more for the other", dist)
			}
			for r, h := range d.PerCluster[parts[0].cluster].Hypotheses {
				if h.Cost-d.PerCluster[parts[0].cluster].Cost > j.sc.tie && !math.IsInf(dist[r], 1) {
					t.Errorf("hypothesis %d beyond the margin has distance %g, want +Inf", r, dist[r])
				}
			}
		})
	}
}

// TestBranchRejoins: a fork with the reference's own best association is
// the reference's step bit for bit, so the next step rejoins the run; a
// fork with the other hypothesis of the exact tie stays off the run.
func TestBranchRejoins(t *testing.T) {
	j := flipJob(t, "tie-mirror-pair", 0, flipReports[0])
	const k = 1
	d := &j.ex.Steps[k]
	for _, tc := range []struct {
		name   string
		hyp    int
		rejoin bool
	}{{"best", 0, true}, {"second", 1, false}} {
		t.Run(tc.name, func(t *testing.T) {
			br := newBranch(j, 0)
			if !br.ok {
				t.Fatal("no branch can be run for a loaded scenario")
			}
			cd := &d.PerCluster[d.Objects[0].Cluster]
			if _, err := br.fork(k, d, assignOf(d, cd.Rows, cd.Hypotheses[tc.hyp].Assoc)); err != nil {
				t.Fatal(err)
			}
			nd, err := br.next(k + 1)
			if err != nil {
				t.Fatal(err)
			}
			if got := nd == &j.ex.Steps[k+1]; got != tc.rejoin || br.on == tc.rejoin {
				t.Errorf("rejoined %v (branch on %v), want %v", got, br.on, tc.rejoin)
			}
			if !tc.rejoin && sameStates(nd, &j.ex.Steps[k+1]) {
				t.Errorf("the other hypothesis gives the reference's own states at step %d", k+1)
			}
		})
	}
}

// TestUnlistedChoiceAtATieIsARegression: a change in a cluster whose margin
// is within τ, to an association the reference does not rank within τ of
// its best, is a regression of kind association, not a tie.
func TestUnlistedChoiceAtATieIsARegression(t *testing.T) {
	// p and q tie (margin 0.2); the tracker gives p detection 2 and q a
	// miss, which neither listed hypothesis does.
	odd := refStep{margin: 0.2, second: []int{2, 1}, objs: []refObj{took("p", 1, 2, 1, 2), took("q", 2, mot.NoDetection, 1, 2)}}
	swap := refStep{margin: 0.2, second: []int{2, 1}, objs: []refObj{took("p", 1, 2, 1, 2), took("q", 2, 1, 1, 2)}}
	s := &settings{maxDiffs: 10}
	for _, tc := range []struct {
		name string
		st   refStep
		want result.Status
	}{{"listed", swap, result.Tie}, {"not listed", odd, result.Fail}} {
		c := s.checkReference(refJob([]refStep{tc.st}, true))
		if c.Status != tc.want {
			t.Errorf("%s: status %s, want %s (%s)", tc.name, c.Status, tc.want, c.Message)
		}
		if tc.want == result.Fail && (c.First == nil || c.First.Kind != "association" || !strings.Contains(c.First.Message, "tie rule does not apply")) {
			t.Errorf("%s: first divergence %+v, want an association that says the tie rule does not apply", tc.name, c.First)
		}
	}
}

// TestBranchedCheckMatchesTheVariant: on the stock tie scenarios the
// reference check of tie-flip, reported every way, compares every step of
// every object (nothing is left uncompared) and passes with ties.
func TestBranchedCheckMatchesTheVariant(t *testing.T) {
	s := &settings{maxDiffs: 10}
	for _, name := range []string{"tie-mirror-pair", "convoy-parallel-trucks"} {
		for _, rep := range flipReports {
			j := flipJob(t, name, 0, rep)
			c := s.checkReference(j)
			if c.Status != result.Tie || strings.Contains(c.Message, "not compared") {
				t.Errorf("%s, %s: status %s (%s), want a tie with every object compared to the end", name, rep.name, c.Status, c.Message)
			}
			if !strings.Contains(c.Message, "followed down the tracker's branch") {
				t.Errorf("%s, %s: message %q does not say where the branch was followed", name, rep.name, c.Message)
			}
		}
	}
}

// BenchmarkReferenceCheck measures the reference check of a tracker that
// agrees with the reference (no branch) beside tie-flip (branches at every
// tie it resolves otherwise) on a stock scenario with many near ties.
func BenchmarkReferenceCheck(b *testing.B) {
	s := &settings{maxDiffs: 10}
	for _, tc := range []struct {
		name string
		own  bool
	}{{"reference", true}, {"tie-flip", false}} {
		j := flipJob(b, "convoy-parallel-trucks", 0, flipReports[0])
		if tc.own {
			j.res.Frames = j.ex.Frames
		}
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if c := s.checkReference(j); c.Status == result.Fail {
					b.Fatal(c.Message)
				}
			}
		})
	}
}

// BenchmarkReferenceRun is the reference's own run of the scenario of
// BenchmarkReferenceCheck, the unit a branch's cost is measured in.
func BenchmarkReferenceRun(b *testing.B) {
	j := flipJob(b, "convoy-parallel-trucks", 0, flipReports[0])
	cfg := tracker.ConfigFor(j.sc.spec, 0)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := tracker.RunAll(cfg, j.run); err != nil {
			b.Fatal(err)
		}
	}
}
