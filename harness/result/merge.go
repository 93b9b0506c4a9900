package result

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
)

// Merge combines the results of the shards of one suite into the result the
// unsharded run would have given.
//
// Every shard must have the same layout version, tool, platform, tracker,
// comparison and recorded gate rules (Suite.Rules, which the merged suite
// keeps), and carry a Shard with the same Total; together the shards
// must cover indices 0..Total-1 exactly once. A suite without Shard counts as
// shard 0 of 1. A scenario may appear in several shards (each holding some
// of its runs); its name, file, hash, dimensions and RunsPlanned must agree.
// Every (scenario, run index) pair must appear exactly once, and when
// RunsPlanned is known every index below it must appear.
//
// The merged suite lists scenarios in the order the shards list them (all
// shards must agree on the relative order of the scenarios they share) and
// each scenario's runs by index; statuses are recomputed as the worst of the
// parts (Worst); Shard is nil.
//
// Scenario summaries (Metrics, Gates) are computed by whoever fills a shard
// over the runs that shard holds. When one shard holds all runs of a
// scenario they are kept as they are. Otherwise the parts' Metrics are
// pooled with run-count weights w_i = n_i/Σn (n_i = Metrics.Runs):
//
//	series and means: m = Σ w_i m_i, step by step over the steps a part has;
//	PositionRMSE:     sqrt(Σ w_i r_i²);
//	counts:           Σ c_i (IDSwitches, FalseTracks).
//
// These equal the whole-run values up to rounding when each part's values
// are averages over its runs. The NEES band depends on the number of runs,
// so NEESLow, NEESHigh, NEESConfidence and NEESInBand are kept only when
// every part gives the same band, and dropped otherwise; the per-step
// bounds (NEESLowByStep, NEESHighByStep) depend on each step's count,
// which the parts' summaries do not carry, and are left out, as are the
// steps of the NEES averages (NEESSteps), which are pooled by position.
// Gates decided on part of the runs cannot be combined: they are dropped,
// and a note in Suite.Notes says so. 'trackgate merge' then judges the scenario summaries
// and gates again from the runs' own values (runner.Judge), which gives the
// unsharded result, with the gate rules the shards recorded.
//
// Merge does not modify its arguments; the merged suite shares runs'
// slices (checks, traces) with them. Errors name the shard (by its
// position among the arguments, and its index) and the scenario and run.
func Merge(suites ...*Suite) (*Suite, error) {
	if len(suites) == 0 {
		return nil, errors.New("merge: no shard results given")
	}
	for i, s := range suites {
		if s == nil {
			return nil, fmt.Errorf("merge: result %d is nil", i+1)
		}
	}
	first := suites[0]
	total := shardOf(first).Total
	if total < 1 {
		return nil, fmt.Errorf("merge: %s: shard total must be at least 1", describe(0, first))
	}
	if total > len(suites) {
		// Checked before anything is sized by total: name the first missing
		// indices, which lie within the first len(suites)+10 numbers.
		held := make(map[int]bool, len(suites))
		for _, s := range suites {
			held[shardOf(s).Index] = true
		}
		var missing []string
		for k := 0; k < total && len(missing) < 10; k++ {
			if !held[k] {
				missing = append(missing, fmt.Sprintf("index %d of %d", k, total))
			}
		}
		more := ""
		if n := total - len(held); n > len(missing) {
			more = fmt.Sprintf(" and %d more", n-len(missing))
		}
		return nil, fmt.Errorf("merge: shards missing: %s%s (%s says there are %d shards, %d results given)", strings.Join(missing, ", "), more, describe(0, first), total, len(suites))
	}
	seen := make([]int, total) // argument position+1 per shard index
	var errs []string
	for i, s := range suites {
		sh := shardOf(s)
		who := describe(i, s)
		switch {
		case s.Version != first.Version:
			errs = append(errs, fmt.Sprintf("%s: layout version %d, the first result has %d", who, s.Version, first.Version))
		case s.Tool != first.Tool:
			errs = append(errs, fmt.Sprintf("%s: produced by %q, the first result by %q", who, s.Tool, first.Tool))
		case s.Platform != first.Platform:
			errs = append(errs, fmt.Sprintf("%s: platform %s, the first result %s", who, platformString(s.Platform), platformString(first.Platform)))
		case !slices.Equal(s.Tracker.Command, first.Tracker.Command) || s.Tracker.Name != first.Tracker.Name || s.Tracker.Version != first.Tracker.Version:
			errs = append(errs, fmt.Sprintf("%s: tracker %s %s (%s), the first result %s %s (%s)", who,
				s.Tracker.Name, s.Tracker.Version, strings.Join(s.Tracker.Command, " "),
				first.Tracker.Name, first.Tracker.Version, strings.Join(first.Tracker.Command, " ")))
		case s.Against != first.Against:
			errs = append(errs, fmt.Sprintf("%s: compared against %q, the first result against %q", who, s.Against, first.Against))
		case !s.Rules.Equal(first.Rules):
			errs = append(errs, fmt.Sprintf("%s: judged with the gates %s, the first result with %s; all shards must run with the same gates", who, s.Rules, first.Rules))
		}
		if sh.Total != total {
			errs = append(errs, fmt.Sprintf("%s: shard total %d, the first result says %d", who, sh.Total, total))
			continue
		}
		if sh.Scenarios != shardOf(first).Scenarios {
			errs = append(errs, fmt.Sprintf("%s: deals whole scenarios %v, the first result %v; all shards must be split the same way", who, sh.Scenarios, shardOf(first).Scenarios))
			continue
		}
		if sh.Index < 0 || sh.Index >= total {
			errs = append(errs, fmt.Sprintf("%s: shard index %d outside 0..%d", who, sh.Index, total-1))
			continue
		}
		if prev := seen[sh.Index]; prev != 0 {
			errs = append(errs, fmt.Sprintf("%s: shard %d/%d given twice (also result %d)", who, sh.Index, total, prev))
			continue
		}
		seen[sh.Index] = i + 1
	}
	var missing []string
	for idx, pos := range seen {
		if pos == 0 {
			missing = append(missing, fmt.Sprint(idx))
		}
	}
	if len(missing) > 0 && len(errs) == 0 {
		errs = append(errs, fmt.Sprintf("shards missing: index %s of %d (0-based)", strings.Join(missing, ", "), total))
	}
	if len(errs) > 0 {
		return nil, mergeError(errs)
	}

	out := &Suite{
		Version:  first.Version,
		Tool:     first.Tool,
		Platform: first.Platform,
		Tracker: Tracker{
			Command: slices.Clone(first.Tracker.Command),
			Name:    first.Tracker.Name, Version: first.Tracker.Version,
		},
		Against: first.Against,
		Status:  Pass,
		Rules:   cloneRules(first.Rules),
	}
	order, err := scenarioOrder(suites)
	if err != nil {
		return nil, err
	}
	for _, name := range order {
		sc, notes, serrs := mergeScenario(name, suites)
		errs = append(errs, serrs...)
		out.Notes = append(out.Notes, notes...)
		out.Scenarios = append(out.Scenarios, sc)
		out.Status = Worst(out.Status, sc.Status)
	}
	for _, s := range suites {
		for _, n := range s.Notes {
			if !slices.Contains(out.Notes, n) {
				out.Notes = append(out.Notes, n)
			}
		}
	}
	if len(order) == 0 {
		for _, s := range suites {
			out.Status = Worst(out.Status, s.Status)
		}
	}
	if len(errs) > 0 {
		return nil, mergeError(errs)
	}
	return out, nil
}

