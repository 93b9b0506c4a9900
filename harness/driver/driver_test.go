package driver

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/mot"
)

// warehouseJob is an invented run: forklifts on a warehouse floor seen by a
// ceiling lidar, 2-D constant velocity with state [x, vx, y, vy], steps
// scans of two detections each.
func warehouseJob(index, steps int) Job {
	f, _ := mot.MatFromRows([][]float64{{1, 0.5, 0, 0}, {0, 1, 0, 0}, {0, 0, 1, 0.5}, {0, 0, 0, 1}})
	h, _ := mot.MatFromRows([][]float64{{1, 0, 0, 0}, {0, 0, 1, 0}})
	q := mot.Identity(4)
	for i := range q.Data {
		q.Data[i] *= 0.01
	}
	r, _ := mot.MatFromRows([][]float64{{0.04, 0}, {0, 0.04}})
	job := Job{Scenario: "warehouse-aisles", Hash: "c0ffee", Objects: []mot.Object{
		{ID: "forklift", Mean: []float64{2, 1, 3, 0}, Cov: mot.Identity(4), Disappear: -1},
		{ID: "cart", Mean: []float64{20, -0.5, 8, 0.25}, Cov: mot.Identity(4), Appear: 1, Disappear: -1},
	},
		Model: mot.Model{StateDim: 4, MeasDim: 2, Interval: 0.5, F: f, Q: q, H: h, R: r, PD: 0.95,
			ClutterMean: 0.5, ClutterDensity: 0.5 / 1200, ClutterMin: []float64{0, 0}, ClutterMax: []float64{40, 30}, GateProb: 0.99},
		Run: mot.Run{Index: index, Seed: uint64(1000 + index)}}
	id := 0
	for k := 0; k < steps; k++ {
		s := mot.Scan{Step: k, Time: float64(k) * 0.5}
		for _, o := range job.Objects {
			x := 0.5 * float64(k)
			s.Detections = append(s.Detections, mot.Detection{ID: id,
				Z: []float64{o.Mean[0] + o.Mean[1]*x + 0.01*float64(index), o.Mean[2] + o.Mean[3]*x}})
			id++
		}
		job.Run.Scans = append(job.Run.Scans, s)
	}
	return job
}

func fakeConfig(mode string) Config {
	return Config{Argv: []string{os.Args[0]}, Env: []string{fakeEnv + "=" + mode, "GORACE=atexit_sleep_ms=0"},
		ReplyTimeout: 3 * time.Second, Grace: 200 * time.Millisecond, MaxLine: 16 << 10}
}

// pgroupMembers lists the live (not zombie) processes of process group
// pgid, from /proc.
func pgroupMembers(pgid int) []string {
	var out []string
	ents, _ := os.ReadDir("/proc")
	for _, e := range ents {
		if _, err := strconv.Atoi(e.Name()); err != nil {
			continue
		}
		b, err := os.ReadFile(filepath.Join("/proc", e.Name(), "stat"))
		if err != nil {
			continue
		}
		// pid (comm) state ppid pgrp ...; comm may hold spaces.
		s := string(b)
		rest := strings.Fields(s[strings.LastIndexByte(s, ')')+1:])
		if len(rest) < 3 {
			continue
		}
		if g, _ := strconv.Atoi(rest[2]); g == pgid && rest[0] != "Z" && rest[0] != "X" {
			out = append(out, e.Name()+" "+rest[0])
		}
	}
	return out
}

var pidMu sync.Mutex
var pidsByMode = map[string][]int{}

func init() {
	onStart = func(pid int) {
		pidMu.Lock()
		defer pidMu.Unlock()
		pidsByMode[""] = append(pidsByMode[""], pid)
	}
}

