package report

import (
	"fmt"
	"io"
	"strings"

	"trackgate/harness/result"
)

// MarkdownOptions adjust Markdown.
type MarkdownOptions struct {
	// Limit is the most bytes to write (0 means DefaultMarkdownLimit).
	// Whole sections are dropped to fit, with a note saying how many.
	Limit int
	// Runs is how many runs that did not pass are detailed per scenario
	// (0 means 3); a line counts the others.
	Runs int
}

// DefaultMarkdownLimit keeps the summary inside a GitHub review comment
// (65536 characters) with room to spare; a job summary allows 1 MiB per
// step.
const DefaultMarkdownLimit = 60000

// Markdown writes a GitHub-flavoured Markdown summary of s to w (see the
// package documentation). It writes nothing and returns an error when
// opt.Limit cannot hold even the summary's title line.
func Markdown(w io.Writer, s *result.Suite, opt MarkdownOptions) error {
	limit := opt.Limit
	if limit <= 0 {
		limit = DefaultMarkdownLimit
	}
	const reserve = 200 // room for the truncation note
	var head strings.Builder
	total, passed := 0, 0
	for _, sc := range s.Scenarios {
		c := countRuns(&sc)
		total += c.runs
		passed += c.passed
	}
	fmt.Fprintf(&head, "### trackgate: %s — %d of %d runs passed\n\n", statusWord(s.Status), passed, total)
	line := fmt.Sprintf("Tracker %s %s, compared against %s, on %s", cell(s.Tracker.Name), cell(s.Tracker.Version), cell(s.Against), cell(platform(s.Platform)))
	if s.Shard != nil {
		line += fmt.Sprintf(", shard %d of %d (0-based)", s.Shard.Index, s.Shard.Total)
	}
	head.WriteString(line + ".\n\n")
	for _, n := range s.Notes {
		head.WriteString("> **Note:** " + cell(n) + "\n\n")
	}
	head.WriteString("| Status | Scenario | Runs passed | Mean GOSPA | GOSPAᵖ localisation / missed / false | Mean OSPA | Remarks |\n|---|---|---:|---:|---:|---:|---|\n")
	var rows []string
	for _, sc := range s.Scenarios {
		c := countRuns(&sc)
		g, parts, ospa := "–", "–", "–"
		if v, ok := meanGOSPA(&sc); ok {
			g = num(v)
		}
		if _, ok := splitOf(&sc); ok {
			m := sc.Metrics
			parts = num(m.MeanGOSPALocalisation) + " / " + num(m.MeanGOSPAMissed) + " / " + num(m.MeanGOSPAFalse)
			ospa = num(m.MeanOSPA)
		}
		var remarks []string
		if c.ties > 0 {
			remarks = append(remarks, plural(c.ties, "tie", "ties"))
		}
		if c.fails > 0 {
			remarks = append(remarks, plural(c.fails, "failing run", "failing runs"))
		}
		if c.faults > 0 {
			remarks = append(remarks, plural(c.faults, "tracker fault", "tracker faults"))
		}
		for _, gt := range sc.Gates {
			if gt.Status == result.Fail || gt.Status == result.Error {
				remarks = append(remarks, "gate "+cell(gt.Name)+" "+string(gt.Status))
			}
		}
		rows = append(rows, fmt.Sprintf("| %s | `%s` | %d/%d | %s | %s | %s | %s |\n", statusCell(sc.Status), code(sc.Name), c.passed, c.runs, g, parts, ospa, strings.Join(remarks, ", ")))
	}
	var sections []string
	for i := range s.Scenarios {
		sections = append(sections, markdownFailures(&s.Scenarios[i], opt.Runs)...)
	}

	var out strings.Builder
	out.WriteString(head.String())
	droppedRows := 0
	for i, r := range rows {
		if out.Len()+len(r)+reserve > limit {
			droppedRows = len(rows) - i
			break
		}
		out.WriteString(r)
	}
	if droppedRows > 0 {
		fmt.Fprintf(&out, "\n_%d more scenarios not shown: the summary is limited to %d bytes. Render the full report with `trackgate report --format html`._\n", droppedRows, limit)
		sections = nil
	}
	if len(sections) > 0 {
		out.WriteString("\n#### What did not pass\n")
	}
	for i, sec := range sections {
		if out.Len()+len(sec)+reserve > limit {
			fmt.Fprintf(&out, "\n_%d more sections not shown: the summary is limited to %d bytes. Render the full report with `trackgate report --format html`._\n", len(sections)-i, limit)
			break
		}
		out.WriteString(sec)
	}
	text := out.String()
	if len(text) > limit {
		// Only an enormous header (notes, names) gets here: cut at a line.
		note := fmt.Sprintf("\n_Cut to %d bytes._\n", limit)
		keep := max(0, limit-len(note))
		cut := strings.LastIndexByte(text[:keep], '\n')
		if cut <= 0 {
			// Not even the title line fits: say so rather than write
			// nothing.
			// The note names the limit, so its length depends on it.
			title := strings.IndexByte(text, '\n') + 1
			need := title + len(note)
			for title+len(fmt.Sprintf("\n_Cut to %d bytes._\n", need)) > need {
				need = title + len(fmt.Sprintf("\n_Cut to %d bytes._\n", need))
			}
			return fmt.Errorf("markdown: a limit of %d bytes cannot hold the summary's title line and the cut note; give at least %d", limit, need)
		}
		text = strings.ToValidUTF8(text[:cut], "") + note
	}
	_, err := io.WriteString(w, text)
	return err
}

