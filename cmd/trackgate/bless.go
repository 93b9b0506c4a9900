package main

import (
	"fmt"
	"io"

	"trackgate/harness/runner"
)

func init() {
	register(&command{
		name: "bless",
		usage: "bless [--tracker CMD] [--all] [--prune] [--config FILE] [-j N] [--profile NAME] " +
			"[--golden-runs G] [--ci] [SCENARIO...]",
		summary: "Record golden files (scan tapes, reference and tracker output, metrics) for the first runs of each scenario, " +
			"and every run's whole-run metric values (golden/<scenario>/<tracker>/metrics.jsonl).",
		run: runBless,
	})
}

// blessMidWrite is handed to runner.BlessOptions.MidWrite; tests of
// interrupted writes set it.
var blessMidWrite func(path string)

const blessHelp = `
Scan tapes, reference and tracker output and per-step metrics are recorded
for the first runs of each scenario (golden_runs in the project file,
--golden-runs); the tracker's whole-run metric values (mean GOSPA, ID
switches, NEES in band...) are recorded for every run of the scenario, one
line per run, in <golden dir>/<scenario>/<tracker>/metrics.jsonl, the
baseline of the paired gates.

Only goldens that are missing, stale or outside their tolerance are written,
each atomically, unless --all is given; goldens within tolerance keep their
bytes. With CI=true or --ci nothing is written and any golden that would be
is a failure. Orphaned goldens (of scenarios, runs or trackers no longer in
the project) are listed when the scenarios come from the project file, and
removed with --prune.

Exit codes: 0 done; 1 CI mode refused to write; 2 bad usage, configuration
or scenario; 3 the tracker faulted (its goldens for that run are not written).
`

func runBless(args []string, stdout, stderr io.Writer) int {
	c := commands["bless"]
	fs := newFlags(c, stderr)
	usage := fs.Usage
	fs.Usage = func() { usage(); fmt.Fprint(stderr, blessHelp) }
	f := addCommon(fs, false)
	all := fs.Bool("all", false, "rewrite every golden, not only those that fail their tolerance")
	prune := fs.Bool("prune", false, "remove orphaned goldens")
	scenarios, code, ok := parseWithArgs(fs, args)
	if !ok {
		return code
	}
	o, err := f.options(scenarios)
	if err != nil {
		fmt.Fprintf(stderr, "trackgate bless: %v\n", err)
		return exitUsage
	}
	ctx, cancel := interruptible()
	defer cancel()
	rep, err := runner.Bless(ctx, runner.BlessOptions{Options: o, All: *all, Prune: *prune, MidWrite: blessMidWrite})
	if err != nil {
		fmt.Fprintf(stderr, "trackgate bless: %v\n", err)
		return exitUsage
	}
	printBless(stdout, rep)
	for _, p := range rep.Problems {
		fmt.Fprintf(stderr, "trackgate bless: %s\n", p)
	}
	return rep.ExitCode()
}

// printBless writes the summary: counts, then the files that changed.
func printBless(w io.Writer, r *runner.BlessReport) {
	fmt.Fprintf(w, "goldens in %s: %d written, %d new, %d unchanged within tolerance", r.Root, len(r.Written), len(r.New), len(r.Unchanged))
	if len(r.Refused) > 0 {
		fmt.Fprintf(w, ", %d that CI mode refused to write", len(r.Refused))
	}
	fmt.Fprintln(w)
	list := func(title string, paths []string) {
		if len(paths) == 0 {
			return
		}
		fmt.Fprintf(w, "%s:\n", title)
		for _, p := range paths {
			fmt.Fprintf(w, "  %s\n", p)
		}
	}
	list("written (outside tolerance or stale)", r.Written)
	list("new", r.New)
	list("refused (CI mode)", r.Refused)
	if len(r.Orphans) > 0 {
		if r.Pruned {
			list("orphans removed", r.Orphans)
		} else {
			list("orphans (no scenario uses them; remove with --prune)", r.Orphans)
		}
	}
}
