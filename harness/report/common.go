package report

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"

	"trackgate/harness/result"
)

// counts tallies the runs of a scenario by status.
type counts struct {
	runs, passed, ties, fails, faults, skips, errors int
}

func countRuns(sc *result.Scenario) counts {
	var c counts
	for _, r := range sc.Runs {
		c.runs++
		switch r.Status {
		case result.Pass:
			c.passed++
		case result.Tie:
			c.passed++
			c.ties++
		case result.Skip:
			c.skips++
		case result.Fail:
			c.fails++
		case result.Faulted:
			c.faults++
		default:
			c.errors++
		}
	}
	return c
}

// meanGOSPA returns the scenario's mean GOSPA and whether it is known.
func meanGOSPA(sc *result.Scenario) (float64, bool) {
	if sc.Metrics != nil && sc.Metrics.Runs > 0 {
		return sc.Metrics.MeanGOSPA, true
	}
	sum, n := 0.0, 0
	for _, r := range sc.Runs {
		if r.Metrics != nil && r.Status != result.Faulted {
			sum += r.Metrics.MeanGOSPA
			n++
		}
	}
	if n == 0 {
		return 0, false
	}
	return sum / float64(n), true
}

// splitOf describes a scenario's mean GOSPA split and mean OSPA, and its
// NIS when recorded, in one line for the detail blocks: "mean GOSPA 3.1
// (GOSPAᵖ = localisation 4.2 + missed 3 + false 2.4); mean OSPA 2.9; mean
// NIS 2.1, 93 % of samples in band". It reports false when the summary
// does not record the split (a result written before it was).
func splitOf(sc *result.Scenario) (string, bool) {
	m := sc.Metrics
	if m == nil || m.Runs == 0 || (len(m.GOSPALocalisation) == 0 && len(m.OSPA) == 0) {
		return "", false
	}
	s := fmt.Sprintf("mean GOSPA %s (GOSPAᵖ = localisation %s + missed %s + false %s); mean OSPA %s",
		num(m.MeanGOSPA), num(m.MeanGOSPALocalisation), num(m.MeanGOSPAMissed), num(m.MeanGOSPAFalse), num(m.MeanOSPA))
	if len(m.NIS) > 0 {
		s += fmt.Sprintf("; mean NIS %s, %s of samples and %s of steps in band", num(m.MeanNIS), percent(m.NISSamplesInBand), percent(m.NISInBand))
	}
	return s, true
}

// percent formats a fraction in [0, 1] as a whole percentage ("93 %").
func percent(f float64) string {
	return strconv.FormatFloat(100*f, 'f', 0, 64) + " %"
}

// num formats a float for people: up to 4 significant digits, no exponent
// for ordinary magnitudes.
func num(x float64) string {
	switch {
	case math.IsNaN(x):
		return "NaN"
	case math.IsInf(x, 1):
		return "+Inf"
	case math.IsInf(x, -1):
		return "-Inf"
	}
	a := math.Abs(x)
	if a != 0 && (a < 1e-3 || a >= 1e7) {
		return strconv.FormatFloat(x, 'g', 4, 64)
	}
	s := strconv.FormatFloat(x, 'f', 4, 64)
	// Keep four significant digits at most.
	if a >= 1 {
		digits := len(strconv.FormatFloat(math.Trunc(a), 'f', 0, 64))
		dec := max(0, 4-digits)
		s = strconv.FormatFloat(x, 'f', dec, 64)
	}
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	return s
}

// exact formats a float in the shortest form that reads back to the same
// value: compared values are shown in full.
func exact(x float64) string {
	switch {
	case math.IsNaN(x):
		return "NaN"
	case math.IsInf(x, 1):
		return "+Inf"
	case math.IsInf(x, -1):
		return "-Inf"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// worstDiffs returns up to n diffs, largest excess first (stable for ties).
func worstDiffs(ds []result.Diff, n int) []result.Diff {
	out := append([]result.Diff(nil), ds...)
	sort.SliceStable(out, func(i, j int) bool {
		ei, ej := out[i].Excess, out[j].Excess
		if math.IsNaN(ei) {
			return !math.IsNaN(ej)
		}
		return ei > ej
	})
	if len(out) > n {
		out = out[:n]
	}
	return out
}

// visible makes text from a tracker safe to print: control characters
// other than newline and tab are escaped (\x07), invalid UTF-8 is escaped
// by byte.
func visible(s string) string {
	var b strings.Builder
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
		case r == '\n' || r == '\t':
			b.WriteRune(r)
		case r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0):
			fmt.Fprintf(&b, `\x%02x`, r)
		default:
			b.WriteString(s[i : i+size])
		}
		i += size
	}
	return b.String()
}

// tail returns the last n lines of s, without a trailing empty line, and
// how many lines were left out.
func tail(s string, n int) ([]string, int) {
	s = strings.TrimRight(s, "\n")
	if s == "" {
		return nil, 0
	}
	lines := strings.Split(s, "\n")
	if len(lines) <= n {
		return lines, 0
	}
	return lines[len(lines)-n:], len(lines) - n
}

// divergenceFacts returns the "margin …, probability …" part of a
// divergence, or "".
func divergenceFacts(d *result.Divergence) string {
	var parts []string
	if d.Margin != nil {
		parts = append(parts, "margin "+exact(*d.Margin))
	}
	if d.Probability != nil {
		parts = append(parts, "probability "+exact(*d.Probability))
	}
	return strings.Join(parts, ", ")
}

// statusWord is the upper-case word for a status.
func statusWord(s result.Status) string {
	switch s {
	case result.Faulted:
		return "FAULT"
	case "":
		return "?"
	}
	return strings.ToUpper(string(s))
}

// plural returns "1 tie" or "2 ties".
func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return strconv.Itoa(n) + " " + many
}

// runOK reports whether a run needs no detail in a summary.
func runOK(r *result.Run) bool { return r.Status == result.Pass || r.Status == result.Skip }

// detailRuns returns the first limit runs of sc that did not pass, in
// index order, and how many more there are.
func detailRuns(sc *result.Scenario, limit int) (runs []*result.Run, more int) {
	for i := range sc.Runs {
		if runOK(&sc.Runs[i]) {
			continue
		}
		if len(runs) < limit {
			runs = append(runs, &sc.Runs[i])
		} else {
			more++
		}
	}
	return runs, more
}

// moreRuns is the note for runs left out of the details.
func moreRuns(more int) string {
	return fmt.Sprintf("%s that did not pass not shown; the JSON and HTML reports have them all", plural(more, "more run", "more runs"))
}

// gateBounds describes a gate's confidence bounds after its estimate: "in
// [lo, hi]" for a two-sided interval, "with lower bound lo" for the
// one-sided bound of a paired gate (hi = +Inf), "with upper bound hi" when
// lo = −Inf.
func gateBounds(g result.Gate) string {
	switch {
	case math.IsInf(g.High, 1) && !math.IsInf(g.Low, 0):
		return "with one-sided lower bound " + num(g.Low)
	case math.IsInf(g.Low, -1) && !math.IsInf(g.High, 0):
		return "with one-sided upper bound " + num(g.High)
	}
	return "in [" + num(g.Low) + ", " + num(g.High) + "]"
}
