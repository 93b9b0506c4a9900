package main

import (
	"bytes"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"trackgate/harness/config"
	"trackgate/harness/report"
	"trackgate/harness/result"
	"trackgate/harness/runner"
	"trackgate/reference/variant"
	"trackgate/scenarios"
)

func init() {
	register(&command{
		name:  "demo",
		usage: "demo [-o DIR] [-variant NAME] [-runs N] [-j N]",
		summary: "Show the gate at work with no setup: the stock library against the built-in reference tracker " +
			"(which must pass) and against a deliberately faulty one (which must be caught).",
		run: runDemo,
	})
}

// demoHelp follows the flag list of 'trackgate demo -h'.
const demoHelp = `
The demo needs nothing but the trackgate program. The stock scenario
library is built into it (package trackgate/scenarios embeds the files of
scenarios/) and is written to DIR/scenarios/, so the demo runs the same from
any folder. The trackers are this program itself, started as a subprocess
and spoken to over the tracker protocol like any other tracker:

	trackgate reference                   the reference tracker
	trackgate reference -variant NAME     a changed reference (default greedy)

Both are checked against the reference (as 'trackgate check --against
reference' does, float64-port profile, tie margin 1e-9, or the variant's
own where it needs a wider one: tie-flip's is 0.5). The demo prints
both verdicts and writes, into DIR:

	reference.html, reference.json        the reference tracker's report
	variant-NAME.html, variant-NAME.json  the changed tracker's report
	scenarios/                            the scenario files that were run

Exit status: 0 when the demo came out as it should (the reference passes,
a harmful variant is caught, a harmless one passes), 1 when it did not, 2 for
bad usage or a folder that cannot be written, 3 when a tracker faulted.
`

// demoTieMargin is the tie margin of the demo's checks, as in the stock
// project file.
const demoTieMargin = 1e-9

// demoTracker returns the argument vector and extra environment that start
// 'trackgate reference' with the given extra arguments; tests replace it.
var demoTracker = func(extra ...string) ([]string, map[string]string, error) {
	exe, err := os.Executable()
	if err != nil {
		return nil, nil, err
	}
	return append([]string{exe, "reference"}, extra...), nil, nil
}

