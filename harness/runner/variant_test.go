package runner

import (
	"fmt"
	"os"
	"slices"
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/reference/tracker"
)

// variantEnv makes the test binary serve a variant of the reference
// tracker over the protocol when it is started as a tracker by the tests
// (the test binary re-exec pattern).
const variantEnv = "TRACKGATE_RUNNER_VARIANT"

func TestMain(m *testing.M) {
	if v := os.Getenv(variantEnv); v != "" {
		os.Exit(serveVariant(v))
	}
	os.Exit(m.Run())
}

// variantOptions returns options that run the test binary as the named
// tracker variant on the given scenario files, with CI mode off whatever
// the environment says.
func variantOptions(variant string, files ...string) Options {
	var o Options
	o.Tracker = []string{os.Args[0]}
	o.Config.Tracker.Env = map[string]string{variantEnv: variant, "GORACE": "atexit_sleep_ms=0"}
	o.Scenarios = files
	o.Getenv = func(string) string { return "" }
	o.Workers = 2
	return o
}

// serveVariant serves the reference tracker, changed as the variant says:
//
//	reference   unchanged
//	relabel     tracks renamed, listed in reverse order, and the scan's
//	            detections handed to the reference in reverse order
//	nocov       no covariances and no associations reported
//	swap        from step 5 the names of the first two tracks are swapped
//	nudge       at step 7 the first track's first mean component moves 1e-3
//	drop        at step 4 the last track is left out
//	crash       exits with status 7 on the scan of step 3
//	flip        the detections of every scan handed over in reverse order
//	nocov-flip  flip, reporting neither covariances nor associations
func serveVariant(variant string) int {
	ready := protocol.Ready{Name: "variant-" + variant, Version: "1", Covariance: true, Association: true, ManyRuns: true}
	if variant == "nocov" || variant == "nocov-flip" {
		ready.Covariance, ready.Association = false, false
	}
	err := protocol.Serve(os.Stdin, os.Stdout, ready, func(s protocol.Start) (protocol.StepFunc, error) {
		ref := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects})
		return func(scan mot.Scan) (mot.Frame, error) {
			if variant == "relabel" || variant == "flip" || variant == "nocov-flip" {
				scan.Detections = slices.Clone(scan.Detections)
				slices.Reverse(scan.Detections)
			}
			f, _, err := ref.Step(scan)
			if err != nil {
				return f, err
			}
			// The frame may share memory with the reference's own state.
			f.Tracks = slices.Clone(f.Tracks)
			switch variant {
			case "relabel":
				for i := range f.Tracks {
					f.Tracks[i].Track = "trk-" + reverse(f.Tracks[i].Track)
				}
				slices.Reverse(f.Tracks)
			case "nocov", "nocov-flip":
				for i := range f.Tracks {
					f.Tracks[i].Cov = mot.Mat{}
					f.Tracks[i].HasDetection, f.Tracks[i].Detection = false, mot.NoDetection
				}
			case "swap":
				if scan.Step >= 5 && len(f.Tracks) >= 2 {
					f.Tracks[0].Track, f.Tracks[1].Track = f.Tracks[1].Track, f.Tracks[0].Track
				}
			case "nudge":
				if scan.Step == 7 && len(f.Tracks) > 0 {
					f.Tracks[0].Mean = slices.Clone(f.Tracks[0].Mean)
					f.Tracks[0].Mean[0] += 1e-3
				}
			case "drop":
				if scan.Step == 4 && len(f.Tracks) > 0 {
					f.Tracks = f.Tracks[:len(f.Tracks)-1]
				}
			case "crash":
				if scan.Step == 3 {
					fmt.Fprintln(os.Stderr, "variant crash: giving up at step 3")
					os.Exit(7)
				}
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

func reverse(s string) string {
	r := []rune(s)
	slices.Reverse(r)
	return string(r)
}