func cloneRules(r *Rules) *Rules {
	if r == nil {
		return nil
	}
	c := &Rules{Gates: make([]GateRule, len(r.Gates))}
	for i, g := range r.Gates {
		c.Gates[i] = g
		if g.Limit != nil {
			l := *g.Limit
			c.Gates[i].Limit = &l
		}
		if g.Paired != nil {
			p := *g.Paired
			c.Gates[i].Paired = &p
		}
	}
	return c
}

func mergeError(errs []string) error {
	if len(errs) == 1 {
		return errors.New("merge: " + errs[0])
	}
	return fmt.Errorf("merge: %d problems:\n  %s", len(errs), strings.Join(errs, "\n  "))
}

func shardOf(s *Suite) Shard {
	if s.Shard == nil {
		return Shard{Index: 0, Total: 1}
	}
	return *s.Shard
}

func describe(i int, s *Suite) string {
	sh := shardOf(s)
	return fmt.Sprintf("result %d (shard %d/%d)", i+1, sh.Index, sh.Total)
}

func platformString(p Platform) string {
	s := p.GoVersion + " " + p.GOOS + "/" + p.GOARCH
	if p.GOAMD64 != "" {
		s += " " + p.GOAMD64
	}
	return s
}

// scenarioOrder returns the scenario names in the order the shards give
// them, checking that no two shards disagree.
func scenarioOrder(suites []*Suite) ([]string, error) {
	var order []string
	pos := map[string]int{}
	for i, s := range suites {
		last := -1
		lastName := ""
		inShard := map[string]bool{}
		for _, sc := range s.Scenarios {
			if inShard[sc.Name] {
				return nil, fmt.Errorf("merge: %s lists scenario %q twice", describe(i, s), sc.Name)
			}
			inShard[sc.Name] = true
			p, ok := pos[sc.Name]
			if !ok {
				// Insert after the previous scenario of this shard.
				p = last + 1
				order = slices.Insert(order, p, sc.Name)
				for n, q := range pos {
					if q >= p {
						pos[n] = q + 1
					}
				}
				pos[sc.Name] = p
			} else if p < last {
				return nil, fmt.Errorf("merge: %s lists scenario %q after %q; an earlier result has them the other way round", describe(i, s), sc.Name, lastName)
			}
			last, lastName = pos[sc.Name], sc.Name
		}
	}
	return order, nil
}

