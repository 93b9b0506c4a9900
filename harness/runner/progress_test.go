package runner

import (
	"bytes"
	"context"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/reference/tracker"
)

// TestProgressLine: updates closer than 200 ms are dropped except the last
// run's; the line is rewritten in place and erased by Finish.
func TestProgressLine(t *testing.T) {
	now := time.Date(2026, 3, 1, 6, 0, 0, 0, time.UTC)
	clockAt := now
	var b bytes.Buffer
	p := NewProgressLine(&b, func() time.Time { return clockAt })
	p.Update(0, 300)
	clockAt = clockAt.Add(100 * time.Millisecond)
	p.Update(1, 300) // dropped: 100 ms after the last
	clockAt = now.Add(65 * time.Second)
	p.Update(2, 300)
	clockAt = clockAt.Add(time.Millisecond)
	p.Update(300, 300) // the last run is always shown
	p.Finish()
	p.Finish() // nothing more to erase
	want := "\r\x1b[Kruns 0/300  0:00 elapsed" + "\r\x1b[Kruns 2/300  1:05 elapsed" + "\r\x1b[Kruns 300/300  1:05 elapsed" + "\r\x1b[K"
	if b.String() != want {
		t.Errorf("line output %q, want %q", b.String(), want)
	}
	var none *ProgressLine
	none.Finish()
	if got := clock(3*time.Hour + 7*time.Minute + 9*time.Second + 999*time.Millisecond); got != "3:07:09" {
		t.Errorf("clock = %q", got)
	}
	if IsTerminal(&b) {
		t.Error("a buffer was taken for a terminal")
	}
}

// TestProgressAndTimingLeaveResultsAlone: reporting progress (which counts
// runs as their chunks of runs finish) gives the same bytes as not; every
// run is counted once; Timing fills Seconds and nothing else.
func TestProgressAndTimingLeaveResultsAlone(t *testing.T) {
	files := []string{scenarioFile("tie-mirror-pair"), scenarioFile("warmup-rail-carts")}
	base := func() Options {
		o := variantOptions("reference", files...)
		o.Against, o.Runs = AgainstReference, 6
		return o
	}
	plain, err := result.Marshal(checkOf(t, base()))
	if err != nil {
		t.Fatal(err)
	}
	var mu sync.Mutex
	var seen []int
	o := base()
	o.Progress = func(done, total int) {
		mu.Lock()
		defer mu.Unlock()
		if total != 12 {
			t.Errorf("progress total %d, want 12", total)
		}
		seen = append(seen, done)
	}
	withProgress, err := result.Marshal(checkOf(t, o))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(plain, withProgress) {
		t.Errorf("reporting progress changed the result:\n%s", firstDifference(plain, withProgress))
	}
	if len(seen) < 2 || seen[0] != 0 || seen[len(seen)-1] != 12 || !slices.IsSorted(seen) {
		t.Errorf("progress reports %v, want 0 … 12 in order", seen)
	}
	o = base()
	o.Timing = true
	timed := checkOf(t, o)
	for _, sc := range timed.Scenarios {
		for i := range sc.Runs {
			if !(sc.Runs[i].Seconds > 0) {
				t.Errorf("%s run %d: Seconds %g with Timing on", sc.Name, i, sc.Runs[i].Seconds)
			}
			sc.Runs[i].Seconds = 0
		}
	}
	untimed, err := result.Marshal(timed)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(plain, untimed) {
		t.Errorf("Timing changed more than Seconds:\n%s", firstDifference(plain, untimed))
	}
	if bytes.Contains(plain, []byte(`"seconds"`)) {
		t.Error("a result without Timing records seconds")
	}
	// Batches of 5 runs (the last one short) instead of one batch.
	batchRuns = 5
	defer func() { batchRuns = 0 }()
	o = base()
	o.Progress = func(int, int) {}
	batched, err := result.Marshal(checkOf(t, o))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(plain, batched) {
		t.Errorf("small batches changed the result:\n%s", firstDifference(plain, batched))
	}
}

// referenceLocal is the reference tracker run in process.
func referenceLocal() *Local {
	return &Local{
		Ready: protocol.Ready{Name: "reference-in-process", Version: "1", Covariance: true, Association: true},
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			ref := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects})
			return func(scan mot.Scan) (mot.Frame, error) {
				f, _, err := ref.Step(scan)
				return f, err
			}, nil
		},
	}
}

// TestLocalTrackerMatchesSubprocess: the reference run in process gives
// the same runs, metrics and gates as the reference served by a
// subprocess over the protocol.
func TestLocalTrackerMatchesSubprocess(t *testing.T) {
	files := []string{scenarioFile("crossing-harbour-vessels"), scenarioFile("tie-mirror-pair")}
	o := variantOptions("reference", files...)
	o.Against, o.Runs, o.Config.Gates = AgainstReference, 3, gatedConfig().Gates
	sub := checkOf(t, o)
	o.Local = referenceLocal()
	loc := checkOf(t, o)
	if loc.Tracker.Name != "reference-in-process" || loc.Tracker.Command != nil {
		t.Errorf("local tracker recorded as %+v", loc.Tracker)
	}
	loc.Tracker, sub.Tracker = result.Tracker{}, result.Tracker{}
	a, _ := result.Marshal(sub)
	b, _ := result.Marshal(loc)
	if !bytes.Equal(a, b) {
		t.Errorf("in process and subprocess differ:\n%s", firstDifference(a, b))
	}
	if sub.Status.Rank() > result.Tie.Rank() {
		t.Errorf("the reference against itself: status %s", sub.Status)
	}
}

