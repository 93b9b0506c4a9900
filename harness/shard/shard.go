package shard

import (
	"fmt"
	"hash/fnv"
	"strconv"
	"strings"

	"trackgate/harness/result"
)

// Spec is one shard: Index in 0..Total-1.
type Spec struct {
	Index, Total int
	// Scenarios deals whole scenarios instead of single runs: every run of
	// a scenario goes to the shard of its run 0. Shards are then less even,
	// but each holds all runs of its scenarios, so it can judge the
	// scenarios' statistical gates itself. Written "K/N:scenarios".
	Scenarios bool
}

// All is the spec of an unsharded run.
var All = Spec{Index: 0, Total: 1}

// String writes the spec 0-based, as "0/4".
func (s Spec) String() string {
	if s.Scenarios {
		return fmt.Sprintf("%d/%d:scenarios (0-based)", s.Index, s.Total)
	}
	return fmt.Sprintf("%d/%d (0-based)", s.Index, s.Total)
}

// Valid reports whether 0 ≤ Index < Total.
func (s Spec) Valid() bool { return s.Total >= 1 && s.Index >= 0 && s.Index < s.Total }

// Holds reports whether run of scenario name belongs to this shard.
func (s Spec) Holds(name string, run int) bool {
	if s.Scenarios {
		run = 0
	}
	return Of(name, run, s.Total) == s.Index
}

// Result returns the result.Shard for the spec, nil for an unsharded run.
func (s Spec) Result() *result.Shard {
	if s.Total <= 1 {
		return nil
	}
	return &result.Shard{Index: s.Index, Total: s.Total, Scenarios: s.Scenarios}
}

// Of returns the 0-based shard of run of scenario name among total shards
// (see the package documentation). It panics if total < 1 or run < 0.
func Of(name string, run, total int) int {
	if total < 1 || run < 0 {
		panic(fmt.Sprintf("shard: Of(%q, %d, %d): need run ≥ 0 and total ≥ 1", name, run, total))
	}
	h := fnv.New64a()
	h.Write([]byte(name))
	return int((h.Sum64()%uint64(total) + uint64(run)%uint64(total)) % uint64(total))
}

// Parse reads "K/N" where K is counted from base (0 or 1): with base 1,
// "1/4" is the first of four shards. "K/N:scenarios" deals whole scenarios
// (Spec.Scenarios). Surrounding spaces are allowed.
func Parse(text string, base int) (Spec, error) {
	if base != 0 && base != 1 {
		return Spec{}, fmt.Errorf("shard base %d: want 0 or 1", base)
	}
	body, unit, hasUnit := strings.Cut(strings.TrimSpace(text), ":")
	whole := false
	if hasUnit {
		if strings.TrimSpace(unit) != "scenarios" {
			return Spec{}, fmt.Errorf("shard %q: after the colon only \"scenarios\" is known (deal whole scenarios)", text)
		}
		whole = true
	}
	ks, ns, ok := strings.Cut(strings.TrimSpace(body), "/")
	if !ok {
		return Spec{}, fmt.Errorf("shard %q: want K/N, such as %d/4", text, base)
	}
	k, err1 := strconv.Atoi(strings.TrimSpace(ks))
	n, err2 := strconv.Atoi(strings.TrimSpace(ns))
	if err1 != nil || err2 != nil {
		return Spec{}, fmt.Errorf("shard %q: K and N must be whole numbers", text)
	}
	if n < 1 {
		return Spec{}, fmt.Errorf("shard %q: the number of shards must be at least 1", text)
	}
	if k < base || k > n-1+base {
		return Spec{}, fmt.Errorf("shard %q: with base %d, K runs from %d to %d", text, base, base, n-1+base)
	}
	return Spec{Index: k - base, Total: n, Scenarios: whole}, nil
}

// System describes where a CI system puts the shard coordinates.
type System struct {
	Name     string // as given to FromEnv
	IndexVar string
	TotalVar string // "" when the system does not set it
	Base     int
}