// requireNoLeftovers fails if any process of the groups started so far is
// still alive (after a short poll: SIGKILL is delivered asynchronously).
func requireNoLeftovers(t *testing.T, pids []int) {
	t.Helper()
	deadline := time.Now().Add(2 * time.Second)
	for _, pid := range pids {
		for {
			left := pgroupMembers(pid)
			if len(left) == 0 {
				break
			}
			if time.Now().After(deadline) {
				t.Errorf("process group %d still has live members: %v", pid, left)
				break
			}
			time.Sleep(20 * time.Millisecond)
		}
	}
}

func startedPids() []int {
	pidMu.Lock()
	defer pidMu.Unlock()
	return append([]int(nil), pidsByMode[""]...)
}

func TestFaults(t *testing.T) {
	tests := []struct {
		mode   string
		class  Class
		step   int
		line   int
		detail string // substring of Detail
		stderr string // substring of the fault's stderr tail
		cfg    func(*Config)
	}{
		{mode: "exit-mid", class: Exited, step: 1, detail: "exit status 3", stderr: "ran out of beacons"},
		{mode: "signal-mid", class: Crashed, step: 1, detail: "killed"},
		{mode: "hang", class: Hang, step: 1, detail: "no reply within", stderr: "thinking hard"},
		{mode: "ignore-term", class: Hang, step: 1, detail: "no reply within"},
		// Our SIGTERM after the reply timeout makes it exit with status 3:
		// the hang is the fault, not the status.
		{mode: "term-exits-3", class: Hang, step: 1, detail: "no reply within", stderr: "caught SIGTERM"},
		{mode: "grandchild", class: Hang, step: 1, stderr: "stubborn grandchild running"},
		{mode: "slow", class: Hang, detail: "run timeout", cfg: func(c *Config) { c.RunTimeout = 250 * time.Millisecond; c.ReplyTimeout = 5 * time.Second }},
		{mode: "garbage", class: BadJSON, step: 1, line: 3},
		{mode: "bad-utf8", class: BadJSON, step: 1, line: 3, detail: "tracks[0].id: invalid UTF-8"},
		{mode: "long", class: LineTooLong, step: 1, line: 3},
		{mode: "wrong-step", class: WrongStep, step: 1, line: 3, detail: "reply for step 2, want 1"},
		{mode: "nan", class: NonFinite, step: 1, line: 3, detail: "tracks[0].mean[1]"},
		{mode: "asym", class: BadCovariance, step: 1, line: 3, detail: "not symmetric"},
		{mode: "negdef", class: BadCovariance, step: 1, line: 3, detail: "not positive semi-definite"},
		{mode: "short-mean", class: Dimension, step: 1, line: 3, detail: "tracks[1].mean: length 3"},
		{mode: "ghost-det", class: UnknownDetection, step: 1, line: 3, detail: "999999"},
		{mode: "twice-det", class: DuplicateDetection, step: 1, line: 3, detail: "already used by tracks[0]"},
		{mode: "dup-track", class: DuplicateTrack, step: 1, line: 3},
		{mode: "no-cov", class: Malformed, step: 1, line: 3, detail: "declared covariances"},
		{mode: "close-out", class: MissingReply, step: 1, detail: "closed its output"},
		{mode: "exit0", class: MissingReply, step: 1, detail: "status 0"},
		{mode: "exit-after", class: Exited, step: 4, detail: "exit status 5"},
		{mode: "no-ready", class: BadOpening, step: -1, line: 1},
		{mode: "silent", class: BadOpening, step: -1},
		{mode: "version2", class: Version, step: -1, line: 1},
		{mode: "launch", class: Launch, step: -1, cfg: func(c *Config) { c.Argv = []string{"/nonexistent/tracker"} }},
	}
	for _, tt := range tests {
		t.Run(tt.mode, func(t *testing.T) {
			t.Parallel()
			cfg := fakeConfig(tt.mode)
			if tt.cfg != nil {
				tt.cfg(&cfg)
			}
			start := time.Now()
			res := Run(context.Background(), cfg, warehouseJob(0, 4))
			took := time.Since(start)
			f := res.Fault
			if f == nil {
				t.Fatalf("Run(%s) gave no fault, want %v", tt.mode, tt.class)
			}
			if f.Class != tt.class {
				t.Fatalf("Run(%s) fault %v, want class %v\n%v", tt.mode, f.Class, tt.class, f)
			}
			if tt.class != Hang && tt.step != 0 && f.Step != tt.step {
				t.Errorf("Run(%s) fault at step %d, want %d", tt.mode, f.Step, tt.step)
			}
			if tt.line != 0 && f.Line != tt.line {
				t.Errorf("Run(%s) fault at line %d, want %d", tt.mode, f.Line, tt.line)
			}
			if !strings.Contains(f.Detail, tt.detail) {
				t.Errorf("Run(%s) fault detail %q, want it to contain %q", tt.mode, f.Detail, tt.detail)
			}
			if !strings.Contains(f.Stderr, tt.stderr) {
				t.Errorf("Run(%s) fault stderr %q, want it to contain %q", tt.mode, f.Stderr, tt.stderr)
			}
			// Within the timeouts: reply timeout, plus two grace periods to
			// end the group, plus slack for a loaded machine.
			if limit := cfg.replyTimeout() + 2*cfg.grace() + 2*time.Second; took > limit {
				t.Errorf("Run(%s) took %v, want under %v", tt.mode, took, limit)
			}
			if tt.line > 0 {
				last := res.Tape[len(res.Tape)-1]
				if last.Dir != FromTracker || last.Line != tt.line || !strings.HasPrefix(f.Excerpt, string(last.Raw[:min(len(last.Raw), 40)])) {
					t.Errorf("Run(%s) last tape entry %v line %d %.60q, excerpt %.60q", tt.mode, last.Dir, last.Line, last.Raw, f.Excerpt)
				}
			}
			if f.Error() == "" {
				t.Error("empty fault message")
			}
		})
	}
	t.Cleanup(func() { requireNoLeftovers(t, startedPids()) })
}

