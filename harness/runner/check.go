package runner

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"time"

	"trackgate/harness/compare"
	"trackgate/harness/config"
	"trackgate/harness/driver"
	"trackgate/harness/golden"
	"trackgate/harness/mot"
	"trackgate/harness/result"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
	"trackgate/reference/tracker"
)

// Timing splits the wall-clock time of a Check between the tracker phase
// (driver.RunMany: the tracker processes and the protocol exchange) and the
// harness (loading, simulation, the reference, comparison, metrics).
type Timing struct {
	Total, Tracker, Harness time.Duration
}

// scen is one scenario of a suite being checked.
type scen struct {
	file    string
	spec    *scenario.Spec
	sim     *sim.Sim
	err     error
	profile compare.Profile
	tie     float64
	pos     []int
	vel     []int
	planned int
	jobs    []*job
}

// job is one (scenario, run) pair.
type job struct {
	sc     *scen
	index  int
	run    mot.Run
	ex     tracker.Expected
	refErr error
	res    driver.Result
	names  map[string]string
	out    result.Run
	score  *runScore // the tracker's metrics
	refSc  *runScore // the reference's metrics on the same run
	// blessed holds the tracker's blessed whole-run metrics, when read.
	blessed map[string]float64
	ties    map[string]int // object → first step of a tie (reference check)
	// judged is what the reference check decided at each step, for the
	// golden check and the timeline (nil until it has judged the run).
	judged *refJudgement
	// partedFromGolden reports that the tracker's output stopped being
	// compared with its golden after a changed association.
	partedFromGolden bool
	secs             float64
}

// Check runs the regression gate described by o and returns its result.
// The error is for options that make every run impossible (no tracker, no
// scenario file, an unknown profile); everything that goes wrong with a
// scenario, a golden or the tracker is recorded in the Suite's statuses.
func Check(ctx context.Context, o Options) (*result.Suite, error) {
	s, _, err := CheckTimed(ctx, o)
	return s, err
}

// CheckTimed is Check that also reports where the time went.
func CheckTimed(ctx context.Context, o Options) (*result.Suite, Timing, error) {
	var tm Timing
	start := time.Now()
	s, err := resolve(o, true)
	if err != nil {
		return nil, tm, err
	}
	scens := s.load()
	jobs := s.plan(scens, func(sc *scen, r int) bool { return s.Shard.Holds(sc.spec.Name, r) })
	if s.Progress != nil {
		s.tally = newTally(s.Progress, len(jobs))
	}
	// Runs go through the pipeline a batch at a time, and a judged run
	// keeps only its result, so memory stays bounded by the batch
	// whatever the number of runs. A batch never splits a tracker chunk
	// (see chunkOf), so the runs a tracker process serves do not depend on
	// the batch size.
	batch := max(64, 16*s.workers)
	if batchRuns > 0 {
		batch = batchRuns
	}
	for lo := 0; lo < len(jobs); {
		hi := min(len(jobs), lo+batch)
		for hi < len(jobs) && chunkOf(jobs[hi]) == chunkOf(jobs[hi-1]) {
			hi++
		}
		part := jobs[lo:hi]
		lo = hi
		s.parallel(len(part), func(i int) { s.prepareJob(part[i]) })
		t0 := time.Now()
		s.drive(ctx, part)
		tm.Tracker += time.Since(t0)
		s.parallel(len(part), func(i int) {
			s.judge(part[i])
			part[i].release()
		})
	}
	suite := s.assemble(scens)
	tm.Total = time.Since(start)
	tm.Harness = tm.Total - tm.Tracker
	return suite, tm, nil
}

