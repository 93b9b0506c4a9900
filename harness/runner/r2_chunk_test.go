package runner

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"slices"
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/reference/tracker"
)

// leakEnv makes the test binary serve a tracker that carries state from one
// run to the next when it is started as a tracker by the tests: it serves
// the reference until it has started three runs, and from its fourth run
// on moves the first mean component of every track by 5 m. Its verdicts
// therefore say which runs shared a tracker process. With the value
// "crash-at-0" it exits at the first scan of every run instead.
const leakEnv = "TRACKGATE_RUNNER_LEAK"

func init() {
	// init runs before TestMain, so the re-executed binary serves here.
	if os.Getenv(leakEnv) != "" {
		os.Exit(serveLeak())
	}
}

func serveLeak() int {
	ready := protocol.Ready{Name: "leaky", Version: "1", Covariance: true, Association: true, ManyRuns: true}
	crash := os.Getenv(leakEnv) == "crash-at-0"
	started := 0
	err := protocol.Serve(os.Stdin, os.Stdout, ready, func(s protocol.Start) (protocol.StepFunc, error) {
		started++
		stale := started > 3
		ref := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects})
		return func(scan mot.Scan) (mot.Frame, error) {
			if crash {
				fmt.Fprintln(os.Stderr, "leaky: giving up at the first scan")
				os.Exit(7)
			}
			f, _, err := ref.Step(scan)
			if err != nil || !stale {
				return f, err
			}
			f.Tracks = slices.Clone(f.Tracks)
			for i := range f.Tracks {
				f.Tracks[i].Mean = slices.Clone(f.Tracks[i].Mean)
				f.Tracks[i].Mean[0] += 5
			}
			return f, nil
		}, nil
	})
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 3
	}
	return 0
}

// TestLeakyTrackerJudgedAlikeForAnyWorkersAndProgress checks that which
// runs share a tracker process, and so the verdict on a tracker that leaks
// state between runs, depends neither on the number of workers, nor on
// progress reporting, nor on the batch size: runs 0-2 and 16-18 of each
// chunk of RunsPerProcess runs are served fresh and pass, the others fail.
func TestLeakyTrackerJudgedAlikeForAnyWorkersAndProgress(t *testing.T) {
	const runs = RunsPerProcess + 5
	base := variantOptions("reference", "testdata/quay-pallets-and-forklift.yaml")
	base.Config.Tracker.Env = map[string]string{leakEnv: "1", "GORACE": "atexit_sleep_ms=0"}
	base.Against, base.Runs = AgainstReference, runs
	cases := []struct {
		name     string
		workers  int
		progress bool
		batch    int
	}{
		{"j1", 1, false, 0},
		{"j2", 2, false, 0},
		{"j3", 3, false, 0},
		{"j2-progress", 2, true, 0},
		{"j3-progress-batch5", 3, true, 5},
	}
	var first []byte
	for _, tc := range cases {
		o := base
		o.Workers = tc.workers
		if tc.progress {
			o.Progress = func(done, total int) {}
		}
		batchRuns = tc.batch
		s, err := Check(context.Background(), o)
		batchRuns = 0
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		data, err := result.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		if first == nil {
			first = data
			sc := s.Scenarios[0]
			if len(sc.Runs) != runs {
				t.Fatalf("%d runs, want %d", len(sc.Runs), runs)
			}
			for _, r := range sc.Runs {
				fresh := r.Index%RunsPerProcess < 3
				if got := r.Status == result.Pass; got != fresh {
					t.Errorf("run %d: status %s; a fresh process (the first three runs of a chunk) should pass and a stale one fail", r.Index, r.Status)
				}
			}
			continue
		}
		if !bytes.Equal(data, first) {
			t.Errorf("%s: result differs from j1's", tc.name)
		}
	}
}

// TestFaultAtFirstScanComparesNothing: a tracker that faults before its
// first reply gets no passing check of its output: the reference and
// identity checks say they compared nothing (skip), the run and the suite
// are a fault, exit 3.
func TestFaultAtFirstScanComparesNothing(t *testing.T) {
	o := variantOptions("reference", "testdata/quay-pallets-and-forklift.yaml")
	o.Config.Tracker.Env = map[string]string{leakEnv: "crash-at-0", "GORACE": "atexit_sleep_ms=0"}
	o.Against = AgainstReference
	s, err := Check(context.Background(), o)
	if err != nil {
		t.Fatal(err)
	}
	r := s.Scenarios[0].Runs[0]
	if r.Status != result.Faulted || s.Status != result.Faulted || ExitCode(s.Status) != 3 {
		t.Fatalf("run %s, suite %s, exit %d; want fault and 3", r.Status, s.Status, ExitCode(s.Status))
	}
	seen := map[string]bool{}
	for _, c := range r.Checks {
		seen[c.Name] = true
		switch c.Name {
		case "reference", "identity", "conformance":
			if c.Status != result.Skip || c.Message != "nothing compared: the tracker answered no scan before it faulted at step 0" {
				t.Errorf("%s check: %s %q, want skip saying nothing was compared", c.Name, c.Status, c.Message)
			}
		}
	}
	if !seen["reference"] || !seen["tracker"] {
		t.Errorf("checks %v, want a reference and a tracker check", seen)
	}
}