// TestExtraFields checks that fields a tracker adds are kept on the tape
// and otherwise ignored.
func TestExtraFields(t *testing.T) {
	res := Run(context.Background(), fakeConfig("extra"), warehouseJob(0, 3))
	if res.Fault != nil {
		t.Fatal(res.Fault)
	}
	if len(res.Frames[1].Tracks) != 0 {
		t.Errorf("frame 1 has %d tracks, want 0", len(res.Frames[1].Tracks))
	}
	if raw := string(res.Tape[5].Raw); !strings.Contains(raw, `"note":"kept on tape"`) {
		t.Errorf("tape[5] = %s, want the extra field kept", raw)
	}
}

// TestHarnessFault checks that a job the harness cannot encode (a NaN
// measurement) is reported as a harness fault, not blamed on the tracker.
func TestHarnessFault(t *testing.T) {
	job := warehouseJob(0, 3)
	job.Run.Scans[2].Detections[1].Z[0] = math.NaN()
	res := Run(context.Background(), fakeConfig("good"), job)
	if res.Fault == nil || res.Fault.Class != Harness || res.Fault.Step != 2 || !strings.Contains(res.Fault.Detail, "detections[1].z[0]") {
		t.Fatalf("fault %v, want a harness fault at step 2 naming detections[1].z[0]", res.Fault)
	}
	if len(res.Frames) != 2 {
		t.Errorf("%d frames kept, want the 2 answered before the fault", len(res.Frames))
	}
}

