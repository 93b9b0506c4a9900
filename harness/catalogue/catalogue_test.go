package catalogue

import (
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"

	"trackgate/harness/compare"
	"trackgate/harness/config"
	"trackgate/harness/mot"
	"trackgate/harness/result"
	"trackgate/harness/runner"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
	"trackgate/reference/assign"
	"trackgate/reference/kalman"
	"trackgate/reference/tracker"
	"trackgate/reference/variant"
)

// bin is the trackgate binary built once for the whole test.
var bin string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "catalogue-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	bin = filepath.Join(dir, "trackgate")
	cmd := exec.Command("go", "build", "-o", bin, "./cmd/trackgate")
	cmd.Dir = "../.."
	// The same settings as the amd64-v1 build of TestPortCertification,
	// which reuses this binary: nothing fuses in it.
	cmd.Env = append(os.Environ(), "CGO_ENABLED=0", "GOFLAGS=-buildvcs=false")
	if runtime.GOARCH == "amd64" {
		cmd.Env = append(cmd.Env, "GOAMD64=v1")
	}
	if out, err := cmd.CombinedOutput(); err != nil {
		fmt.Fprintf(os.Stderr, "go build ./cmd/trackgate: %v\n%s", err, out)
		os.RemoveAll(dir)
		os.Exit(1)
	}
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

// expectation is what a run of a variant must show: the first step at
// which the gate stops it and the kinds of divergence acceptable there.
// Step −1 means the run must pass; unknown means a tie came first, after
// which the variant's states are its own and nothing is predicted.
type expectation struct {
	step    int
	kinds   []string
	unknown bool
}

var passes = expectation{step: -1}

// expectFunc computes a run's expectation from the reference's own run.
type expectFunc func(s *scenario.Spec, ex tracker.Expected, tau float64) expectation

type bench struct {
	// label, if set, tells apart benches of the same variant and profile.
	label     string
	variant   string
	profile   string
	tau       float64 // tie margin
	scenarios []string
	runs      int
	harmful   bool
	expect    expectFunc
	// wantTies demands that the gate record at least one tie (so that the
	// variant's passing shows the tie rule at work).
	wantTies bool
}

func benches() []bench {
	all := []string{"warmup-rail-carts", "crossing-harbour-vessels", "convoy-parallel-trucks",
		"lowpd-drifting-buoys", "clutter-fishing-grounds", "turn-coastal-aircraft",
		"lifecycle-warehouse-forklifts", "dropout-quay-lidar", "climb-airfield-drones",
		"scale-container-yard", "tie-mirror-pair"}
	const tau = 1e-9 // the stock project file's tie margin
	f64, f32 := compare.Float64PortName, compare.Float32PortName
	flip, _ := variant.Lookup("tie-flip")
	return []bench{
		{"", "greedy", f64, tau, []string{"convoy-parallel-trucks", "crossing-harbour-vessels", "clutter-fishing-grounds", "lowpd-drifting-buoys"}, 3, true,
			assocExpect(greedy), false},
		{"", "frozen-covariance", f64, tau, []string{"warmup-rail-carts", "turn-coastal-aircraft", "dropout-quay-lidar"}, 2, true,
			frozenExpect, false},
		{"", "miss-without-pd", f64, tau, []string{"lowpd-drifting-buoys", "clutter-fishing-grounds", "convoy-parallel-trucks"}, 3, true,
			assocExpect(fixedMiss), false},
		{"", "narrow-gate", f64, tau, []string{"crossing-harbour-vessels", "climb-airfield-drones", "turn-coastal-aircraft"}, 2, true,
			narrowExpect, false},
		{"", "no-clutter", f64, tau, []string{"clutter-fishing-grounds", "warmup-rail-carts", "lowpd-drifting-buoys"}, 2, true,
			assocExpect(unitClutter), false},
		{"", "step-late", f64, tau, []string{"lifecycle-warehouse-forklifts", "dropout-quay-lidar", "tie-mirror-pair"}, 2, true,
			predictExpect(false), false},
		{"", "no-process-noise", f64, tau, []string{"turn-coastal-aircraft", "climb-airfield-drones", "tie-mirror-pair"}, 2, true,
			predictExpect(true), false},
		{"", "float32", f64, tau, []string{"crossing-harbour-vessels", "scale-container-yard", "warmup-rail-carts"}, 2, true,
			float32Expect, false},
		{"", "relabel", f64, tau, all, 2, false, nil, false},
		{"", "shuffle", f64, tau, all, 2, false, nil, false},
		{"", "resum", f64, tau, all, 2, false, nil, false},
		{"exact-tie", "tie-flip", f64, flip.TieMargin, []string{"tie-mirror-pair"}, 1, false, nil, true},
		{"near-ties", "tie-flip", f64, flip.TieMargin, []string{"convoy-parallel-trucks"}, 4, false, nil, true},
		{"", "float32", f32, tau, []string{"crossing-harbour-vessels", "convoy-parallel-trucks", "clutter-fishing-grounds", "scale-container-yard", "turn-coastal-aircraft"}, 2, false, nil, false},
	}
}

