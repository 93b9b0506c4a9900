package main

import (
	"fmt"
	"io"
	"os"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/reference/tracker"
)

func init() {
	register(&command{
		name:  "reference",
		usage: "reference [-k N]",
		summary: "Serve the reference tracker over the tracker protocol on standard input and output " +
			"(the built-in tracker; see harness/PROTOCOL.md).",
		run: runReference,
	})
}

// referenceVersion is reported in the ready reply; raise it when the
// reference tracker's output changes.
const referenceVersion = "1"

// referenceInput is the protocol input of the reference command; tests
// replace it.
var referenceInput io.Reader = os.Stdin

// runReference serves runs until its input ends. Exit 0 at the end of
// input, 2 for bad flags, 3 when the input breaks the protocol or the
// reference fails on a run.
func runReference(args []string, stdout, stderr io.Writer) int {
	c := commands["reference"]
	fs := newFlags(c, stderr)
	k := fs.Int("k", tracker.DefaultK, "the number of association hypotheses ranked per scan")
	if code, ok := parseFlags(fs, args); !ok {
		return code
	}
	if fs.NArg() > 0 || *k < 1 {
		fmt.Fprintf(stderr, "trackgate reference: want no arguments and -k ≥ 1\n")
		return exitUsage
	}
	ready := protocol.Ready{Name: "trackgate-reference", Version: referenceVersion,
		Covariance: true, Association: true, ManyRuns: true}
	err := protocol.Serve(referenceInput, stdout, ready, func(s protocol.Start) (protocol.StepFunc, error) {
		t := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects, K: *k})
		return func(scan mot.Scan) (mot.Frame, error) {
			f, _, err := t.Step(scan)
			return f, err
		}, nil
	})
	if err != nil {
		fmt.Fprintf(stderr, "trackgate reference: %v\n", err)
		return exitTracker
	}
	return exitPass
}