// load reads every scenario; a scenario that cannot be loaded or simulated
// keeps its error.
func (s *settings) load() []*scen {
	scens := make([]*scen, len(s.files))
	s.parallel(len(s.files), func(i int) {
		sc := &scen{file: s.files[i]}
		scens[i] = sc
		spec, err := scenario.Load(sc.file)
		if err != nil {
			sc.err = err
			return
		}
		sc.spec = spec
		if sc.sim, err = sim.Prepare(spec); err != nil {
			sc.err = fmt.Errorf("%s: %v", sc.file, err)
			return
		}
		sc.profile, sc.tie = s.cfg.For(spec.Name)
		sc.pos, sc.vel = axes(spec)
		sc.planned = spec.Runs
		if s.Runs > 0 {
			sc.planned = s.Runs
		}
	})
	return scens
}

// plan lists the jobs of the runs keep selects, in (scenario, run) order.
func (s *settings) plan(scens []*scen, keep func(*scen, int) bool) []*job {
	var jobs []*job
	for _, sc := range scens {
		if sc.err != nil {
			continue
		}
		for r := 0; r < sc.planned; r++ {
			if keep(sc, r) {
				j := &job{sc: sc, index: r}
				sc.jobs = append(sc.jobs, j)
				jobs = append(jobs, j)
			}
		}
	}
	return jobs
}

// prepareJob simulates the run and runs the reference over it.
func (s *settings) prepareJob(j *job) {
	j.run = j.sc.sim.Run(j.index)
	spec := j.sc.spec
	j.ex, j.refErr = tracker.RunAll(tracker.Config{Model: spec.Model, Objects: objectsOf(spec), K: s.K}, j.run)
}

// batchRuns, when positive, replaces the number of runs per batch of
// CheckTimed; tests set it.
var batchRuns = 0

// release drops what a judged run no longer needs: everything but its
// result and the tracker's ready reply.
func (j *job) release() {
	j.run, j.ex = mot.Run{}, tracker.Expected{}
	j.res = driver.Result{Tracker: j.res.Tracker}
	j.names, j.score, j.refSc, j.blessed, j.ties, j.judged = nil, nil, nil, nil, nil, nil
}

// RunsPerProcess is the number of consecutive runs of a scenario that one
// tracker process serves when the tracker says it can serve several
// (many_runs): runs r with the same r / RunsPerProcess form a chunk, each
// chunk is served by a tracker process of its own, in run order, and the
// workers (-j) take whole chunks. Which runs share a process therefore
// depends neither on the number of workers nor on progress reporting, so a
// tracker that carries state from one run to the next is judged the same
// way every time. (A tracker that faults is started again for the rest of
// its chunk.) With runs dealt to shards one by one, a shard's chunk holds
// only the runs of that shard.
const RunsPerProcess = 16

// chunk identifies the tracker process that serves a job.
type chunk struct {
	sc *scen
	n  int
}

// chunkOf returns j's chunk (see RunsPerProcess).
func chunkOf(j *job) chunk { return chunk{j.sc, j.index / RunsPerProcess} }

// drive runs the tracker over every job whose reference succeeded.
func (s *settings) drive(ctx context.Context, jobs []*job) {
	var djobs []driver.Job
	var idx []int
	var bounds []int // start of each chunk in djobs, then len(djobs)
	for i, j := range jobs {
		if j.refErr == nil {
			if len(idx) == 0 || chunkOf(jobs[idx[len(idx)-1]]) != chunkOf(j) {
				bounds = append(bounds, len(djobs))
			}
			djobs = append(djobs, driver.JobFor(j.sc.spec, j.run))
			idx = append(idx, i)
		}
	}
	bounds = append(bounds, len(djobs))
	s.tally.add(len(jobs) - len(djobs)) // runs the reference failed on are done
	t0 := time.Now()
	res := s.runTracker(ctx, djobs, bounds)
	per := 0.0
	if len(djobs) > 0 {
		per = time.Since(t0).Seconds() * float64(s.workers) / float64(len(djobs))
	}
	for k, i := range idx {
		jobs[i].res = res[k]
		jobs[i].res.Tape = nil // not used by any check
		jobs[i].secs = per
	}
}