func TestGoodRun(t *testing.T) {
	job := warehouseJob(2, 5)
	cfg := fakeConfig("good")
	cfg.Dir = t.TempDir()
	cfg.Env = append(cfg.Env, "TRACKGATE_DRIVER_FAKE_PWD=1")
	res := Run(context.Background(), cfg, job)
	if want := "working in " + cfg.Dir + "\n"; string(res.Stderr) != want {
		t.Errorf("stderr %q, want %q (the working directory and environment given)", res.Stderr, want)
	}
	if res.Fault != nil {
		t.Fatal(res.Fault)
	}
	if res.Tracker.Name != "fake-good" || !res.Tracker.Covariance || !res.Tracker.Association {
		t.Errorf("ready = %+v", res.Tracker)
	}
	if len(res.Frames) != 5 {
		t.Fatalf("%d frames, want 5", len(res.Frames))
	}
	for k, f := range res.Frames {
		want := echoFrame(job.Model, job.Run.Scans[k])
		if diff := cmp.Diff(want, f); diff != "" {
			t.Errorf("frame %d (-want +got):\n%s", k, diff)
		}
	}
	// Tape: start, ready, then scan/tracks pairs, then stop.
	if n := len(res.Tape); n != 2+2*5+1 {
		t.Fatalf("tape has %d entries, want 13", n)
	}
	if e := res.Tape[0]; e.Dir != ToTracker || e.Line != 1 || !bytes.HasPrefix(e.Raw, []byte(`{"type":"start","protocol":1,"run":{"scenario":"warehouse-aisles"`)) {
		t.Errorf("tape[0] = %v %d %.80s", e.Dir, e.Line, e.Raw)
	}
	if e := res.Tape[12]; e.Dir != ToTracker || e.Line != 7 || string(e.Raw) != `{"type":"stop"}` {
		t.Errorf("tape[12] = %v %d %s", e.Dir, e.Line, e.Raw)
	}
	if e := res.Tape[11]; e.Dir != FromTracker || e.Line != 6 || !bytes.HasPrefix(e.Raw, []byte(`{"type":"tracks","step":4,`)) {
		t.Errorf("tape[11] = %v %d %s", e.Dir, e.Line, e.Raw)
	}
	requireNoLeftovers(t, startedPids())
}

// TestRunManyOrder checks that results do not depend on the worker count,
// for trackers started per run and for one serving several runs.
func TestRunManyOrder(t *testing.T) {
	var jobs []Job
	for i := 0; i < 5; i++ {
		jobs = append(jobs, warehouseJob(i, 3+i%3))
	}
	for _, mode := range []string{"good", "many"} {
		cfg := fakeConfig(mode)
		before := len(startedPids())
		want := RunMany(context.Background(), cfg, jobs, 1)
		// A tracker that serves several runs is started once per worker.
		started, wantStarted := len(startedPids())-before, len(jobs)
		if mode == "many" {
			wantStarted = 1
		}
		if started != wantStarted {
			t.Errorf("%s: %d processes started for %d jobs on one worker, want %d", mode, started, len(jobs), wantStarted)
		}
		for i, r := range want {
			if r.Fault != nil {
				t.Fatalf("%s job %d: %v", mode, i, r.Fault)
			}
			if r.Frames[0].Tracks[0].Mean[0] != jobs[i].Run.Scans[0].Detections[0].Z[0] {
				t.Fatalf("%s job %d: result out of order", mode, i)
			}
		}
		for _, workers := range []int{3} {
			got := RunMany(context.Background(), cfg, jobs, workers)
			if diff := cmp.Diff(want, got); diff != "" {
				t.Errorf("%s: RunMany with %d workers differs from 1 worker (-1 +%d):\n%s", mode, workers, workers, diff)
			}
		}
	}
	requireNoLeftovers(t, startedPids())
}

func TestCancel(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	time.AfterFunc(150*time.Millisecond, cancel)
	cfg := fakeConfig("hang")
	cfg.ReplyTimeout = time.Minute
	start := time.Now()
	res := Run(ctx, cfg, warehouseJob(0, 3))
	if res.Fault == nil || res.Fault.Class != Canceled {
		t.Fatalf("fault %v, want canceled", res.Fault)
	}
	if took := time.Since(start); took > 3*time.Second {
		t.Errorf("cancelled run took %v", took)
	}
	requireNoLeftovers(t, startedPids())
}