func runDemo(args []string, stdout, stderr io.Writer) int {
	c := commands["demo"]
	fs := newFlags(c, stderr)
	usage := fs.Usage
	fs.Usage = func() { usage(); fmt.Fprint(stderr, demoHelp) }
	out := fs.String("o", "trackgate-demo", "the folder to write the reports and scenario files into")
	vname := fs.String("variant", "greedy", "the changed tracker to run second; one of "+strings.Join(variant.Names(), ", "))
	runs := fs.Int("runs", 0, "runs per scenario (0: each scenario's own count)")
	workers := fs.Int("j", 0, "runs handled at once (0: one per CPU)")
	if code, ok := parseFlags(fs, args); !ok {
		return code
	}
	fail := func(code int, format string, a ...any) int {
		fmt.Fprintf(stderr, "trackgate demo: "+format+"\n", a...)
		return code
	}
	if fs.NArg() > 0 {
		return fail(exitUsage, "want no arguments, got %q", fs.Args())
	}
	v, ok := variant.Lookup(*vname)
	if !ok {
		return fail(exitUsage, "-variant: unknown variant %q; expected one of %s", *vname, strings.Join(variant.Names(), ", "))
	}
	if *runs < 0 || *workers < 0 {
		return fail(exitUsage, "-runs and -j: expected numbers ≥ 0")
	}
	files, err := writeStock(filepath.Join(*out, "scenarios"))
	if err != nil {
		return fail(exitUsage, "%v", err)
	}

	ctx, cancel := interruptible()
	defer cancel()
	type leg struct {
		title, file string
		extra       []string
		wantPass    bool
		suite       *result.Suite
	}
	legs := []*leg{
		{title: "the reference tracker", file: "reference", wantPass: true},
		{title: fmt.Sprintf("the %s variant (%s)", v.Name, v.Summary), file: "variant-" + v.Name,
			extra: []string{"-variant", v.Name}, wantPass: !v.Harmful},
	}
	fmt.Fprintf(stdout, "trackgate demo: %d stock scenarios, each checked against the reference tracker\n", len(files))
	for i, l := range legs {
		argv, env, err := demoTracker(l.extra...)
		if err != nil {
			return fail(exitUsage, "cannot find the trackgate program to run as the tracker: %v", err)
		}
		opts := runner.Options{
			Config:    config.Config{TieMargin: max(demoTieMargin, v.TieMargin), Tracker: config.Tracker{Env: env}},
			Tracker:   argv,
			Scenarios: files,
			Against:   runner.AgainstReference,
			Runs:      *runs,
			Workers:   *workers,
		}
		want := "expected to pass"
		if !l.wantPass {
			want = "expected to be caught"
		}
		fmt.Fprintf(stdout, "\n== %d. %s: %s\n   tracker: %s\n\n", i+1, l.title, want, strings.Join(argv, " "))
		if l.suite, err = runner.Check(ctx, opts); err != nil {
			return fail(exitUsage, "%v", err)
		}
		topt := report.TerminalOptions{Colour: colourWanted(stdout, os.Getenv), Runs: 1, Diffs: 2}
		if err := report.Terminal(stdout, l.suite, topt); err != nil {
			return fail(exitUsage, "writing the report: %v", err)
		}
		if err := writeDemoReports(l.suite, filepath.Join(*out, l.file)); err != nil {
			return fail(exitUsage, "%v", err)
		}
	}

	fmt.Fprintf(stdout, "\nVerdicts:\n")
	code := exitPass
	for _, l := range legs {
		passed := l.suite.Status == result.Pass || l.suite.Status == result.Tie
		verdict := "as expected"
		switch {
		case l.suite.Status == result.Faulted || l.suite.Status == result.Error:
			verdict = "NOT as expected: the run itself went wrong"
			code = max(code, runner.ExitCode(l.suite.Status))
		case passed != l.wantPass:
			verdict = "NOT as expected"
			code = max(code, exitFail)
		}
		what := "passed"
		if !passed {
			what = "caught"
			if first := firstDivergence(l.suite); first != "" {
				what += " (" + first + ")"
			}
		}
		fmt.Fprintf(stdout, "  %-24s %-5s %s, %s\n", strings.SplitN(l.title, " (", 2)[0], l.suite.Status, what, verdict)
	}
	fmt.Fprintf(stdout, "\nReports: %s and %s (.html for people, .json for machines), scenarios in %s\n",
		filepath.Join(*out, legs[0].file+".html"), filepath.Join(*out, legs[1].file+".html"), filepath.Join(*out, "scenarios"))
	return code
}

// writeStock writes the embedded stock scenarios into dir, each file
// replaced atomically, and returns their paths in name order.
func writeStock(dir string) ([]string, error) {
	names, err := fs.Glob(scenarios.Stock, "*.yaml")
	if err != nil || len(names) == 0 {
		return nil, fmt.Errorf("the built-in scenario library is empty (%v)", err)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	var out []string
	for _, n := range names {
		data, err := fs.ReadFile(scenarios.Stock, n)
		if err != nil {
			return nil, err
		}
		p := filepath.Join(dir, n)
		if err := result.WriteFile(p, data); err != nil {
			return nil, fmt.Errorf("writing the scenario %s: %v", p, err)
		}
		out = append(out, p)
	}
	return out, nil
}

// writeDemoReports writes base.html and base.json for s.
func writeDemoReports(s *result.Suite, base string) error {
	var buf bytes.Buffer
	if err := report.HTML(&buf, s); err != nil {
		return fmt.Errorf("rendering %s.html: %v", base, err)
	}
	if err := result.WriteFile(base+".html", buf.Bytes()); err != nil {
		return fmt.Errorf("writing %s.html: %v", base, err)
	}
	if err := result.Write(base+".json", s); err != nil {
		return fmt.Errorf("writing %s.json: %v", base, err)
	}
	return nil
}

// firstDivergence describes the earliest first divergence of the first
// scenario that failed: "convoy-parallel-trucks run 0, step 1, association".
func firstDivergence(s *result.Suite) string {
	for _, sc := range s.Scenarios {
		for _, r := range sc.Runs {
			var first *result.Divergence
			for _, c := range r.Checks {
				if c.Status == result.Fail && c.First != nil && (first == nil || c.First.Step < first.Step) {
					first = c.First
				}
			}
			if first != nil {
				return fmt.Sprintf("first in %s run %d, step %d, %s", sc.Name, r.Index, first.Step, first.Kind)
			}
		}
	}
	return ""
}
