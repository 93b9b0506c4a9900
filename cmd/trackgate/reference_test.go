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

// TestReferenceRefusesBadStart checks that the reference refuses a start
// message whose model it cannot serve before it replies ready: exit 3, a
// message naming line and field, nothing on standard output. The lines
// are the example start of harness/PROTOCOL.md with one field changed.
func TestReferenceRefusesBadStart(t *testing.T) {
	const good = `{"type":"start","protocol":1,"run":{"scenario":"marina-entrance","scenario_hash":"5d1e","index":0,"seed":7301,"steps":1},` +
		`"model":{"state_dim":4,"meas_dim":2,"interval":1,"F":[[1,1,0,0],[0,1,0,0],[0,0,1,1],[0,0,0,1]],` +
		`"Q":[[0.025,0.05,0,0],[0.05,0.1,0,0],[0,0,0.025,0.05],[0,0,0.05,0.1]],"H":[[1,0,0,0],[0,0,1,0]],"R":[[4,0],[0,4]],` +
		`"detect_prob":0.9,"clutter_mean":2,"clutter_density":2e-06,"clutter_min":[-500,-500],"clutter_max":[500,500],"gate_prob":0.99},` +
		`"objects":[{"id":"skiff","mean":[-120,3,40,-1],"cov":[[25,0,0,0],[0,1,0,0],[0,0,25,0],[0,0,0,1]],"appear":0,"disappear":null}]}`
	tests := []struct {
		name, old, new, want string // want "" for a good start
	}{
		{name: "good"},
		// A diagonal matrix's eigenvalues are its diagonal entries; the
		// eigenvalues of [[a, b], [b, a]] are a ± b (closed form, common
		// practice).
		{name: "negative R", old: `"R":[[4,0],[0,4]]`, new: `"R":[[-4,0],[0,4]]`, want: "stdin:1: model.R: not positive definite"},
		{name: "indefinite R", old: `"R":[[4,0],[0,4]]`, new: `"R":[[1,2],[2,1]]`, want: "stdin:1: model.R: not positive definite"},
		{name: "wrong-sized H", old: `"H":[[1,0,0,0],[0,0,1,0]]`, new: `"H":[[1,0,0],[0,0,1]]`, want: "stdin:1: model.H: 2×3"},
		{name: "wrong-sized F", old: `"F":[[1,1,0,0],[0,1,0,0],[0,0,1,1],[0,0,0,1]]`, new: `"F":[[1,1],[0,1]]`, want: "stdin:1: model.F: 2×2"},
		{name: "gate probability 1", old: `"gate_prob":0.99`, new: `"gate_prob":1`, want: "stdin:1: model.gate_prob"},
	}
	defer func(r io.Reader) { referenceInput = r }(referenceInput)
	for _, tt := range tests {
		line := good
		if tt.old != "" {
			if !strings.Contains(good, tt.old) {
				t.Fatalf("%s: %s not in the start line", tt.name, tt.old)
			}
			line = strings.Replace(good, tt.old, tt.new, 1)
		}
		referenceInput = strings.NewReader(line + "\n" + `{"type":"scan","step":0,"time":0,"detections":[]}` + "\n" + `{"type":"stop"}` + "\n")
		var out, errs bytes.Buffer
		code := run([]string{"reference"}, &out, &errs)
		if tt.want == "" {
			if code != exitPass || !strings.HasPrefix(out.String(), `{"type":"ready"`) {
				t.Errorf("%s: exit %d, stdout %q, stderr %q; want exit 0 after ready", tt.name, code, out.String(), errs.String())
			}
			continue
		}
		if code != exitTracker || !strings.HasPrefix(errs.String(), "trackgate reference: "+tt.want) || out.Len() != 0 {
			t.Errorf("%s: exit %d, stdout %q, stderr %q; want exit %d, no output, and %q", tt.name, code, out.String(), errs.String(), exitTracker, tt.want)
		}
	}
}
