package report

import (
	"bufio"
	"fmt"
	"io"
	"strings"

	"trackgate/harness/result"
)

// TerminalOptions adjust Terminal. The zero value gives plain text with
// the default limits.
type TerminalOptions struct {
	// Colour enables ANSI colour sequences.
	Colour bool
	// Diffs is how many of the worst differences to show per check
	// (0 means 5).
	Diffs int
	// StderrLines is how many trailing lines of a tracker's stderr to show
	// (0 means 8).
	StderrLines int
	// Runs is how many runs that did not pass are detailed per scenario
	// (0 means 3); a line counts the others.
	Runs int
}

// The palette: one colour per status, chosen to stay legible on dark and
// light backgrounds.
var palette = map[result.Status]string{
	result.Pass:    "\x1b[32m",   // green
	result.Tie:     "\x1b[36m",   // cyan
	result.Skip:    "\x1b[2m",    // dim
	result.Fail:    "\x1b[1;31m", // bold red
	result.Faulted: "\x1b[1;35m", // bold magenta
	result.Error:   "\x1b[1;33m", // bold yellow
}

const (
	ansiReset = "\x1b[0m"
	ansiBold  = "\x1b[1m"
	ansiDim   = "\x1b[2m"
)

type term struct {
	w   *bufio.Writer
	opt TerminalOptions
}

func (t *term) paint(code, s string) string {
	if !t.opt.Colour || code == "" {
		return s
	}
	return code + s + ansiReset
}

func (t *term) status(s result.Status, width int) string {
	return t.paint(palette[s], fmt.Sprintf("%-*s", width, statusWord(s)))
}

func (t *term) printf(format string, args ...any) { fmt.Fprintf(t.w, format, args...) }

// Terminal writes the human summary of s to w (see the package
// documentation).
func Terminal(w io.Writer, s *result.Suite, opt TerminalOptions) error {
	if opt.Diffs <= 0 {
		opt.Diffs = 5
	}
	if opt.StderrLines <= 0 {
		opt.StderrLines = 8
	}
	if opt.Runs <= 0 {
		opt.Runs = 3
	}
	t := &term{w: bufio.NewWriter(w), opt: opt}
	nameWidth := 8
	for _, sc := range s.Scenarios {
		nameWidth = max(nameWidth, len(sc.Name))
	}
	for _, sc := range s.Scenarios {
		c := countRuns(&sc)
		extra := ""
		if g, ok := meanGOSPA(&sc); ok {
			extra = "mean GOSPA " + num(g)
		}
		if c.ties > 0 {
			extra += "  " + plural(c.ties, "tie", "ties")
		}
		t.printf("%s %-*s  %3d/%-3d runs  %s\n", t.status(sc.Status, 5), nameWidth, sc.Name, c.passed, c.runs, strings.TrimSpace(extra))
	}
	for i := range s.Scenarios {
		t.details(&s.Scenarios[i])
	}
	t.printf("\n%s %s", t.paint(ansiBold, "trackgate:"), t.status(s.Status, 0))
	total, passed := 0, 0
	for _, sc := range s.Scenarios {
		c := countRuns(&sc)
		total += c.runs
		passed += c.passed
	}
	t.printf(" — %d of %d runs passed in %s", passed, total, plural(len(s.Scenarios), "scenario", "scenarios"))
	if s.Tracker.Name != "" {
		t.printf("; %s %s against %s", s.Tracker.Name, s.Tracker.Version, s.Against)
	}
	if s.Shard != nil {
		t.printf("; shard %d of %d (0-based)", s.Shard.Index, s.Shard.Total)
	}
	t.printf("\n")
	for _, n := range s.Notes {
		t.printf("note: %s\n", visible(n))
	}
	return t.w.Flush()
}

func (t *term) details(sc *result.Scenario) {
	runs, more := detailRuns(sc, t.opt.Runs)
	for _, r := range runs {
		t.printf("\n%s run %d (seed %d): %s\n", t.paint(ansiBold, sc.Name), r.Index, r.Seed, t.status(r.Status, 0))
		for ci := range r.Checks {
			c := &r.Checks[ci]
			if c.Status == result.Pass || c.Status == result.Skip {
				continue
			}
			t.printf("  %s %s", c.Name, t.status(c.Status, 0))
			if c.Message != "" {
				t.printf(": %s", visible(c.Message))
			}
			t.printf("\n")
			if d := c.First; d != nil {
				t.divergence("first divergence", d)
			}
			if len(c.Diffs) > 0 {
				shown := worstDiffs(c.Diffs, t.opt.Diffs)
				all := len(c.Diffs) + c.Truncated
				t.printf("    worst differences (%d of %d):\n", len(shown), all)
				for _, d := range shown {
					t.printf("      %s: want %s, got %s; tolerance %s, excess %s\n",
						visible(d.Path), exact(d.Want), exact(d.Got), visible(d.Tolerance), num(d.Excess))
				}
			}
			for ti := range c.Ties {
				t.divergence("tie", &c.Ties[ti])
			}
		}
		if f := r.Fault; f != nil {
			t.printf("  %s %s at step %d, tracker output line %d: %s\n", t.paint(palette[result.Faulted], "fault"), visible(f.Class), f.Step, f.Line, visible(f.Message))
			if f.Excerpt != "" {
				t.printf("    output: %s\n", visible(f.Excerpt))
			}
			lines, cut := tail(f.Stderr, t.opt.StderrLines)
			if len(lines) > 0 {
				head := "stderr"
				if cut > 0 {
					head = fmt.Sprintf("stderr (last %d lines, %d before)", len(lines), cut)
				}
				t.printf("    %s:\n", head)
				for _, l := range lines {
					t.printf("      %s %s\n", t.paint(ansiDim, "|"), visible(l))
				}
			}
		}
	}
	if more > 0 {
		t.printf("\n%s: %s\n", t.paint(ansiBold, sc.Name), moreRuns(more))
	}
	if sc.Status != result.Pass && sc.Status != result.Tie {
		if line, ok := splitOf(sc); ok {
			t.printf("\n%s metrics: %s\n", t.paint(ansiBold, sc.Name), line)
		}
	}
	for _, g := range sc.Gates {
		if g.Status == result.Pass || g.Status == result.Tie {
			continue
		}
		t.printf("\n%s gate %s %s: %s (estimate %s %s, threshold %s)\n", t.paint(ansiBold, sc.Name), g.Name,
			t.status(g.Status, 0), visible(g.Message), num(g.Estimate), gateBounds(g), num(g.Threshold))
	}
	if len(sc.Runs) == 0 && sc.Status != result.Pass {
		t.printf("\n%s: %s, no runs\n", t.paint(ansiBold, sc.Name), t.status(sc.Status, 0))
	}
}

func (t *term) divergence(label string, d *result.Divergence) {
	t.printf("    %s at step %d (%s)", label, d.Step, visible(d.Kind))
	if len(d.Objects) > 0 {
		t.printf(", objects %s", visible(strings.Join(d.Objects, ", ")))
	}
	if f := divergenceFacts(d); f != "" {
		t.printf("; %s", f)
	}
	t.printf("\n      %s\n", visible(d.Message))
}