// runTracker runs the tracker under test over djobs: in process, or
// through the driver one chunk at a time, djobs[bounds[c]:bounds[c+1]]
// being chunk c, each chunk served by a tracker process of its own.
func (s *settings) runTracker(ctx context.Context, djobs []driver.Job, bounds []int) []driver.Result {
	total := len(djobs)
	if s.Progress != nil && s.tally == nil {
		s.tally = newTally(s.Progress, total)
	}
	p := s.tally
	out := make([]driver.Result, total)
	if s.Local != nil {
		s.parallel(total, func(i int) {
			out[i] = s.runLocal(ctx, djobs[i])
			p.add(1)
		})
		return out
	}
	if len(bounds) < 2 {
		return out
	}
	s.parallel(len(bounds)-1, func(c int) {
		lo, hi := bounds[c], bounds[c+1]
		copy(out[lo:hi], driver.RunMany(ctx, s.drv, djobs[lo:hi], 1))
		p.add(hi - lo)
	})
	return out
}

// tally counts finished runs for Options.Progress.
type tally struct {
	mu    sync.Mutex
	done  int
	total int
	f     func(done, total int)
}

func newTally(f func(int, int), total int) *tally {
	t := &tally{f: f, total: total}
	f(0, total)
	return t
}

// add counts n more runs done; a nil t does nothing.
func (t *tally) add(n int) {
	if t == nil || n == 0 {
		return
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	t.done += n
	t.f(t.done, t.total)
}

// parallel calls f(0..n-1) on up to s.workers goroutines.
func (s *settings) parallel(n int, f func(int)) {
	w := min(s.workers, n)
	if w <= 1 {
		for i := 0; i < n; i++ {
			f(i)
		}
		return
	}
	var wg sync.WaitGroup
	next := make(chan int)
	for range w {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				f(i)
			}
		}()
	}
	for i := 0; i < n; i++ {
		next <- i
	}
	close(next)
	wg.Wait()
}

// judge fills j.out: every check of the run, its metrics and its trace.
func (s *settings) judge(j *job) {
	r := &j.out
	r.Index, r.Seed = j.index, j.run.Seed
	if s.Timing {
		r.Seconds = j.secs
	}
	if j.refErr != nil {
		r.Status = result.Error
		r.Checks = []result.Check{{Name: "reference", Status: result.Error,
			Message: fmt.Sprintf("the reference tracker failed on this run, nothing was compared: %v", j.refErr)}}
		return
	}
	n := len(j.res.Frames)
	opts := compare.Options{Position: j.sc.pos, Cutoff: s.cutoff}
	names, err := alignRun(j.ex.Frames, j.res.Frames, j.ex.Steps, j.sc.tie, opts)
	if err != nil {
		r.Checks = append(r.Checks, result.Check{Name: "alignment", Status: result.Error,
			Message: fmt.Sprintf("the tracker's tracks could not be paired with the reference's: %v", err)})
	} else {
		j.names = names
		if s.against != AgainstGolden {
			r.Checks = append(r.Checks, s.checkReference(j))
			if j.res.Tracker.Covariance {
				r.Checks = append(r.Checks, s.checkConformance(j))
			}
			r.Checks = append(r.Checks, s.checkIdentity(j, opts))
		}
	}
	s.scoreJob(j)
	if s.against != AgainstReference && j.index < s.goldenRunsOf(j.sc) {
		r.Checks = append(r.Checks, s.checkGolden(j)...)
	}
	if f := j.res.Fault; f != nil {
		r.Fault = &result.Fault{Class: f.Class.String(), Step: f.Step, Line: f.Line,
			Message: f.Detail, Excerpt: f.Excerpt, Stderr: f.Stderr}
		msg := fmt.Sprintf("the tracker faulted (%s) at step %d: %s", f.Class, f.Step, f.Detail)
		if n < len(j.run.Scans) {
			msg += fmt.Sprintf("; only the %d frames before it were compared", n)
		}
		r.Checks = append(r.Checks, result.Check{Name: "tracker", Status: result.Faulted, Message: msg,
			First: &result.Divergence{Step: f.Step, Kind: "fault", Message: msg}})
	}
	if n == 0 && len(j.run.Scans) > 0 {
		// The tracker answered no scan: the checks of its output compared
		// nothing, and a pass would say they had.
		why := "the tracker answered no scan"
		if f := j.res.Fault; f != nil {
			why += fmt.Sprintf(" before it faulted at step %d", f.Step)
		}
		for i := range r.Checks {
			c := &r.Checks[i]
			switch c.Name {
			case "reference", "conformance", "identity":
				if c.Status == result.Pass {
					c.Status, c.Message = result.Skip, "nothing compared: "+why
				}
			}
		}
	}
	r.Status = result.Pass
	for _, c := range r.Checks {
		r.Status = result.Worst(r.Status, c.Status)
	}
	if j.score != nil {
		r.Metrics = j.score.metrics
		r.Values = valuesOf(j.score.whole)
		if j.refSc != nil && j.refSc.err == nil {
			r.ReferenceValues = valuesOf(j.refSc.whole)
		}
		if j.blessed != nil {
			r.BlessedValues = valuesOf(j.blessed)
		}
	}
	if s.AllTraces || j.index == 0 || r.Status.Rank() > result.Tie.Rank() {
		r.Trace = s.trace(j)
	}
}