func statusCell(s result.Status) string {
	switch s {
	case result.Pass, result.Tie, result.Skip:
		return statusWord(s)
	}
	return "**" + statusWord(s) + "**"
}

// cell makes text safe inside a Markdown table cell or line: no line
// breaks, pipes escaped, HTML-significant characters as entities, control
// characters escaped.
func cell(s string) string {
	s = visible(s)
	r := strings.NewReplacer("\n", " ", "\t", " ", "|", `\|`, "&", "&amp;", "<", "&lt;", ">", "&gt;", "`", "'", "*", `\*`, "_", `\_`, "[", `\[`, "]", `\]`)
	return r.Replace(s)
}

// code makes text safe inside a single-backtick code span in a table.
func code(s string) string {
	return strings.NewReplacer("`", "'", "|", `\|`, "\n", " ").Replace(visible(s))
}

// fence returns a code fence longer than any run of backticks in body.
func fence(body string) string {
	longest, run := 0, 0
	for _, r := range body {
		if r == '`' {
			run++
			longest = max(longest, run)
		} else {
			run = 0
		}
	}
	return strings.Repeat("`", max(3, longest+1))
}

func markdownFailures(sc *result.Scenario, limit int) []string {
	if limit <= 0 {
		limit = 3
	}
	var out []string
	runs, more := detailRuns(sc, limit)
	for _, r := range runs {
		var b strings.Builder
		fmt.Fprintf(&b, "\n**`%s` run %d** (seed %d): %s\n\n", code(sc.Name), r.Index, r.Seed, statusWord(r.Status))
		for ci := range r.Checks {
			c := &r.Checks[ci]
			if c.Status == result.Pass || c.Status == result.Skip {
				continue
			}
			fmt.Fprintf(&b, "- %s check: %s", cell(c.Name), statusWord(c.Status))
			if c.Message != "" {
				b.WriteString(" — " + cell(c.Message))
			}
			b.WriteString("\n")
			if d := c.First; d != nil {
				b.WriteString("  - " + mdDivergence("first divergence", d) + "\n")
			}
			for ti := range c.Ties {
				b.WriteString("  - " + mdDivergence("tie", &c.Ties[ti]) + "\n")
			}
			if len(c.Diffs) > 0 {
				shown := worstDiffs(c.Diffs, 5)
				fmt.Fprintf(&b, "\n  | Value (%d of %d worst) | Want | Got | Tolerance | Excess |\n  |---|---:|---:|---|---:|\n", len(shown), len(c.Diffs)+c.Truncated)
				for _, d := range shown {
					fmt.Fprintf(&b, "  | %s | %s | %s | %s | %s |\n", cell(d.Path), exact(d.Want), exact(d.Got), cell(d.Tolerance), num(d.Excess))
				}
				b.WriteString("\n")
			}
		}
		if f := r.Fault; f != nil {
			fmt.Fprintf(&b, "- tracker fault **%s** at step %d, output line %d: %s\n", cell(f.Class), f.Step, f.Line, cell(f.Message))
			lines, cut := tail(f.Stderr, 8)
			if f.Excerpt != "" || len(lines) > 0 {
				body := ""
				if f.Excerpt != "" {
					body += "output: " + visible(f.Excerpt) + "\n"
				}
				if len(lines) > 0 {
					if cut > 0 {
						body += fmt.Sprintf("stderr (last %d lines, %d before):\n", len(lines), cut)
					} else {
						body += "stderr:\n"
					}
					body += visible(strings.Join(lines, "\n")) + "\n"
				}
				fn := fence(body)
				b.WriteString("\n" + fn + "text\n" + body + fn + "\n")
			}
		}
		out = append(out, b.String())
	}
	if more > 0 {
		out = append(out, fmt.Sprintf("\n_`%s`: %s._\n", code(sc.Name), moreRuns(more)))
	}
	for _, g := range sc.Gates {
		if g.Status == result.Fail || g.Status == result.Error {
			out = append(out, fmt.Sprintf("\n**`%s` gate %s**: %s — %s (estimate %s %s, threshold %s)\n",
				code(sc.Name), cell(g.Name), statusWord(g.Status), cell(g.Message), num(g.Estimate), gateBounds(g), num(g.Threshold)))
		}
	}
	return out
}

func mdDivergence(label string, d *result.Divergence) string {
	s := fmt.Sprintf("%s at step %d (%s)", label, d.Step, cell(d.Kind))
	if len(d.Objects) > 0 {
		s += ", objects " + cell(strings.Join(d.Objects, ", "))
	}
	if f := divergenceFacts(d); f != "" {
		s += "; " + f
	}
	return s + ": " + cell(d.Message)
}