func TestBatch(t *testing.T) {
	job := warehouseJob(1, 4)
	tests := []struct {
		name  string
		mode  string
		args  []string
		class Class
		step  int
	}{
		{name: "files", mode: "batch", args: []string{InputPlaceholder, OutputPlaceholder}},
		{name: "pipes", mode: "batch"},
		{name: "crash", mode: "batch-crash", class: Exited},
		{name: "hang", mode: "batch-hang", class: Hang},
		{name: "short", mode: "batch-short", args: []string{InputPlaceholder, OutputPlaceholder}, class: MissingReply, step: 2},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			cfg := fakeConfig(tt.mode)
			cfg.Batch = true
			cfg.RunTimeout = 10 * time.Second
			if tt.class == Hang {
				cfg.RunTimeout = 700 * time.Millisecond
			}
			cfg.Argv = append(cfg.Argv, tt.args...)
			res := Run(context.Background(), cfg, job)
			if tt.class == 0 {
				if res.Fault != nil {
					t.Fatal(res.Fault)
				}
				for k, f := range res.Frames {
					if diff := cmp.Diff(echoFrame(job.Model, job.Run.Scans[k]), f); diff != "" {
						t.Errorf("frame %d (-want +got):\n%s", k, diff)
					}
				}
				if len(res.Frames) != 4 || len(res.Tape) != 6+5 {
					t.Errorf("%d frames and %d tape entries, want 4 and 11", len(res.Frames), len(res.Tape))
				}
				return
			}
			if res.Fault == nil || res.Fault.Class != tt.class {
				t.Fatalf("fault %v, want %v", res.Fault, tt.class)
			}
			if tt.step != 0 && res.Fault.Step != tt.step {
				t.Errorf("fault at step %d, want %d", res.Fault.Step, tt.step)
			}
		})
	}
	t.Cleanup(func() { requireNoLeftovers(t, startedPids()) })
}

func TestSymmetricPSD(t *testing.T) {
	tests := []struct {
		name   string
		rows   [][]float64
		ok     bool
		reason string
	}{
		{"identity", [][]float64{{1, 0}, {0, 1}}, true, "eigenvalues 1, 1"},
		// [[a, b], [b, a]] has eigenvalues a ± b (closed form).
		{"indefinite", [][]float64{{1, 2}, {2, 1}}, false, "eigenvalues −1 and 3"},
		{"singular", [][]float64{{1, 1}, {1, 1}}, true, "eigenvalues 0 and 2: semi-definite is allowed"},
		{"rank one", [][]float64{{4, 2, 0}, {2, 1, 0}, {0, 0, 0}}, true, "vvᵀ with v = (2, 1, 0)"},
		{"slightly negative", [][]float64{{1, 0}, {0, -1e-3}}, false, "eigenvalue −1e-3 is far beyond round-off"},
		{"round-off", [][]float64{{1e6, 0}, {0, -1e-7}}, true, "−1e-7 is below 1e-9·2·1e6"},
		{"asymmetric", [][]float64{{2, 1}, {1.001, 2}}, false, "off by 1e-3"},
		{"zero", [][]float64{{0, 0}, {0, 0}}, true, "all eigenvalues 0"},
	}
	for _, tt := range tests {
		m, _ := mot.MatFromRows(tt.rows)
		var work []float64
		if ok, msg := symmetricPSD(m, &work); ok != tt.ok {
			t.Errorf("%s: symmetricPSD(%v) = %v (%s), want %v (%s)", tt.name, tt.rows, ok, msg, tt.ok, tt.reason)
		}
	}
}

