package main

import (
	"fmt"
	"io"

	"trackgate/harness/config"
	"trackgate/harness/runner"
)

func init() {
	register(&command{
		name:    "explain",
		usage:   "explain FILE --run N --step K [--tracker CMD] [--config FILE] [--profile NAME]",
		summary: "Show one step as the reference sees it: predictions, detections, gated costs, best hypotheses and margin, and what the tracker did there.",
		run:     runExplain,
	})
}

func runExplain(args []string, stdout, stderr io.Writer) int {
	c := commands["explain"]
	fs := newFlags(c, stderr)
	runIndex := fs.Int("run", 0, "the Monte Carlo run, from 0")
	step := fs.Int("step", 0, "the step, from 0")
	trackerLine := fs.String("tracker", "", "also run this tracker (a command line split like a shell would) and show where it departs")
	configFile := fs.String("config", config.FileName, "the project file (tolerances, ambiguity threshold); a missing file means the defaults")
	profile := fs.String("profile", "", "tolerance profile instead of the project's")
	cutoff := fs.Float64("cutoff", 0, fmt.Sprintf("track pairing cut-off, metres (0: metrics.cutoff of the project file, else %g)", runner.DefaultCutoff))
	files, code, ok := parseWithArgs(fs, args)
	if !ok {
		return code
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "trackgate explain: "+format+"\n", a...)
		return exitUsage
	}
	if *cutoff < 0 {
		return fail("--cutoff: expected a positive number of metres (or 0 for the project's), got %g", *cutoff)
	}
	if len(files) != 1 {
		return fail("expected one scenario file, got %d", len(files))
	}
	cfg, err := config.Load(*configFile)
	if err != nil {
		return fail("%v", err)
	}
	o := runner.ExplainOptions{File: files[0], Run: *runIndex, Step: *step}
	o.Config, o.Profile, o.Cutoff, o.Workers = cfg, *profile, *cutoff, 1
	if *trackerLine != "" {
		argv, err := runner.SplitCommand(*trackerLine)
		if err != nil {
			return fail("--tracker: %v", err)
		}
		if len(argv) == 0 || argv[0] == "" {
			return fail("--tracker: expected a command line whose first word names a program, got %q", *trackerLine)
		}
		o.Tracker = argv
	}
	ctx, cancel := interruptible()
	defer cancel()
	if err := runner.Explain(ctx, o, stdout); err != nil {
		return fail("%v", err)
	}
	return exitPass
}
