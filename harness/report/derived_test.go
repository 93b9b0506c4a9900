package report_test

import (
	"bytes"
	"fmt"
	"strings"
	"testing"

	"trackgate/harness/report"
	"trackgate/harness/result"
	"trackgate/harness/result/sample"
)

// The golden files in testdata are change detectors only: they were written
// by the renderers (-update) and reviewed by eye, so they catch any change
// but cannot tell a right report from a wrong one. The tests in this file
// derive what each report must say from the input suite itself, with small
// counters written here from the package documentation, so a renderer that
// miscounts, drops a case or misstates a status fails even after -update.

// varied is the sample suite plus the statuses it lacks: a scenario whose
// checks were skipped or could not run, and a scenario that never ran.
func varied() *result.Suite {
	s := sample.Suite()
	s.Scenarios = append(s.Scenarios,
		result.Scenario{Name: "yard_pallet_shuffle", File: "scenarios/yard_pallet_shuffle.yaml", Status: result.Error,
			Runs: []result.Run{
				{Index: 0, Seed: 71, Status: result.Skip, Checks: []result.Check{
					{Name: "reference", Status: result.Pass},
					{Name: "golden", Status: result.Skip, Message: "no blessed run for this tracker"}}},
				{Index: 1, Seed: 72, Status: result.Error, Checks: []result.Check{
					{Name: "reference", Status: result.Error, Message: "golden header names another scenario hash"}}},
				{Index: 2, Seed: 73, Status: result.Fail, Checks: []result.Check{
					{Name: "reference", Status: result.Fail, First: &result.Divergence{Step: 7, Kind: "track-count", Objects: []string{"pallet-4", "pallet-9"}, Message: "tracker holds 3 tracks, reference 2"}}}},
			},
			Gates: []result.Gate{{Name: "nees-in-band", Status: result.Skip, Message: "too few runs for a gate"}},
		},
		result.Scenario{Name: "quay_crane_idle", File: "scenarios/quay_crane_idle.yaml", Status: result.Error},
	)
	s.Status = result.Error
	return s
}

// suites are the inputs of the derived checks.
func suites() map[string]*result.Suite {
	return map[string]*result.Suite{"sample": sample.Suite(), "varied": varied(), "hostile": hostile()}
}

// word is the status word every format shows, spelled out here from the
// package documentation rather than taken from the renderer.
func word(s result.Status) string {
	return map[result.Status]string{
		result.Pass: "PASS", result.Tie: "TIE", result.Skip: "SKIP",
		result.Fail: "FAIL", result.Faulted: "FAULT", result.Error: "ERROR",
	}[s]
}

// tally counts a scenario's runs that passed (a tie is a pass with a
// remark) and the runs held.
func tally(sc *result.Scenario) (passed, total int) {
	for _, r := range sc.Runs {
		if r.Status == result.Pass || r.Status == result.Tie {
			passed++
		}
	}
	return passed, len(sc.Runs)
}

// junitCounts is [tests, failures, errors, skipped].
type junitCounts [4]int

// add counts one test case whose outcome is the status st.
func (c *junitCounts) add(st result.Status) {
	c[0]++
	switch st {
	case result.Pass, result.Tie:
	case result.Fail:
		c[1]++
	case result.Skip:
		c[3]++
	default: // a fault or a check trackgate could not run
		c[2]++
	}
}

// expectJUnit counts the test cases of one scenario from the suite: one
// per check of each run, one more for a run whose fault or own status no
// check carries (a run with no checks, a fault without a faulted check),
// one per gate, and one for a scenario with neither runs nor gates.
func expectJUnit(sc *result.Scenario) junitCounts {
	var c junitCounts
	for _, r := range sc.Runs {
		carried := false
		for _, ch := range r.Checks {
			c.add(ch.Status)
			carried = carried || ch.Status == result.Faulted
		}
		faulty := r.Fault != nil || r.Status == result.Faulted || r.Status == result.Error
		if !carried && (faulty || len(r.Checks) == 0) {
			if r.Fault != nil {
				c.add(result.Faulted)
			} else {
				c.add(r.Status)
			}
		}
	}
	for _, g := range sc.Gates {
		c.add(g.Status)
	}
	if len(sc.Runs) == 0 && len(sc.Gates) == 0 {
		c.add(sc.Status)
	}
	return c
}