// TestLocalTrackerFaults: errors, panics and bad frames of an in-process
// tracker are faults of the right class at the right step.
func TestLocalTrackerFaults(t *testing.T) {
	for _, tt := range []struct {
		name  string
		step  func(k int, f mot.Frame) (mot.Frame, error)
		begin error
		class string
		at    int
	}{
		{name: "begin fails", begin: errTest, class: "bad opening reply", at: -1},
		{name: "step fails", step: func(k int, f mot.Frame) (mot.Frame, error) {
			if k == 2 {
				return f, errTest
			}
			return f, nil
		}, class: "exited", at: 2},
		{name: "panic", step: func(k int, f mot.Frame) (mot.Frame, error) {
			if k == 3 {
				panic("index out of range in the gating loop")
			}
			return f, nil
		}, class: "crashed", at: 3},
		{name: "wrong step", step: func(k int, f mot.Frame) (mot.Frame, error) { f.Step = k + 1; return f, nil }, class: "wrong step", at: 0},
		{name: "NaN mean", step: func(k int, f mot.Frame) (mot.Frame, error) {
			if k == 1 && len(f.Tracks) > 0 {
				f.Tracks = slices.Clone(f.Tracks)
				f.Tracks[0].Mean = []float64{nan(), 0, 0, 0}
			}
			return f, nil
		}, class: "non-finite number", at: 1},
		{name: "duplicate track", step: func(k int, f mot.Frame) (mot.Frame, error) {
			if len(f.Tracks) > 1 {
				f.Tracks = slices.Clone(f.Tracks)
				f.Tracks[1].Track = f.Tracks[0].Track
			}
			return f, nil
		}, class: "track id used twice", at: 0},
		{name: "unknown detection", step: func(k int, f mot.Frame) (mot.Frame, error) {
			if k == 4 && len(f.Tracks) > 0 {
				f.Tracks = slices.Clone(f.Tracks)
				f.Tracks[0].HasDetection, f.Tracks[0].Detection = true, 1<<30
			}
			return f, nil
		}, class: "unknown detection", at: 4},
	} {
		t.Run(tt.name, func(t *testing.T) {
			ref := referenceLocal()
			l := &Local{Ready: ref.Ready, Begin: func(s protocol.Start) (protocol.StepFunc, error) {
				if tt.begin != nil {
					return nil, tt.begin
				}
				fn, _ := ref.Begin(s)
				k := 0
				return func(scan mot.Scan) (mot.Frame, error) {
					f, err := fn(scan)
					if err != nil {
						return f, err
					}
					defer func() { k++ }()
					return tt.step(k, f)
				}, nil
			}}
			o := variantOptions("reference", scenarioFile("crossing-harbour-vessels"))
			o.Against, o.Runs, o.Local = AgainstReference, 1, l
			s := checkOf(t, o)
			r := s.Scenarios[0].Runs[0]
			if s.Status != result.Faulted || r.Fault == nil {
				t.Fatalf("status %s, fault %+v; want a fault", s.Status, r.Fault)
			}
			if r.Fault.Class != tt.class || r.Fault.Step != tt.at {
				t.Errorf("fault %s at step %d (%s), want %s at step %d", r.Fault.Class, r.Fault.Step, r.Fault.Message, tt.class, tt.at)
			}
			if tt.name == "panic" && !strings.Contains(r.Fault.Message, "gating loop") {
				t.Errorf("panic fault message %q does not carry the panic value", r.Fault.Message)
			}
		})
	}
}

var errTest = errorString("the sonar model file is missing")

type errorString string

func (e errorString) Error() string { return string(e) }

func nan() float64 { z := 0.0; return z / z }

// TestLocalTrackerCancelled: a cancelled context ends in-process runs with
// a fault of class canceled.
func TestLocalTrackerCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	o := variantOptions("reference", scenarioFile("tie-mirror-pair"))
	o.Against, o.Local = AgainstReference, referenceLocal()
	s, err := Check(ctx, o)
	if err != nil {
		t.Fatal(err)
	}
	if f := s.Scenarios[0].Runs[0].Fault; f == nil || f.Class != "canceled" {
		t.Errorf("fault %+v, want canceled", f)
	}
}

// TestReusedReferenceStepChangesNothing: taking the reference's own step
// in the conformance check, where the tracker's previous estimates are the
// reference's bit for bit, gives the same result as restarting the
// reference there, for the reference itself, for trackers that differ
// from it (a nudged estimate, a tie resolved the other way) and on the
// whole stock library.
func TestReusedReferenceStepChangesNothing(t *testing.T) {
	if testing.Short() {
		t.Skip("the stock library twice per tracker")
	}
	for _, variant := range []string{"reference", "nudge", "flip", "swap"} {
		t.Run(variant, func(t *testing.T) {
			o := variantOptions(variant)
			o.Scenarios = nil
			o.Config.Scenarios = []string{stock + "*.yaml"}
			o.Config.TieMargin = 1e-9
			o.Against, o.Runs = AgainstReference, 2
			fast, err := result.Marshal(checkOf(t, o))
			if err != nil {
				t.Fatal(err)
			}
			reuseReferenceStep = false
			defer func() { reuseReferenceStep = true }()
			slow, err := result.Marshal(checkOf(t, o))
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(fast, slow) {
				t.Errorf("the reused step changes the result:\n%s", firstDifference(slow, fast))
			}
		})
	}
}
