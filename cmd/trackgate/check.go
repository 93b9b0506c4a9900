package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime"
	"syscall"

	"trackgate/harness/config"
	"trackgate/harness/report"
	"trackgate/harness/result"
	"trackgate/harness/runner"
	"trackgate/harness/shard"
)

func init() {
	register(&command{
		name: "check",
		usage: "check [--tracker CMD] [--against reference|golden|both] [--config FILE] [--runs N] [-j N] " +
			"[--shard K/N --shard-base 0|1] [--profile NAME] [--out DIR] [--ci] [--json FILE] [--junit FILE] " +
			"[--markdown FILE] [--html FILE] [--timing] [--quiet] [SCENARIO...]",
		summary: "Run the tracker on the scenarios and gate it against the reference tracker and the golden files.",
		run:     runCheck,
	})
}

// checkHelp is printed after the flags by 'check -h', with
// runner.RunsPerProcess and runner.MaxRuns filled in.
const checkHelp = `
The tracker is the --tracker command line, split into words as a POSIX shell
would (blanks separate words; single quotes keep everything literal; inside
double quotes a backslash escapes only a double quote, a backslash, a dollar
sign or a backquote; outside quotes a backslash escapes the next character),
with no shell run and no variable or glob expansion; without --tracker it is
tracker.command of the project file. Without SCENARIO arguments the
project file's scenario globs are used.

Results are the same, byte for byte, for the same inputs: --timing is the
one option that records times (each run's share of the tracker phase, in
"seconds" of the JSON result and the JUnit report), so leave it off where
results are compared or cached. On a terminal a progress line (runs done of
all, elapsed time) is kept on standard error while the tracker runs; it is
never part of any report, and --quiet turns it off.

A tracker that says it can serve many runs (many_runs) gets a process of
its own for each chunk of %d consecutive runs of a scenario, whatever -j
and whether progress is shown, so a tracker that carries state from one
run to the next is judged the same way every time.

Exit codes: 0 pass (ties allowed); 1 a regression was found; 2 bad usage
or configuration (nothing ran), or, with no tracker fault, a scenario that
does not load, a stale golden or a check trackgate could not make; 3 the
tracker itself faulted on some run (a fault outranks a regression and an
error). --runs is at most %d.
`

// commonFlags are the flags check and bless share.
type commonFlags struct {
	tracker, against, configFile, shardText, profile, out, name *string
	runs, jobs, shardBase, goldenRuns                           *int
	ci                                                          *bool
	cutoff                                                      *float64
}

func addCommon(fs *flag.FlagSet, withAgainst bool) *commonFlags {
	f := &commonFlags{}
	f.tracker = fs.String("tracker", "", "the tracker's command line, split like a shell would (default: tracker.command of the project file)")
	if withAgainst {
		f.against = fs.String("against", "both", "compare with the reference, the golden files, or both")
	}
	f.configFile = fs.String("config", config.FileName, "the project file; a missing file means the defaults")
	f.runs = fs.Int("runs", 0, fmt.Sprintf("replace every scenario's run count, at most %d (0: the scenario's own)", runner.MaxRuns))
	f.jobs = fs.Int("j", runtime.NumCPU(), "runs handled at once (results do not depend on it)")
	f.shardText = fs.String("shard", "", "run only shard K of N, written K/N")
	f.shardBase = fs.Int("shard-base", -1, "the number of the first shard in --shard: 0 or 1 (required with --shard; never guessed)")
	f.profile = fs.String("profile", "", "tolerance profile instead of the project's: bit-exact, float64-port or float32-port")
	f.out = fs.String("out", "", "folder for the actual output of failing golden comparisons")
	f.name = fs.String("name", "", "the tracker's golden folder name (default: tracker.name of the project file)")
	f.goldenRuns = fs.Int("golden-runs", 0, fmt.Sprintf("leading runs of each scenario that have golden files (0: golden_runs of the project file, else %d)", runner.DefaultGoldenRuns))
	f.ci = fs.Bool("ci", false, "CI mode: never write into the golden folder, and a missing golden fails (also when CI=true)")
	f.cutoff = fs.Float64("cutoff", 0, fmt.Sprintf("GOSPA, OSPA and track pairing cut-off, metres (0: metrics.cutoff of the project file, else %g)", runner.DefaultCutoff))
	return f
}

