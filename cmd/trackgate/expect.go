package main

import (
	"errors"
	"flag"
	"fmt"
	"io"

	"trackgate/harness/scenario"
	"trackgate/harness/sim"
	"trackgate/reference/tracker"
)

func init() {
	register(&command{
		name:    "expect",
		usage:   "expect [-k N] FILE [--run N]",
		summary: "Simulate one run of a scenario and print the reference tracker's record of it, one JSON line per step.",
		run:     runExpect,
	})
}

// runExpect loads the scenario, simulates the run, runs the reference
// tracker over it and writes one JSON line per step (tracker.Detail
// AppendJSON). Exit 0 on success, 2 for usage or scenario errors, 1 when
// the reference itself fails on the run (for example an innovation
// covariance that is not positive definite).
func runExpect(args []string, stdout, stderr io.Writer) int {
	c := commands["expect"]
	fs := newFlags(c, stderr)
	runIndex := fs.Int("run", 0, "the Monte Carlo run to simulate, from 0")
	k := fs.Int("k", tracker.DefaultK, "the number of association hypotheses ranked per scan")
	file, code, ok := parseInterspersed(fs, args)
	if !ok {
		return code
	}
	if *k < 1 {
		fmt.Fprintf(stderr, "trackgate expect: -k %d: want at least 1\n", *k)
		return exitUsage
	}
	spec, err := scenario.Load(file)
	if err != nil {
		var list scenario.ErrorList
		if errors.As(err, &list) {
			for _, e := range list {
				fmt.Fprintln(stderr, e)
			}
		} else {
			fmt.Fprintf(stderr, "%s: %v\n", file, err)
		}
		return exitUsage
	}
	if *runIndex < 0 || *runIndex >= spec.Runs {
		fmt.Fprintf(stderr, "trackgate expect: %s: --run %d: the scenario has runs 0 to %d\n", file, *runIndex, spec.Runs-1)
		return exitUsage
	}
	s, err := sim.Prepare(spec)
	if err != nil {
		fmt.Fprintf(stderr, "trackgate expect: %s: %v\n", file, err)
		return exitUsage
	}
	ex, err := tracker.RunAll(tracker.ConfigFor(spec, *k), s.Run(*runIndex))
	if err != nil {
		fmt.Fprintf(stderr, "trackgate expect: %s: %v\n", file, err)
		return exitFail
	}
	if err := ex.WriteJSONL(stdout); err != nil {
		fmt.Fprintf(stderr, "trackgate expect: writing output: %v\n", err)
		return exitFail
	}
	return exitPass
}

// parseInterspersed parses flags before and after the single FILE argument.
func parseInterspersed(fs *flag.FlagSet, args []string) (file string, code int, ok bool) {
	if code, ok := parseFlags(fs, args); !ok {
		return "", code, false
	}
	rest := fs.Args()
	if len(rest) == 0 {
		fmt.Fprintf(fs.Output(), "trackgate %s: no scenario file given\n", fs.Name())
		fs.Usage()
		return "", exitUsage, false
	}
	file = rest[0]
	if code, ok := parseFlags(fs, rest[1:]); !ok {
		return "", code, false
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(fs.Output(), "trackgate %s: unexpected argument %q after %s\n", fs.Name(), fs.Arg(0), file)
		return "", exitUsage, false
	}
	return file, 0, true
}