// goldenRunsOf is G for one scenario: Options.GoldenRuns, else the
// project's for the scenario, else DefaultGoldenRuns; never more than the
// runs planned, nor than the scenario file's own run count, so that the
// golden set does not depend on a --runs override.
func (s *settings) goldenRunsOf(sc *scen) int {
	g := s.gRuns
	if g == 0 {
		g = s.cfg.GoldenRunsFor(sc.spec.Name)
	}
	if g <= 0 {
		g = DefaultGoldenRuns
	}
	return min(sc.planned, sc.spec.Runs, g)
}

// assemble builds the suite from the judged jobs.
func (s *settings) assemble(scens []*scen) *result.Suite {
	suite := &result.Suite{
		Version:  result.Version,
		Tool:     s.Tool,
		Platform: platform(),
		Tracker:  result.Tracker{Command: append([]string(nil), s.argv...)},
		Against:  string(s.against),
		Shard:    s.Shard.Result(),
		Status:   result.Pass,
		Rules:    RulesOf(s.cfg.Gates),
	}
	if suite.Tool == "" {
		suite.Tool = "trackgate " + golden.ModuleVersion()
	}
	for _, sc := range scens {
		out := result.Scenario{File: sc.file, Status: result.Pass}
		if sc.err != nil {
			out.Name = strings.TrimSuffix(filepath.Base(sc.file), filepath.Ext(sc.file))
			out.Status = result.Error
			suite.Notes = append(suite.Notes, fmt.Sprintf("scenario %s not run: %v", sc.file, sc.err))
			suite.Scenarios = append(suite.Scenarios, out)
			suite.Status = result.Worst(suite.Status, out.Status)
			continue
		}
		spec := sc.spec
		out.Name, out.Description, out.Hash = spec.Name, spec.Description, spec.Hash
		out.StateDim, out.MeasDim, out.Position = spec.Model.StateDim, spec.Model.MeasDim, sc.pos
		out.RunsPlanned = sc.planned
		for _, j := range sc.jobs {
			out.Runs = append(out.Runs, j.out)
			out.Status = result.Worst(out.Status, j.out.Status)
			if suite.Tracker.Name == "" && j.res.Tracker.Name != "" {
				suite.Tracker.Name, suite.Tracker.Version = j.res.Tracker.Name, j.res.Tracker.Version
			}
		}
		suite.Scenarios = append(suite.Scenarios, out)
		suite.Status = result.Worst(suite.Status, out.Status)
	}
	var names []string
	for _, sc := range scens {
		if sc.spec != nil {
			names = append(names, sc.spec.Name)
		}
	}
	if len(names) > 0 {
		for _, e := range s.cfg.UnusedOverrides(names) {
			suite.Notes = append(suite.Notes, e.Error())
		}
	}
	// The gates were checked by resolve, so Judge cannot fail here.
	if err := Judge(suite, s.cfg); err != nil {
		suite.Notes = append(suite.Notes, err.Error())
		suite.Status = result.Worst(suite.Status, result.Error)
	}
	return suite
}