// knownWeaknesses lists the benches the gate does not yet judge as it
// should, with the reason. Such a bench is run and tallied like any other,
// its problems are logged instead of failing the test, and the test fails
// when it starts to come out right, so that the entry is removed.
var knownWeaknesses = map[string]string{}

// TestCatalogue runs every bench through the gate and prints the tally.
func TestCatalogue(t *testing.T) {
	// caught and passed count the suite verdicts; exact counts harmful
	// benches whose every run was also stopped at the expected step with
	// the expected kind.
	var caught, exact, harmful, passed, harmless int
	var missed []string
	for _, b := range benches() {
		name := b.variant + "@" + b.profile
		if b.label != "" {
			name += "/" + b.label
		}
		if b.harmful {
			harmful++
		} else {
			harmless++
		}
		why, known := knownWeaknesses[name]
		var problems []string
		verdict := false
		ok := t.Run(name, func(t *testing.T) {
			rep := reporter{t: t, known: known}
			verdict = runBench(&rep, b)
			problems = rep.problems
			if known && len(problems) == 0 {
				t.Errorf("listed in knownWeaknesses (%s) but judged as expected: remove the entry", why)
			}
		})
		switch {
		case b.harmful && verdict:
			caught++
		case verdict:
			passed++
		}
		if ok && !known && b.harmful {
			exact++
		}
		if !ok || known {
			missed = append(missed, name)
			if known {
				t.Logf("%s: known weakness (%s): %s", name, why, strings.Join(problems, "; "))
			}
		}
	}
	t.Logf("catalogue tally: caught %d/%d harmful (%d/%d at the expected first step and kind), passed %d/%d harmless",
		caught, harmful, exact, harmful, passed, harmless)
	if len(missed) > 0 {
		t.Logf("not as expected: %s", strings.Join(missed, ", "))
	}
}

// reporter collects a bench's problems: errors, or notes for a known
// weakness.
type reporter struct {
	t        *testing.T
	known    bool
	problems []string
}

func (r *reporter) Errorf(format string, args ...any) {
	r.t.Helper()
	msg := fmt.Sprintf(format, args...)
	r.problems = append(r.problems, msg)
	if !r.known {
		r.t.Error(msg)
	}
}

func (r *reporter) Fatalf(format string, args ...any) { r.t.Helper(); r.t.Fatalf(format, args...) }
func (r *reporter) Fatal(args ...any)                 { r.t.Helper(); r.t.Fatal(args...) }
func (r *reporter) Logf(format string, args ...any)   { r.t.Helper(); r.t.Logf(format, args...) }

// runBench checks b and reports whether the suite's verdict was right
// (fail for a harmful variant, pass for a harmless one).
func runBench(t *reporter, b bench) bool {
	var files []string
	for _, s := range b.scenarios {
		files = append(files, filepath.Join("../../scenarios", s+".yaml"))
	}
	opts := runner.Options{
		Config:    config.Config{TieMargin: b.tau},
		Tracker:   []string{bin, "reference", "-variant", b.variant},
		Scenarios: files,
		Against:   runner.AgainstReference,
		Runs:      b.runs,
		Workers:   2,
		Profile:   b.profile,
	}
	suite, err := runner.Check(context.Background(), opts)
	if err != nil {
		t.Fatalf("runner.Check: %v", err)
	}
	if !b.harmful {
		good := suite.Status == result.Pass || suite.Status == result.Tie
		if !good {
			t.Errorf("suite status %s, want pass: %s", suite.Status, problems(suite))
		}
		if b.wantTies && countTies(suite) == 0 {
			t.Errorf("no tie recorded: the variant never departed from the reference, so its passing proves nothing")
		}
		t.Logf("%s: %s, %d ties", b.variant, suite.Status, countTies(suite))
		return good
	}
	if suite.Status != result.Fail {
		t.Errorf("suite status %s, want fail: %s", suite.Status, problems(suite))
	}
	caughtRuns := 0
	for si, sc := range suite.Scenarios {
		spec, err := scenario.Load(files[si])
		if err != nil {
			t.Fatal(err)
		}
		if sc.Name != spec.Name {
			t.Fatalf("suite scenario %d is %s, want %s", si, sc.Name, spec.Name)
		}
		for _, r := range sc.Runs {
			ex, err := tracker.RunAll(objectsConfig(spec), sim.Run(spec, r.Index))
			if err != nil {
				t.Fatal(err)
			}
			want := b.expect(spec, ex, b.tau)
			step, kinds := firstFailure(r)
			where := fmt.Sprintf("%s run %d", sc.Name, r.Index)
			switch {
			case want.unknown:
				t.Logf("%s: a tie comes first; gate says step %d %v", where, step, kinds)
			case want.step < 0:
				if r.Status != result.Pass && r.Status != result.Tie {
					t.Errorf("%s: status %s at step %d %v, want pass (the variant's rule agrees with the reference's everywhere)", where, r.Status, step, kinds)
				}
			default:
				if r.Status != result.Fail || step != want.step || !overlaps(kinds, want.kinds) {
					t.Errorf("%s: status %s, first failure at step %d of kind %v; want fail at step %d of kind %v", where, r.Status, step, kinds, want.step, want.kinds)
				} else {
					caughtRuns++
				}
			}
		}
	}
	if caughtRuns == 0 {
		t.Errorf("no run was caught where expected")
	}
	t.Logf("%s: caught in %d runs", b.variant, caughtRuns)
	return suite.Status == result.Fail
}

