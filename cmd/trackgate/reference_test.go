package main

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/driver"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
	"trackgate/reference/tracker"
)

// referenceChildEnv makes the test binary act as 'trackgate reference'
// when it re-runs itself (see TestReferenceChild).
const referenceChildEnv = "TRACKGATE_REFERENCE_CHILD"

// TestReferenceChild is not a test: run by TestReferenceThroughDriver as
// a subprocess, it serves the reference tracker on its standard input and
// output and exits.
func TestReferenceChild(t *testing.T) {
	if os.Getenv(referenceChildEnv) == "" {
		t.Skip("child process of TestReferenceThroughDriver")
	}
	os.Exit(run([]string{"reference"}, os.Stdout, os.Stderr))
}

// TestReferenceThroughDriver serves the reference over the protocol and
// checks that on every stock scenario its frames are identical, bit for
// bit, to the reference run in process.
func TestReferenceThroughDriver(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "..", "scenarios", "*.yaml"))
	if err != nil || len(files) == 0 {
		t.Fatalf("no stock scenarios in ../../scenarios (%v)", err)
	}
	cfg := driver.Config{Argv: []string{os.Args[0], "-test.run=^TestReferenceChild$"},
		Env: []string{referenceChildEnv + "=1", "GORACE=atexit_sleep_ms=0"}, ReplyTimeout: 30 * time.Second}
	for _, file := range files {
		t.Run(filepath.Base(file), func(t *testing.T) {
			spec, err := scenario.Load(file)
			if err != nil {
				t.Fatal(err)
			}
			runs := min(spec.Runs, 2)
			if testing.Short() {
				runs = 1
			}
			var jobs []driver.Job
			for r := 0; r < runs; r++ {
				jobs = append(jobs, driver.JobFor(spec, sim.Run(spec, r)))
			}
			results := driver.RunMany(context.Background(), cfg, jobs, 1)
			for r, res := range results {
				if res.Fault != nil {
					t.Fatalf("run %d: %v", r, res.Fault)
				}
				want, err := tracker.RunAll(tracker.Config{Model: spec.Model, Objects: jobs[r].Objects}, jobs[r].Run)
				if err != nil {
					t.Fatalf("run %d in process: %v", r, err)
				}
				if diff := cmp.Diff(want.Frames, res.Frames); diff != "" {
					t.Errorf("run %d: served frames differ from the in-process reference (-in process +served):\n%s", r, diff)
				}
				if res.Tracker.Name != "trackgate-reference" || !res.Tracker.ManyRuns {
					t.Errorf("ready = %+v", res.Tracker)
				}
			}
		})
	}
}

func TestReferenceUsageAndBadInput(t *testing.T) {
	var out, errs bytes.Buffer
	if code := run([]string{"reference", "extra"}, &out, &errs); code != exitUsage {
		t.Errorf("reference extra: exit %d, want %d", code, exitUsage)
	}
	if code := run([]string{"reference", "-k", "0"}, &out, &errs); code != exitUsage {
		t.Errorf("reference -k 0: exit %d, want %d", code, exitUsage)
	}
	defer func(r io.Reader) { referenceInput = r }(referenceInput)
	referenceInput = strings.NewReader(`{"type":"scan","step":0,"time":0,"detections":[]}` + "\n")
	errs.Reset()
	if code := run([]string{"reference"}, &out, &errs); code != exitTracker || !strings.Contains(errs.String(), "trackgate reference: stdin:1: scan outside a run") {
		t.Errorf("reference on a scan before start: exit %d, stderr %q", code, errs.String())
	}
	referenceInput = strings.NewReader("")
	if code := run([]string{"reference"}, &out, &errs); code != exitPass {
		t.Errorf("reference on empty input: exit %d, want 0", code)
	}
}