// RulesOf records gates as the result's gate rules (never nil: no gates
// give an empty list), so that a merge of shard results judges them
// again with the same rules (GatesOf).
func RulesOf(gates []config.Gate) *result.Rules {
	r := &result.Rules{Gates: []result.GateRule{}}
	for _, g := range gates {
		gr := result.GateRule{Metric: g.Metric, Worse: "higher"}
		if g.LowerIsWorse {
			gr.Worse = "lower"
		}
		if g.Limit != nil {
			l := *g.Limit
			gr.Limit = &l
		}
		if g.Paired != nil {
			gr.Paired = &result.PairedRule{Confidence: g.Paired.Confidence, MinEffect: g.Paired.MinEffect}
		}
		r.Gates = append(r.Gates, gr)
	}
	return r
}

// GatesOf returns the gates recorded as r (RulesOf); nil for nil r.
func GatesOf(r *result.Rules) []config.Gate {
	if r == nil {
		return nil
	}
	var out []config.Gate
	for _, gr := range r.Gates {
		g := config.Gate{Metric: gr.Metric, LowerIsWorse: gr.Worse == "lower"}
		if gr.Limit != nil {
			l := *gr.Limit
			g.Limit = &l
		}
		if gr.Paired != nil {
			g.Paired = &config.Paired{Confidence: gr.Paired.Confidence, MinEffect: gr.Paired.MinEffect}
		}
		out = append(out, g)
	}
	return out
}

// platform describes the running binary.
func platform() result.Platform {
	p := golden.ThisPlatform()
	return result.Platform{GoVersion: runtime.Version(), GOOS: p.OS, GOARCH: p.Arch, GOAMD64: p.AMD64}
}

// axes returns the position and velocity components of a scenario's state:
// per-axis [position, velocity] pairs for constant velocity and constant
// turn, every component a position for a random walk (scenarios/README.md).
func axes(spec *scenario.Spec) (pos, vel []int) {
	switch spec.Motion.Kind {
	case scenario.ConstantVelocity, scenario.ConstantTurn:
		for a := 0; a < spec.Motion.Axes; a++ {
			pos = append(pos, 2*a)
			vel = append(vel, 2*a+1)
		}
	default:
		for i := 0; i < spec.Model.StateDim; i++ {
			pos = append(pos, i)
		}
	}
	return pos, vel
}

// objectsOf returns the scenario's objects as the reference takes them.
func objectsOf(spec *scenario.Spec) []mot.Object {
	objs := make([]mot.Object, len(spec.Objects))
	for i, o := range spec.Objects {
		objs[i] = o.Object
	}
	return objs
}

// ExitCode maps a suite status to trackgate's exit codes, for check, merge
// and report alike: pass, tie and skip 0; fail (a regression) 1; error (a
// scenario that does not load, a stale golden, a check trackgate could not
// make) 2; fault (the tracker itself faulted) 3. A fault ranks above an
// error (result.Status.Rank), so a suite where the tracker faulted on any
// run exits 3 even when some check also ended in an error. Bad usage and a
// bad project file stop trackgate before any run and exit 2 without a
// suite.
func ExitCode(s result.Status) int {
	switch s {
	case result.Pass, result.Tie, result.Skip:
		return 0
	case result.Fail:
		return 1
	case result.Faulted:
		return 3
	}
	return 2
}