func objectsConfig(s *scenario.Spec) tracker.Config {
	objs := make([]mot.Object, len(s.Objects))
	for i, o := range s.Objects {
		objs[i] = o.Object
	}
	return tracker.Config{Model: s.Model, Objects: objs}
}

// firstFailure returns the earliest first divergence over the run's failing
// checks and the kinds found at that step; −1 when nothing failed.
func firstFailure(r result.Run) (int, []string) {
	step := -1
	var kinds []string
	for _, c := range r.Checks {
		if c.Status != result.Fail || c.First == nil {
			continue
		}
		switch {
		case step < 0 || c.First.Step < step:
			step, kinds = c.First.Step, []string{c.First.Kind}
		case c.First.Step == step && !slices.Contains(kinds, c.First.Kind):
			kinds = append(kinds, c.First.Kind)
		}
	}
	if r.Fault != nil && (step < 0 || r.Fault.Step < step) {
		step, kinds = r.Fault.Step, []string{"fault"}
	}
	return step, kinds
}

func overlaps(a, b []string) bool {
	for _, x := range a {
		if slices.Contains(b, x) {
			return true
		}
	}
	return false
}

func countTies(s *result.Suite) int {
	n := 0
	for _, sc := range s.Scenarios {
		for _, r := range sc.Runs {
			for _, c := range r.Checks {
				n += len(c.Ties)
			}
		}
	}
	return n
}

// problems describes the runs that did not pass, at most five.
func problems(s *result.Suite) string {
	var out []string
	for _, sc := range s.Scenarios {
		for _, r := range sc.Runs {
			if r.Status == result.Pass || r.Status == result.Tie {
				continue
			}
			if len(out) == 5 {
				return strings.Join(out, " | ") + " | …"
			}
			if r.Fault != nil {
				out = append(out, fmt.Sprintf("%s run %d: fault %s: %s", sc.Name, r.Index, r.Fault.Class, r.Fault.Message))
				continue
			}
			for _, c := range r.Checks {
				if c.Status != result.Pass && c.Status != result.Tie {
					msg := c.Message
					if c.First != nil {
						msg = fmt.Sprintf("step %d %s: %s", c.First.Step, c.First.Kind, c.First.Message)
					}
					out = append(out, fmt.Sprintf("%s run %d: check %s %s: %s", sc.Name, r.Index, c.Name, c.Status, msg))
					break
				}
			}
		}
	}
	if len(out) == 0 {
		return "no failing run"
	}
	return strings.Join(out, " | ")
}

// The expectations. Each restates the variant's rule in a few lines of its
// own, applied to the reference's recorded detail; they share no code with
// package variant.

// assocExpect: the first step where choose, applied to the reference's
// cost matrix, gives an association other than the reference's.
func assocExpect(choose func(s *scenario.Spec, d *tracker.Detail) []int) expectFunc {
	return func(s *scenario.Spec, ex tracker.Expected, tau float64) expectation {
		for k := range ex.Steps {
			d := &ex.Steps[k]
			got := choose(s, d)
			for i, od := range d.Objects {
				if got[i] != od.Detection {
					if d.Margin <= tau {
						return expectation{unknown: true}
					}
					return expectation{step: k, kinds: []string{"association"}}
				}
			}
		}
		return passes
	}
}

// greedy: rows in order take the free gated detection of least cost
// (Blackman & Popoli 1999, §6.5: the suboptimal sequential nearest
// neighbour that GNN replaces).
func greedy(_ *scenario.Spec, d *tracker.Detail) []int {
	used := map[int]bool{}
	out := make([]int, len(d.Objects))
	for i, row := range d.Costs.Gated {
		out[i] = mot.NoDetection
		best, col := math.Inf(1), -1
		for _, e := range row {
			if !used[e.Col] && e.Cost < best {
				best, col = e.Cost, e.Col
			}
		}
		if col >= 0 {
			used[col] = true
			out[i] = d.Costs.Detections[col]
		}
	}
	return out
}