// options turns the flags into runner options; a returned error is a
// usage error.
func (f *commonFlags) options(scenarios []string) (runner.Options, error) {
	var o runner.Options
	cfg, err := config.Load(*f.configFile)
	if err != nil {
		return o, err
	}
	o.Config = cfg
	if *f.tracker != "" {
		argv, err := runner.SplitCommand(*f.tracker)
		if err != nil {
			return o, fmt.Errorf("--tracker: %v", err)
		}
		if len(argv) == 0 {
			return o, errors.New("--tracker: expected a command, got an empty line")
		}
		if argv[0] == "" {
			return o, fmt.Errorf("--tracker: expected a program name as the first word, got an empty word in %q", *f.tracker)
		}
		o.Tracker = argv
	}
	if f.against != nil {
		o.Against = runner.Against(*f.against)
	}
	if *f.runs < 0 || *f.runs > runner.MaxRuns {
		return o, fmt.Errorf("--runs: expected a number of runs from 1 to %d (or 0 for each scenario's own), got %d", runner.MaxRuns, *f.runs)
	}
	o.Runs = *f.runs
	if *f.jobs < 1 {
		return o, fmt.Errorf("-j: expected at least 1, got %d", *f.jobs)
	}
	o.Workers = *f.jobs
	if *f.shardText != "" {
		switch *f.shardBase {
		case 0, 1:
		case -1:
			return o, fmt.Errorf("--shard needs --shard-base 0 or 1: CI systems number shards from 0 (GitHub Actions job index, CircleCI, Buildkite, Kubernetes completion index) or from 1 (GitLab CI_NODE_INDEX), and trackgate does not guess")
		default:
			return o, fmt.Errorf("--shard-base: expected 0 or 1, got %d", *f.shardBase)
		}
		sp, err := shard.Parse(*f.shardText, *f.shardBase)
		if err != nil {
			return o, fmt.Errorf("--shard: %v", err)
		}
		o.Shard = sp
	}
	if *f.goldenRuns < 0 {
		return o, fmt.Errorf("--golden-runs: expected at least 1 (or 0 for the project's), got %d", *f.goldenRuns)
	}
	if *f.cutoff < 0 {
		return o, fmt.Errorf("--cutoff: expected a positive number of metres (or 0 for the project's), got %g", *f.cutoff)
	}
	o.GoldenRuns = *f.goldenRuns
	o.Profile, o.Out, o.TrackerName, o.CI, o.Cutoff = *f.profile, *f.out, *f.name, *f.ci, *f.cutoff
	if len(scenarios) > 0 {
		o.Scenarios = scenarios
	}
	return o, nil
}

// interruptible returns a context cancelled by SIGINT or SIGTERM, so that
// the trackers are ended cleanly.
func interruptible() (context.Context, context.CancelFunc) {
	return signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
}

func runCheck(args []string, stdout, stderr io.Writer) int {
	c := commands["check"]
	fs := newFlags(c, stderr)
	usage := fs.Usage
	fs.Usage = func() { usage(); fmt.Fprintf(stderr, checkHelp, runner.RunsPerProcess, runner.MaxRuns) }
	f := addCommon(fs, true)
	jsonOut := fs.String("json", "", "write the result as JSON to this file")
	junitOut := fs.String("junit", "", "write a JUnit XML report to this file")
	mdOut := fs.String("markdown", "", "write a Markdown summary to this file")
	htmlOut := fs.String("html", "", "write an HTML report with plots to this file")
	timing := fs.Bool("timing", false, "print where the time went (tracker versus harness) to standard error and record each run's tracker time in the result (which then differs from run to run)")
	quiet := fs.Bool("quiet", false, "no progress line on standard error")
	scenarios, code, ok := parseWithArgs(fs, args)
	if !ok {
		return code
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "trackgate check: "+format+"\n", a...)
		return exitUsage
	}
	o, err := f.options(scenarios)
	if err != nil {
		return fail("%v", err)
	}
	o.Timing = *timing
	var line *runner.ProgressLine
	if !*quiet && runner.IsTerminal(stderr) {
		line = runner.NewProgressLine(stderr, nil)
		o.Progress = line.Update
	}
	ctx, cancel := interruptible()
	defer cancel()
	suite, tm, err := runner.CheckTimed(ctx, o)
	line.Finish()
	if err != nil {
		return fail("%v", err)
	}
	if err := report.Terminal(stdout, suite, report.TerminalOptions{Colour: colourWanted(stdout, os.Getenv)}); err != nil {
		return fail("writing the report: %v", err)
	}
	if *timing {
		fmt.Fprintf(stderr, "trackgate check: %.2f s in all: %.2f s running the tracker (driver and protocol), %.2f s in the harness\n",
			tm.Total.Seconds(), tm.Tracker.Seconds(), tm.Harness.Seconds())
	}
	if err := writeReports(suite, *jsonOut, *junitOut, *mdOut, *htmlOut); err != nil {
		return fail("%v", err)
	}
	return runner.ExitCode(suite.Status)
}

// writeReports renders the suite into every requested file, each replaced
// atomically.
func writeReports(s *result.Suite, jsonFile, junitFile, mdFile, htmlFile string) error {
	if jsonFile != "" {
		if err := result.Write(jsonFile, s); err != nil {
			return fmt.Errorf("--json: %v", err)
		}
	}
	render := []struct {
		flag, file string
		draw       func(io.Writer) error
	}{
		{"--junit", junitFile, func(w io.Writer) error { return report.JUnit(w, s) }},
		{"--markdown", mdFile, func(w io.Writer) error { return report.Markdown(w, s, report.MarkdownOptions{}) }},
		{"--html", htmlFile, func(w io.Writer) error { return report.HTML(w, s) }},
	}
	for _, r := range render {
		if r.file == "" {
			continue
		}
		var buf bytes.Buffer
		if err := r.draw(&buf); err != nil {
			return fmt.Errorf("%s: %v", r.flag, err)
		}
		if err := result.WriteFile(r.file, buf.Bytes()); err != nil {
			return fmt.Errorf("%s: %v", r.flag, err)
		}
	}
	return nil
}