func TestJUnitMatchesSuite(t *testing.T) {
	for name, s := range suites() {
		t.Run(name, func(t *testing.T) {
			doc := parseJUnit(t, render(t, func(b *bytes.Buffer) error { return report.JUnit(b, s) }))
			if len(doc.Suites) != len(s.Scenarios) {
				t.Fatalf("%d testsuites, want one per scenario (%d)", len(doc.Suites), len(s.Scenarios))
			}
			var total junitCounts
			for i := range s.Scenarios {
				sc := &s.Scenarios[i]
				xs := doc.Suites[i]
				want := expectJUnit(sc)
				if got := (junitCounts{xs.Tests, xs.Failures, xs.Errors, xs.Skipped}); got != want {
					t.Errorf("testsuite %q: tests/failures/errors/skipped = %v, the suite says %v", sc.Name, got, want)
				}
				for k := range total {
					total[k] += want[k]
				}
				cases := map[string]int{}
				for ci, tc := range xs.Cases {
					cases[tc.Name] = ci
				}
				for _, r := range sc.Runs {
					for _, ch := range r.Checks {
						key := fmt.Sprintf("run %d/%s", r.Index, ch.Name)
						ci, ok := cases[key]
						if !ok {
							t.Errorf("%s: no test case %q", sc.Name, key)
							continue
						}
						tc := xs.Cases[ci]
						switch ch.Status {
						case result.Fail:
							if tc.Failure == nil {
								t.Errorf("%s %s: failing check has no <failure>", sc.Name, key)
								continue
							}
							if d := ch.First; d != nil {
								if !strings.Contains(tc.Failure.Message, d.Message) || !strings.Contains(tc.Failure.Message, fmt.Sprint(d.Step)) {
									t.Errorf("%s %s: <failure message=%q> lacks the first divergence (step %d: %q)", sc.Name, key, tc.Failure.Message, d.Step, d.Message)
								}
								for _, obj := range d.Objects {
									if !strings.Contains(tc.Failure.Body, obj) {
										t.Errorf("%s %s: <failure> body lacks object %q of the first divergence", sc.Name, key, obj)
									}
								}
							}
						case result.Faulted, result.Error:
							if tc.Error == nil {
								t.Errorf("%s %s: %s check has no <error>", sc.Name, key, ch.Status)
							}
						case result.Skip:
							if tc.Skipped == nil {
								t.Errorf("%s %s: skipped check has no <skipped>", sc.Name, key)
							}
						default:
							if tc.Failure != nil || tc.Error != nil || tc.Skipped != nil {
								t.Errorf("%s %s: %s check reported as a problem", sc.Name, key, ch.Status)
							}
						}
					}
				}
				for _, g := range sc.Gates {
					ci, ok := cases["gate/"+g.Name]
					if !ok {
						t.Errorf("%s: no test case for gate %q", sc.Name, g.Name)
						continue
					}
					if failed := xs.Cases[ci].Failure != nil; failed != (g.Status == result.Fail) {
						t.Errorf("%s gate %s (%s): <failure> present = %v", sc.Name, g.Name, g.Status, failed)
					}
				}
			}
			if got := (junitCounts{doc.Tests, doc.Failures, doc.Errors, doc.Skipped}); got != total {
				t.Errorf("testsuites totals %v, the suite says %v", got, total)
			}
		})
	}
}

// markdownRows returns the cells of the scenario table's body rows.
func markdownRows(t *testing.T, text string) [][]string {
	t.Helper()
	_, after, ok := strings.Cut(text, "| Status | Scenario | Runs passed |")
	if !ok {
		t.Fatalf("no scenario table in:\n%s", text)
	}
	lines := strings.Split(after, "\n")[2:] // the rest of the header line, the alignment row
	var rows [][]string
	for _, l := range lines {
		if !strings.HasPrefix(l, "| ") {
			break
		}
		rows = append(rows, strings.Split(strings.TrimSuffix(strings.TrimPrefix(l, "| "), " |"), " | "))
	}
	return rows
}

func TestMarkdownMatchesSuite(t *testing.T) {
	for name, s := range map[string]*result.Suite{"sample": sample.Suite(), "varied": varied()} {
		t.Run(name, func(t *testing.T) {
			text := string(render(t, func(b *bytes.Buffer) error {
				return report.Markdown(b, s, report.MarkdownOptions{Runs: 100})
			}))
			rows := markdownRows(t, text)
			if len(rows) != len(s.Scenarios) {
				t.Fatalf("table has %d rows, want one per scenario (%d):\n%s", len(rows), len(s.Scenarios), text)
			}
			allPassed, allRuns := 0, 0
			for i := range s.Scenarios {
				sc := &s.Scenarios[i]
				row := rows[i]
				if len(row) < 3 {
					t.Errorf("row %d = %q, want at least status, scenario and runs", i, row)
					continue
				}
				passed, total := tally(sc)
				allPassed += passed
				allRuns += total
				if got := strings.Trim(row[0], "*"); got != word(sc.Status) {
					t.Errorf("row %d (%s): status %q, want %q", i, sc.Name, got, word(sc.Status))
				}
				if row[1] != "`"+sc.Name+"`" {
					t.Errorf("row %d: scenario cell %q, want %q", i, row[1], "`"+sc.Name+"`")
				}
				if want := fmt.Sprintf("%d/%d", passed, total); row[2] != want {
					t.Errorf("row %d (%s): runs passed %q, want %q", i, sc.Name, row[2], want)
				}
			}
			head := fmt.Sprintf("### trackgate: %s — %d of %d runs passed", word(s.Status), allPassed, allRuns)
			if !strings.HasPrefix(text, head) {
				t.Errorf("markdown starts %.60q, want %q", text, head)
			}
			for _, sc := range s.Scenarios {
				for _, r := range sc.Runs {
					for _, ch := range r.Checks {
						if ch.Status == result.Fail && ch.First != nil && !strings.Contains(text, ch.First.Message) {
							t.Errorf("%s run %d %s: first divergence %q not in the markdown", sc.Name, r.Index, ch.Name, ch.First.Message)
						}
					}
				}
			}
		})
	}
}