// solve returns the optimal association of d's augmented matrix with every
// pair cost shifted by shift and every miss cost replaced by miss (NaN keeps
// the reference's miss costs).
func solve(d *tracker.Detail, shift, miss float64) []int {
	r, nd := len(d.Costs.Objects), len(d.Costs.Detections)
	out := make([]int, r)
	for i := range out {
		out[i] = mot.NoDetection
	}
	if r == 0 {
		return out
	}
	cols := nd + r
	c := make([]float64, r*cols)
	for i := range c {
		c[i] = math.Inf(1)
	}
	for i, row := range d.Costs.Gated {
		for _, e := range row {
			c[i*cols+e.Col] = e.Cost + shift
		}
		c[i*cols+nd+i] = miss
		if math.IsNaN(miss) {
			c[i*cols+nd+i] = d.Costs.Miss[i]
		}
	}
	rowToCol, _, err := assign.Solve(c, r, cols)
	if err != nil {
		panic(err)
	}
	for i, j := range rowToCol {
		if j >= 0 && j < nd {
			out[i] = d.Costs.Detections[j]
		}
	}
	return out
}

// fixedMiss: the miss cost is 0 (variant.FixedMissCost).
func fixedMiss(_ *scenario.Spec, d *tracker.Detail) []int {
	return solve(d, 0, variant.FixedMissCost)
}

// unitClutter: every pair cost c = … + ln λ becomes c − ln λ (λ = 1
// instead of the scenario's intensity, which the reference floors at
// tracker.MinClutterDensity); misses keep −ln(1 − P_D).
func unitClutter(s *scenario.Spec, d *tracker.Detail) []int {
	return solve(d, -math.Log(max(s.Model.ClutterDensity, tracker.MinClutterDensity)), math.NaN())
}

func frozenExpect(_ *scenario.Spec, ex tracker.Expected, _ float64) expectation {
	for k, d := range ex.Steps {
		for _, od := range d.Objects {
			if od.Detection != mot.NoDetection {
				return expectation{step: k, kinds: []string{"estimate"}}
			}
		}
	}
	return passes
}

// narrowExpect: the first step where a detection the reference used lies
// outside the gate χ²_m⁻¹(0.2). (Removing pairs the optimum does not use
// cannot change the optimum.)
func narrowExpect(s *scenario.Spec, ex tracker.Expected, _ float64) expectation {
	// χ²_m⁻¹(0.2) from gonum through kalman.Threshold; for m = 2 it is
	// −2 ln 0.8 = 0.4463 (closed form: χ² with two degrees of freedom is
	// exponential with mean 2).
	g, err := kalman.Threshold(s.Model.MeasDim, variant.NarrowGateProb)
	if err != nil {
		panic(err)
	}
	for k, d := range ex.Steps {
		for _, od := range d.Objects {
			if od.Detection != mot.NoDetection && od.NIS > g {
				return expectation{step: k, kinds: []string{"association"}}
			}
		}
	}
	return passes
}

// predictExpect: the first step at which some live object was already
// alive at the previous scan, so that it is predicted. For process noise,
// nothing departs when Q = 0. A changed prediction may change the
// association at the same step as well as the estimate.
func predictExpect(needQ bool) expectFunc {
	return func(s *scenario.Spec, ex tracker.Expected, _ float64) expectation {
		if needQ && !slices.ContainsFunc(s.Model.Q.Data, func(v float64) bool { return v != 0 }) {
			return passes
		}
		for k := 1; k < len(ex.Steps); k++ {
			for _, od := range ex.Steps[k].Objects {
				if slices.ContainsFunc(ex.Steps[k-1].Objects, func(p tracker.ObjectDetail) bool { return p.Object == od.Object }) {
					return expectation{step: k, kinds: []string{"estimate", "association"}}
				}
			}
		}
		return passes
	}
}

// float32Expect: the first step where a value the reference reports is not
// within the float64-port rule of its float32 rounding.
func float32Expect(_ *scenario.Spec, ex tracker.Expected, _ float64) expectation {
	p := compare.Float64Port()
	far := func(v float64) bool { return !p.Mean.Agree(v, float64(float32(v))) }
	for k, f := range ex.Frames {
		for _, tr := range f.Tracks {
			if slices.ContainsFunc(tr.Mean, far) || slices.ContainsFunc(tr.Cov.Data, far) {
				return expectation{step: k, kinds: []string{"estimate"}}
			}
		}
	}
	return passes
}
