package main

import (
	"fmt"
	"io"
	"os"
	"strings"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/reference/tracker"
	"trackgate/reference/variant"
)

func init() {
	register(&command{
		name:  "reference",
		usage: "reference [-k N] [-variant NAME]",
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
// input, 2 for bad flags, 3 when the input breaks the protocol, a start
// message fails protocol.Start.Validate (refused before the ready reply,
// with the line and field named), or the reference fails on a run.
func runReference(args []string, stdout, stderr io.Writer) int {
	c := commands["reference"]
	fs := newFlags(c, stderr)
	k := fs.Int("k", tracker.DefaultK, "the number of association hypotheses ranked per scan")
	vname := fs.String("variant", "", "serve a deliberately changed reference instead, one of:\n"+strings.Join(variant.Names(), ", ")+
		"\n(the test bench of the gate itself; see reference/variant)")
	if code, ok := parseFlags(fs, args); !ok {
		return code
	}
	if fs.NArg() > 0 || *k < 1 {
		fmt.Fprintf(stderr, "trackgate reference: want no arguments and -k ≥ 1\n")
		return exitUsage
	}
	ready := protocol.Ready{Name: "trackgate-reference", Version: referenceVersion,
		Covariance: true, Association: true, ManyRuns: true}
	if *vname != "" {
		v, ok := variant.Lookup(*vname)
		if !ok {
			fmt.Fprintf(stderr, "trackgate reference: -variant: unknown variant %q; expected one of %s\n", *vname, strings.Join(variant.Names(), ", "))
			return exitUsage
		}
		ready.Name = "trackgate-reference-" + v.Name
		return serveReference(stdout, stderr, ready, func(s protocol.Start) (protocol.StepFunc, error) {
			return protocol.StepFunc(v.New(tracker.Config{Model: s.Model, Objects: s.Objects, K: *k})), nil
		})
	}
	return serveReference(stdout, stderr, ready, func(s protocol.Start) (protocol.StepFunc, error) {
		t := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects, K: *k})
		return func(scan mot.Scan) (mot.Frame, error) {
			f, _, err := t.Step(scan)
			return f, err
		}, nil
	})
}

// serveReference serves begin's runs on referenceInput and returns the exit
// code.
func serveReference(stdout, stderr io.Writer, ready protocol.Ready, begin func(protocol.Start) (protocol.StepFunc, error)) int {
	err := protocol.Serve(referenceInput, stdout, ready, begin)
	if err != nil {
		fmt.Fprintf(stderr, "trackgate reference: %v\n", err)
		return exitTracker
	}
	return exitPass
}
