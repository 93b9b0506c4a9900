package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"

	"trackgate/harness/golden"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
)

func init() {
	register(&command{
		name:    "simulate",
		usage:   "simulate FILE [-run N] [-o FILE]",
		summary: "Simulate one Monte Carlo run of a scenario and print its scans and ground truth as JSON lines.",
		run:     runSimulate,
	})
}

// runSimulate loads the scenario, simulates run N (default 0) and writes
// the sim.Write output to stdout or, atomically, to the -o file. Flags may
// come before or after FILE. Every error exits 2.
func runSimulate(args []string, stdout, stderr io.Writer) int {
	c := commands["simulate"]
	fs := newFlags(c, stderr)
	runIdx := fs.Int("run", 0, "the Monte Carlo run to simulate, from 0 to the scenario's runs−1")
	outPath := fs.String("o", "", "write to this file (replaced atomically) instead of stdout")
	files, code, ok := parseWithArgs(fs, args)
	if !ok {
		return code
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "trackgate simulate: "+format+"\n", a...)
		return exitUsage
	}
	if len(files) != 1 {
		fs.Usage()
		return fail("expected one scenario file, got %d", len(files))
	}
	spec, err := scenario.Load(files[0])
	if err != nil {
		var list scenario.ErrorList
		if errors.As(err, &list) {
			for _, e := range list {
				fmt.Fprintln(stderr, e)
			}
			return exitUsage
		}
		return fail("%s: %v", files[0], err)
	}
	if *runIdx < 0 || *runIdx >= spec.Runs {
		return fail("-run: expected a run from 0 to %d (the scenario has %d runs), got %d", spec.Runs-1, spec.Runs, *runIdx)
	}
	s, err := sim.Prepare(spec)
	if err != nil {
		return fail("%v", err)
	}
	var buf bytes.Buffer
	if err := sim.Write(&buf, sim.Record{Scenario: spec.Name, Hash: spec.Hash, Run: s.Run(*runIdx)}); err != nil {
		return fail("%s: %v", files[0], err)
	}
	if *outPath == "" {
		if _, err := stdout.Write(buf.Bytes()); err != nil {
			return fail("writing the output: %v", err)
		}
		return exitPass
	}
	// golden.WriteFile writes a temporary file, syncs it, renames it over
	// the target and syncs the folder, so readers see the old file or the
	// whole new one.
	write := func(w io.Writer) error { _, err := w.Write(buf.Bytes()); return err }
	if err := golden.WriteFile(*outPath, write); err != nil {
		return fail("-o: %v", err)
	}
	return exitPass
}