type part struct {
	arg   int
	suite *Suite
	sc    *Scenario
}

func mergeScenario(name string, suites []*Suite) (Scenario, []string, []string) {
	var parts []part
	for i, s := range suites {
		for j := range s.Scenarios {
			if s.Scenarios[j].Name == name {
				parts = append(parts, part{i, s, &s.Scenarios[j]})
			}
		}
	}
	var errs, notes []string
	base := parts[0].sc
	out := Scenario{
		Name: base.Name, File: base.File, Description: base.Description, Hash: base.Hash,
		StateDim: base.StateDim, MeasDim: base.MeasDim, Position: slices.Clone(base.Position),
		RunsPlanned: base.RunsPlanned,
	}
	for _, p := range parts[1:] {
		sc := p.sc
		who := fmt.Sprintf("%s, scenario %q", describe(p.arg, p.suite), name)
		switch {
		case sc.Hash != base.Hash:
			errs = append(errs, fmt.Sprintf("%s: hash %s, %s has %s (scenario file changed between shards?)", who, short(sc.Hash), describe(parts[0].arg, parts[0].suite), short(base.Hash)))
		case sc.File != base.File || sc.StateDim != base.StateDim || sc.MeasDim != base.MeasDim || !slices.Equal(sc.Position, base.Position) || sc.Description != base.Description:
			errs = append(errs, fmt.Sprintf("%s: file, description or dimensions differ from %s", who, describe(parts[0].arg, parts[0].suite)))
		case sc.RunsPlanned != base.RunsPlanned:
			errs = append(errs, fmt.Sprintf("%s: %d runs planned, %s says %d", who, sc.RunsPlanned, describe(parts[0].arg, parts[0].suite), base.RunsPlanned))
		}
	}
	from := map[int]int{} // run index -> argument position+1
	for _, p := range parts {
		for _, r := range p.sc.Runs {
			if prev, dup := from[r.Index]; dup {
				errs = append(errs, fmt.Sprintf("scenario %q run %d appears twice: in %s and %s", name, r.Index, describe(prev-1, suites[prev-1]), describe(p.arg, p.suite)))
				continue
			}
			from[r.Index] = p.arg + 1
			out.Runs = append(out.Runs, r)
		}
	}
	sort.SliceStable(out.Runs, func(i, j int) bool { return out.Runs[i].Index < out.Runs[j].Index })
	if out.RunsPlanned > 0 {
		// Name the first few gaps and count the rest, without a list as
		// long as the runs planned.
		var gaps []string
		more := 0
		for k := 0; k < out.RunsPlanned; k++ {
			if _, ok := from[k]; !ok {
				if len(gaps) < 8 {
					gaps = append(gaps, fmt.Sprint(k))
				} else {
					more++
				}
			}
		}
		if len(gaps) > 0 {
			list := strings.Join(gaps, ", ")
			if more > 0 {
				list += fmt.Sprintf(" and %d more", more)
			}
			errs = append(errs, fmt.Sprintf("scenario %q: run %s of %d planned in no shard", name, list, out.RunsPlanned))
		}
		for _, r := range out.Runs {
			if r.Index < 0 || r.Index >= out.RunsPlanned {
				errs = append(errs, fmt.Sprintf("scenario %q: run index %d outside the %d planned", name, r.Index, out.RunsPlanned))
			}
		}
	}
	if out.Runs == nil && base.Runs != nil {
		out.Runs = []Run{}
	}

	// Status: the worst part that holds runs; parts without runs matter
	// only when no part has any (a scenario that failed to load).
	out.Status = Pass
	withRuns := 0
	for _, p := range parts {
		if len(p.sc.Runs) > 0 {
			withRuns++
		}
	}
	for _, p := range parts {
		if withRuns == 0 || len(p.sc.Runs) > 0 {
			out.Status = Worst(out.Status, p.sc.Status)
		}
	}

	// Summaries.
	var holders []*Scenario
	for _, p := range parts {
		if p.sc.Metrics != nil || len(p.sc.Gates) > 0 {
			holders = append(holders, p.sc)
		}
	}
	switch {
	case len(holders) == 0:
	case len(holders) == 1 && len(holders[0].Runs) == len(out.Runs):
		out.Metrics = cloneMetrics(holders[0].Metrics)
		out.Gates = slices.Clone(holders[0].Gates)
	default:
		var ms []*Metrics
		gates := 0
		for _, h := range holders {
			if h.Metrics != nil {
				ms = append(ms, h.Metrics)
			}
			gates += len(h.Gates)
		}
		var dropped bool
		out.Metrics, dropped = poolMetrics(ms)
		if dropped {
			notes = append(notes, fmt.Sprintf("scenario %q: the shards' NEES bands differ (different run counts); the merged metrics carry no band", name))
		}
		if gates > 0 {
			notes = append(notes, fmt.Sprintf("scenario %q: %d gate decisions made on partial runs in the shards were dropped; evaluate gates on the merged metrics", name, gates))
		}
	}
	return out, notes, errs
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

func cloneMetrics(m *Metrics) *Metrics {
	if m == nil {
		return nil
	}
	c := *m
	c.GOSPA = slices.Clone(m.GOSPA)
	c.NEES = slices.Clone(m.NEES)
	c.NEESSteps = slices.Clone(m.NEESSteps)
	c.NEESLowByStep = slices.Clone(m.NEESLowByStep)
	c.NEESHighByStep = slices.Clone(m.NEESHighByStep)
	return &c
}

// poolMetrics pools per-part metrics with run-count weights (see Merge).
// dropped reports that the parts disagreed on the NEES band.
func poolMetrics(ms []*Metrics) (out *Metrics, dropped bool) {
	if len(ms) == 0 {
		return nil, false
	}
	out = &Metrics{}
	for _, m := range ms {
		out.Runs += m.Runs
	}
	if out.Runs == 0 {
		return out, false
	}
	n := float64(out.Runs)
	var rmse2 float64
	gw := make([]float64, 0) // weight collected per step (parts may differ in length)
	nw := make([]float64, 0)
	for _, m := range ms {
		w := float64(m.Runs) / n
		out.MeanGOSPA += w * m.MeanGOSPA
		rmse2 += w * m.PositionRMSE * m.PositionRMSE
		out.IDSwitches += m.IDSwitches
		out.FalseTracks += m.FalseTracks
		out.GOSPA, gw = accumulate(out.GOSPA, gw, m.GOSPA, float64(m.Runs))
		out.NEES, nw = accumulate(out.NEES, nw, m.NEES, float64(m.Runs))
	}
	for k := range out.GOSPA {
		out.GOSPA[k] /= gw[k]
	}
	for k := range out.NEES {
		out.NEES[k] /= nw[k]
	}
	out.PositionRMSE = math.Sqrt(rmse2)
	same := true
	for _, m := range ms[1:] {
		if m.NEESLow != ms[0].NEESLow || m.NEESHigh != ms[0].NEESHigh || m.NEESConfidence != ms[0].NEESConfidence {
			same = false
		}
	}
	if same {
		out.NEESLow, out.NEESHigh, out.NEESConfidence = ms[0].NEESLow, ms[0].NEESHigh, ms[0].NEESConfidence
		if out.NEESHigh > out.NEESLow && len(out.NEES) > 0 {
			in := 0
			for _, v := range out.NEES {
				if v >= out.NEESLow && v <= out.NEESHigh {
					in++
				}
			}
			out.NEESInBand = float64(in) / float64(len(out.NEES))
		}
	}
	return out, !same && len(out.NEES) > 0
}

// accumulate adds w·xs into sum step by step, growing sum (and the weight
// per step) as needed.
func accumulate(sum, weight, xs []float64, w float64) ([]float64, []float64) {
	for len(sum) < len(xs) {
		sum = append(sum, 0)
		weight = append(weight, 0)
	}
	for k, x := range xs {
		sum[k] += w * x
		weight[k] += w
	}
	return sum, weight
}