// Systems lists the CI systems FromEnv knows.
var Systems = []System{
	{Name: "gitlab", IndexVar: "CI_NODE_INDEX", TotalVar: "CI_NODE_TOTAL", Base: 1},
	{Name: "circleci", IndexVar: "CIRCLE_NODE_INDEX", TotalVar: "CIRCLE_NODE_TOTAL", Base: 0},
	{Name: "buildkite", IndexVar: "BUILDKITE_PARALLEL_JOB", TotalVar: "BUILDKITE_PARALLEL_JOB_COUNT", Base: 0},
	{Name: "kubernetes", IndexVar: "JOB_COMPLETION_INDEX", Base: 0},
}

// FromEnv reads the shard of the named CI system (see Systems) through
// getenv. total is used when the system does not set a total (Kubernetes)
// and must match it when it does; 0 means "take it from the environment".
// GitHub Actions sets no variables: pass strategy.job-index and
// strategy.job-total to Parse with base 0.
func FromEnv(system string, total int, getenv func(string) string) (Spec, error) {
	var sys *System
	for i := range Systems {
		if Systems[i].Name == system {
			sys = &Systems[i]
		}
	}
	if sys == nil {
		names := make([]string, len(Systems))
		for i, s := range Systems {
			names[i] = s.Name
		}
		return Spec{}, fmt.Errorf("shard: unknown CI system %q; known: %s (for GitHub Actions pass the matrix job index with base 0)", system, strings.Join(names, ", "))
	}
	idx := getenv(sys.IndexVar)
	if idx == "" {
		return Spec{}, fmt.Errorf("shard: %s: %s is not set", system, sys.IndexVar)
	}
	tot := ""
	if sys.TotalVar != "" {
		tot = getenv(sys.TotalVar)
	}
	switch {
	case tot == "" && total == 0:
		return Spec{}, fmt.Errorf("shard: %s: the number of shards is not known: set %s or give it explicitly", system, orVar(sys.TotalVar))
	case tot == "":
		tot = strconv.Itoa(total)
	case total != 0 && tot != strconv.Itoa(total):
		return Spec{}, fmt.Errorf("shard: %s: %s=%s but %d shards were given", system, sys.TotalVar, tot, total)
	}
	spec, err := Parse(idx+"/"+tot, sys.Base)
	if err != nil {
		return Spec{}, fmt.Errorf("shard: %s (%s=%s, base %d): %w", system, sys.IndexVar, idx, sys.Base, err)
	}
	return spec, nil
}

func orVar(v string) string {
	if v == "" {
		return "the total"
	}
	return v
}

// Select returns the part of a full (unsharded) suite that shard spec would
// have produced: every scenario, in order, holding only its runs of this
// shard. Scenario statuses become the worst of the runs held (a scenario
// with no runs at all keeps its status); Metrics and Gates are kept only for
// scenarios whose runs all fall in the shard, since they summarise all runs.
// The suite's status is recomputed and Shard set. full is not modified.
func Select(full *result.Suite, spec Spec) *result.Suite {
	out := *full
	out.Shard = spec.Result()
	out.Scenarios = make([]result.Scenario, 0, len(full.Scenarios))
	out.Status = result.Pass
	for _, sc := range full.Scenarios {
		part := sc
		part.Runs = []result.Run{}
		for _, r := range sc.Runs {
			if spec.Holds(sc.Name, r.Index) {
				part.Runs = append(part.Runs, r)
			}
		}
		if len(sc.Runs) > 0 {
			part.Status = result.Pass
			for _, r := range part.Runs {
				part.Status = result.Worst(part.Status, r.Status)
			}
			if len(part.Runs) != len(sc.Runs) {
				part.Metrics, part.Gates = nil, nil
			} else {
				for _, g := range sc.Gates {
					part.Status = result.Worst(part.Status, g.Status)
				}
			}
		}
		out.Scenarios = append(out.Scenarios, part)
		out.Status = result.Worst(out.Status, part.Status)
	}
	return &out
}