func TestLastLines(t *testing.T) {
	for _, tt := range []struct {
		in   string
		n    int
		want string
	}{
		{"a\nb\nc\n", 2, "b\nc"},
		{"a\nb\nc", 5, "a\nb\nc"},
		{"", 3, ""},
	} {
		if got := lastLines([]byte(tt.in), tt.n, 100); got != tt.want {
			t.Errorf("lastLines(%q, %d) = %q, want %q", tt.in, tt.n, got, tt.want)
		}
	}
}

func TestRing(t *testing.T) {
	r := newRing(8)
	fmt.Fprint(r, "abc")
	m := r.mark()
	fmt.Fprint(r, "defghij")
	if got := string(r.since(0)); got != "cdefghij" {
		t.Errorf("since(0) = %q, want the last 8 bytes", got)
	}
	if got := string(r.since(m)); got != "defghij" {
		t.Errorf("since(mark) = %q", got)
	}
	r.Write([]byte("0123456789xy"))
	if got := string(r.since(0)); got != "456789xy" {
		t.Errorf("after a long write: %q", got)
	}
}

// marinaJob is the run of the example exchange in PROTOCOL.md.
func marinaJob() Job {
	f, _ := mot.MatFromRows([][]float64{{1, 1, 0, 0}, {0, 1, 0, 0}, {0, 0, 1, 1}, {0, 0, 0, 1}})
	q, _ := mot.MatFromRows([][]float64{{0.025, 0.05, 0, 0}, {0.05, 0.1, 0, 0}, {0, 0, 0.025, 0.05}, {0, 0, 0.05, 0.1}})
	h, _ := mot.MatFromRows([][]float64{{1, 0, 0, 0}, {0, 0, 1, 0}})
	r, _ := mot.MatFromRows([][]float64{{4, 0}, {0, 4}})
	cov, _ := mot.MatFromRows([][]float64{{25, 0, 0, 0}, {0, 1, 0, 0}, {0, 0, 25, 0}, {0, 0, 0, 1}})
	return Job{Scenario: "marina-entrance", Hash: "5d1e0c4a9b7f3e2d1c0b9a8f7e6d5c4b3a29181706f5e4d3c2b1a09f8e7d6c5b",
		Model: mot.Model{StateDim: 4, MeasDim: 2, Interval: 1, F: f, Q: q, H: h, R: r, PD: 0.9,
			ClutterMean: 2, ClutterDensity: 2e-6, ClutterMin: []float64{-500, -500}, ClutterMax: []float64{500, 500}, GateProb: 0.99},
		Objects: []mot.Object{{ID: "skiff", Mean: []float64{-120, 3, 40, -1}, Cov: cov, Appear: 0, Disappear: -1}},
		Run: mot.Run{Index: 0, Seed: 7301, Scans: []mot.Scan{
			{Step: 0, Time: 0, Detections: []mot.Detection{{ID: 0, Z: []float64{-118.5, 41.2}}, {ID: 1, Z: []float64{233.9, -410.7}}}},
			{Step: 1, Time: 1, Detections: []mot.Detection{{ID: 2, Z: []float64{-361, 12.4}}}},
		}}}
}

// TestDocumentExample runs the example exchange of PROTOCOL.md through the
// driver: the document's tracker passes every check, and the tape holds
// exactly the document's lines, the extra field included.
func TestDocumentExample(t *testing.T) {
	res := Run(context.Background(), fakeConfig("doc"), marinaJob())
	if res.Fault != nil {
		t.Fatal(res.Fault)
	}
	harness, tracker := exampleLines("harness> "), exampleLines("tracker> ")
	if len(harness) != 4 || len(tracker) != 3 {
		t.Fatalf("PROTOCOL.md example: %d harness and %d tracker lines, want 4 and 3", len(harness), len(tracker))
	}
	var want []string
	for i := range harness {
		want = append(want, harness[i])
		if i < len(tracker) {
			want = append(want, tracker[i])
		}
	}
	var got []string
	for _, e := range res.Tape {
		got = append(got, string(e.Raw))
	}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("tape differs from the document (-document +tape):\n%s", diff)
	}
	if len(res.Frames) != 2 || res.Frames[1].Tracks[0].Track != "1" || res.Frames[1].Tracks[0].Detection != mot.NoDetection {
		t.Errorf("frames = %+v", res.Frames)
	}
}