// runBlock returns the terminal detail block of one run: from its header
// line up to the next blank line.
func runBlock(text string, sc *result.Scenario, r *result.Run) (string, bool) {
	head := fmt.Sprintf("\n%s run %d (seed %d): %s\n", sc.Name, r.Index, r.Seed, word(r.Status))
	i := strings.Index(text, head)
	if i < 0 {
		return "", false
	}
	block := text[i+len(head):]
	if j := strings.Index(block, "\n\n"); j >= 0 {
		block = block[:j+1]
	}
	return block, true
}

func TestTerminalMatchesSuite(t *testing.T) {
	for name, s := range map[string]*result.Suite{"sample": sample.Suite(), "varied": varied()} {
		t.Run(name, func(t *testing.T) {
			text := string(render(t, func(b *bytes.Buffer) error {
				return report.Terminal(b, s, report.TerminalOptions{Runs: 100, Diffs: 100})
			}))
			lines := strings.Split(text, "\n")
			if len(lines) < len(s.Scenarios) {
				t.Fatalf("%d lines, want at least one verdict line per scenario", len(lines))
			}
			allPassed, allRuns := 0, 0
			for i := range s.Scenarios {
				sc := &s.Scenarios[i]
				passed, total := tally(sc)
				allPassed += passed
				allRuns += total
				f := strings.Fields(lines[i])
				want := []string{word(sc.Status), sc.Name, fmt.Sprintf("%d/%d", passed, total), "runs"}
				if len(f) < len(want) || strings.Join(f[:len(want)], " ") != strings.Join(want, " ") {
					t.Errorf("verdict line %d = %q, want it to begin with the words %q", i, lines[i], want)
				}
			}
			if n := len(s.Scenarios); lines[n] != "" {
				t.Errorf("line %d = %q after %d verdict lines, want a blank line (one verdict line per scenario)", n, lines[n], n)
			}
			end := fmt.Sprintf("trackgate: %s — %d of %d runs passed in %d scenarios", word(s.Status), allPassed, allRuns, len(s.Scenarios))
			if !strings.Contains(text, "\n"+end) {
				t.Errorf("terminal output lacks the closing line %q", end)
			}
			for _, sc := range s.Scenarios {
				for _, r := range sc.Runs {
					block, ok := runBlock(text, &sc, &r)
					if r.Status == result.Pass || r.Status == result.Skip {
						if ok {
							t.Errorf("%s run %d passed but is detailed", sc.Name, r.Index)
						}
						continue
					}
					if !ok {
						t.Errorf("%s run %d (%s): no detail block headed with its seed and status", sc.Name, r.Index, r.Status)
						continue
					}
					for _, ch := range r.Checks {
						if ch.Status == result.Pass || ch.Status == result.Skip {
							continue
						}
						if !strings.Contains(block, fmt.Sprintf("  %s %s", ch.Name, word(ch.Status))) {
							t.Errorf("%s run %d: check %s (%s) not listed with its status in:\n%s", sc.Name, r.Index, ch.Name, ch.Status, block)
						}
						d := ch.First
						if d == nil {
							continue
						}
						facts := fmt.Sprintf("first divergence at step %d (%s)", d.Step, d.Kind)
						at := strings.Index(block, facts)
						if at < 0 {
							t.Errorf("%s run %d %s: %q missing from:\n%s", sc.Name, r.Index, ch.Name, facts, block)
							continue
						}
						line, rest, _ := strings.Cut(block[at:], "\n")
						for _, obj := range d.Objects {
							if !strings.Contains(line, obj) {
								t.Errorf("%s run %d %s: divergence line %q lacks object %q", sc.Name, r.Index, ch.Name, line, obj)
							}
						}
						if msg, _, _ := strings.Cut(rest, "\n"); strings.TrimSpace(msg) != d.Message {
							t.Errorf("%s run %d %s: line after the divergence = %q, want its message %q", sc.Name, r.Index, ch.Name, msg, d.Message)
						}
					}
					if f := r.Fault; f != nil && !strings.Contains(block, fmt.Sprintf("fault %s at step %d", f.Class, f.Step)) {
						t.Errorf("%s run %d: fault %s at step %d not shown in:\n%s", sc.Name, r.Index, f.Class, f.Step, block)
					}
				}
			}
		})
	}
}