// TestEndedAtClose checks that a tracker that stays after its input is
// closed, and answers the SIGTERM that ends it with status 3, passes: the
// run was complete and ending it was our doing.
func TestEndedAtClose(t *testing.T) {
	res := Run(context.Background(), fakeConfig("linger-term-3"), warehouseJob(0, 3))
	if res.Fault != nil {
		t.Fatalf("fault %v, want a clean run", res.Fault)
	}
	if len(res.Frames) != 3 {
		t.Errorf("%d frames, want 3", len(res.Frames))
	}
	if !strings.Contains(string(res.Stderr), "caught SIGTERM") {
		t.Errorf("stderr %q: the tracker was not ended by SIGTERM, the test proves nothing", res.Stderr)
	}
	requireNoLeftovers(t, startedPids())
}

// TestStartTimeout checks that the ready reply is bounded by StartTimeout,
// and by ReplyTimeout when StartTimeout is zero; the fake tracker takes
// 500 ms to send ready.
func TestStartTimeout(t *testing.T) {
	tests := []struct {
		name         string
		reply, start time.Duration
		detail       string // "" for a clean run
	}{
		{name: "zero start uses the reply timeout", reply: 200 * time.Millisecond, detail: "no reply within 200ms"},
		{name: "longer start timeout", reply: 200 * time.Millisecond, start: 3 * time.Second},
		{name: "shorter start timeout", reply: 3 * time.Second, start: 100 * time.Millisecond, detail: "no reply within 100ms"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			cfg := fakeConfig("slow-start")
			cfg.ReplyTimeout, cfg.StartTimeout = tt.reply, tt.start
			res := Run(context.Background(), cfg, warehouseJob(0, 3))
			if tt.detail == "" {
				if res.Fault != nil {
					t.Fatalf("fault %v, want a clean run", res.Fault)
				}
				return
			}
			if f := res.Fault; f == nil || f.Class != Hang || f.Step != -1 || f.Detail != tt.detail {
				t.Fatalf("fault %v, want a hang at step -1 with detail %q", f, tt.detail)
			}
		})
	}
	requireNoLeftovers(t, startedPids())
}

// TestLateRunDeadline checks that a tracker serving several runs is not
// kept for the next run when the run deadline fires after the last reply
// (the deadline's halt may still be under way then and could halt the
// next run). The hook holds the first run after its stop message until its
// deadline has passed, so stopHalt reports that halt was started.
func TestLateRunDeadline(t *testing.T) {
	cfg := fakeConfig("many")
	cfg.RunTimeout = 1500 * time.Millisecond
	// The run's deadline closes runCtx.Done before the context starts halt
	// in its own goroutine, so the hook waits for halt itself: only then is
	// the race the driver guards against certain to have happened.
	halting := make(chan struct{}, 4)
	onHalt = func() { halting <- struct{}{} }
	onRunEnd = func(job *Job, runCtx context.Context) {
		if job.Run.Index == 0 {
			<-runCtx.Done()
			<-halting
		}
	}
	defer func() { onRunEnd, onHalt = nil, nil }()
	before := len(startedPids())
	res := RunMany(context.Background(), cfg, []Job{warehouseJob(0, 3), warehouseJob(1, 3)}, 1)
	for i, r := range res {
		if r.Fault != nil {
			t.Errorf("job %d: fault %v, want a clean run", i, r.Fault)
		}
	}
	if started := len(startedPids()) - before; started != 2 {
		t.Errorf("%d processes started, want 2: the first is not reused after its run deadline fired", started)
	}
	requireNoLeftovers(t, startedPids())
}
