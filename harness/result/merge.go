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
// scenario they are kept as they are (copied). Otherwise the parts'
// Metrics are pooled with run-count weights w_i = n_i/Σn (n_i =
// Metrics.Runs):
//
//	series:           m[k] = Σ w_i m_i[k] / Σ w_i, the sums over the parts
//	                  that have step k (GOSPA, NEES, the GOSPA split
//	                  GOSPALocalisation, GOSPAMissed, GOSPAFalse, OSPA, NIS);
//	means:            m = Σ w_i m_i (MeanGOSPA; MeanGOSPALocalisation,
//	                  MeanGOSPAMissed, MeanGOSPAFalse, MeanOSPA, MeanNIS and
//	                  NISSamplesInBand over the parts that carry the
//	                  series they summarise, weights renormalised);
//	PositionRMSE:     sqrt(Σ w_i r_i²);
//	Objects:          per object, sqrt(Σ s_i r_i² / Σ s_i) for position
//	                  and velocity with s_i the part's Steps for the
//	                  object, Steps = Σ s_i (by run counts n_i instead
//	                  when a part gives the object no Steps);
//	counts:           Σ c_i (IDSwitches, FalseTracks).
//
// These equal the whole-run values up to rounding when each part's values
// are averages over its runs (GOSPA and its split, OSPA, their means,
// PositionRMSE) or over step counts it records (Objects). The NEES and
// NIS averages and MeanNIS and NISSamplesInBand are averages over samples,
// whose counts the summaries do not carry: weighting them by runs is exact
// when every run gives the same number of samples (at each step, for the
// series), as when every run's tracks are matched alike. The NIS averages
// are pooled by step when every part names their steps (NISSteps, then
// the union of the parts' steps), by position otherwise.
//
// What depends on per-step sample counts cannot be pooled and is dropped:
// the per-step bands NEESLowByStep, NEESHighByStep, NISLowByStep and
// NISHighByStep, and with them NISConfidence and NISInBand (a note in
// Suite.Notes says so when a part carried them); so are the steps of the
// NEES averages (NEESSteps), which are pooled by position. The single NEES
// band depends on the number of samples averaged, which pooling changes, so
// NEESLow, NEESHigh, NEESConfidence and NEESInBand are dropped too, with a
// note.
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
		var drop pooled
		out.Metrics, drop = poolMetrics(ms)
		if drop.neesBand {
			notes = append(notes, fmt.Sprintf("scenario %q: a NEES band holds for the sample count it was computed for, not for the pooled average; the merged metrics carry no band", name))
		}
		if drop.stepBands {
			notes = append(notes, fmt.Sprintf("scenario %q: the per-step NEES and NIS bands depend on each step's sample count, which the shards' summaries do not carry; the merged metrics carry none", name))
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
	c.GOSPALocalisation = slices.Clone(m.GOSPALocalisation)
	c.GOSPAMissed = slices.Clone(m.GOSPAMissed)
	c.GOSPAFalse = slices.Clone(m.GOSPAFalse)
	c.OSPA = slices.Clone(m.OSPA)
	c.Objects = slices.Clone(m.Objects)
	c.NIS = slices.Clone(m.NIS)
	c.NISSteps = slices.Clone(m.NISSteps)
	c.NISLowByStep = slices.Clone(m.NISLowByStep)
	c.NISHighByStep = slices.Clone(m.NISHighByStep)
	return &c
}

// pooled says what poolMetrics had to leave out.
type pooled struct {
	// neesBand: the parts carried a single NEES band, which does not hold
	// for the pooled average.
	neesBand bool
	// stepBands: some part carried per-step NEES or NIS bands (or a NIS
	// band judgement), which depend on per-step sample counts the parts
	// do not carry.
	stepBands bool
}

// poolMetrics pools per-part metrics with run-count weights (see Merge).
func poolMetrics(ms []*Metrics) (out *Metrics, drop pooled) {
	if len(ms) == 0 {
		return nil, drop
	}
	out = &Metrics{}
	for _, m := range ms {
		out.Runs += m.Runs
		if len(m.NEESLowByStep) > 0 || len(m.NEESHighByStep) > 0 || len(m.NISLowByStep) > 0 ||
			len(m.NISHighByStep) > 0 || m.NISConfidence != 0 || m.NISInBand != 0 {
			drop.stepBands = true
		}
	}
	if out.Runs == 0 {
		return out, drop
	}
	n := float64(out.Runs)
	var rmse2 float64
	gw := make([]float64, 0) // weight collected per step (parts may differ in length)
	nw := make([]float64, 0)
	var lw, mw, fw, ow []float64
	// The GOSPA split, OSPA and NIS means are pooled over the parts that
	// carry the series they average (all of them, in results of one
	// layout), so that a part without them does not pull them to zero.
	var splitRuns, ospaRuns, nisRuns float64
	for _, m := range ms {
		r := float64(m.Runs)
		w := r / n
		out.MeanGOSPA += w * m.MeanGOSPA
		rmse2 += w * m.PositionRMSE * m.PositionRMSE
		out.IDSwitches += m.IDSwitches
		out.FalseTracks += m.FalseTracks
		out.GOSPA, gw = accumulate(out.GOSPA, gw, m.GOSPA, r)
		out.NEES, nw = accumulate(out.NEES, nw, m.NEES, r)
		if len(m.GOSPALocalisation) > 0 {
			splitRuns += r
			out.MeanGOSPALocalisation += float64(r * m.MeanGOSPALocalisation)
			out.MeanGOSPAMissed += float64(r * m.MeanGOSPAMissed)
			out.MeanGOSPAFalse += float64(r * m.MeanGOSPAFalse)
		}
		out.GOSPALocalisation, lw = accumulate(out.GOSPALocalisation, lw, m.GOSPALocalisation, r)
		out.GOSPAMissed, mw = accumulate(out.GOSPAMissed, mw, m.GOSPAMissed, r)
		out.GOSPAFalse, fw = accumulate(out.GOSPAFalse, fw, m.GOSPAFalse, r)
		if len(m.OSPA) > 0 {
			ospaRuns += r
			out.MeanOSPA += float64(r * m.MeanOSPA)
		}
		out.OSPA, ow = accumulate(out.OSPA, ow, m.OSPA, r)
		if len(m.NIS) > 0 {
			nisRuns += r
			out.MeanNIS += float64(r * m.MeanNIS)
			out.NISSamplesInBand += float64(r * m.NISSamplesInBand)
		}
	}
	divide(out.GOSPA, gw)
	divide(out.NEES, nw)
	divide(out.GOSPALocalisation, lw)
	divide(out.GOSPAMissed, mw)
	divide(out.GOSPAFalse, fw)
	divide(out.OSPA, ow)
	if splitRuns > 0 {
		out.MeanGOSPALocalisation /= splitRuns
		out.MeanGOSPAMissed /= splitRuns
		out.MeanGOSPAFalse /= splitRuns
	}
	if ospaRuns > 0 {
		out.MeanOSPA /= ospaRuns
	}
	if nisRuns > 0 {
		out.MeanNIS /= nisRuns
		out.NISSamplesInBand /= nisRuns
	}
	out.NIS, out.NISSteps = poolNIS(ms)
	out.Objects = poolObjects(ms)
	out.PositionRMSE = math.Sqrt(rmse2)
	// The band of an average over M samples is χ²-quantiles/M: pooling
	// changes M, so no part's band is the pooled average's band, even when
	// the parts agree (Bar-Shalom, Li, Kirubarajan 2001, §5.4.2).
	drop.neesBand = len(out.NEES) > 0 && slices.ContainsFunc(ms, func(m *Metrics) bool { return m.NEESHigh > m.NEESLow })
	return out, drop
}

// divide divides each sum by its weight.
func divide(sum, weight []float64) {
	for k := range sum {
		sum[k] /= weight[k]
	}
}

// poolNIS pools the per-step NIS averages with run-count weights. When
// every part that has them names their steps (NISSteps parallel to NIS),
// the averages are pooled step by step and the union of the steps is
// kept, in ascending order; otherwise they are pooled by position, as the
// NEES averages are, and the steps are left out.
func poolNIS(ms []*Metrics) ([]float64, []int) {
	byStep := true
	for _, m := range ms {
		if len(m.NIS) > 0 && len(m.NISSteps) != len(m.NIS) {
			byStep = false
		}
	}
	if !byStep {
		var sum, w []float64
		for _, m := range ms {
			sum, w = accumulate(sum, w, m.NIS, float64(m.Runs))
		}
		divide(sum, w)
		return sum, nil
	}
	sum := map[int]float64{}
	w := map[int]float64{}
	for _, m := range ms {
		for i, st := range m.NISSteps {
			sum[st] += float64(float64(m.Runs) * m.NIS[i])
			w[st] += float64(m.Runs)
		}
	}
	if len(sum) == 0 {
		return nil, nil
	}
	steps := make([]int, 0, len(sum))
	for st := range sum {
		steps = append(steps, st)
	}
	slices.Sort(steps)
	vals := make([]float64, len(steps))
	for i, st := range steps {
		vals[i] = sum[st] / w[st]
	}
	return vals, steps
}

// poolObjects pools each object's errors over the parts: RMSE² weighted
// by the parts' step counts for the object, the counts summed. When a
// part gives the object no step count (a summary that does not record
// it), that object's errors are weighted by the parts' run counts instead.
// Objects are sorted by id, as in a summary.
func poolObjects(ms []*Metrics) []ObjectError {
	type acc struct {
		pos2, vel2, w    float64
		rpos2, rvel2, rw float64
		steps            int
		missingSteps     bool
	}
	objs := map[string]*acc{}
	var ids []string
	for _, m := range ms {
		r := float64(m.Runs)
		for _, o := range m.Objects {
			a := objs[o.Object]
			if a == nil {
				a = &acc{}
				objs[o.Object] = a
				ids = append(ids, o.Object)
			}
			s := float64(o.Steps)
			a.pos2 += float64(s * float64(o.RMSEPosition*o.RMSEPosition))
			a.vel2 += float64(s * float64(o.RMSEVelocity*o.RMSEVelocity))
			a.w += s
			a.rpos2 += float64(r * float64(o.RMSEPosition*o.RMSEPosition))
			a.rvel2 += float64(r * float64(o.RMSEVelocity*o.RMSEVelocity))
			a.rw += r
			a.steps += o.Steps
			if o.Steps <= 0 {
				a.missingSteps = true
			}
		}
	}
	if len(ids) == 0 {
		return nil
	}
	sort.Strings(ids)
	out := make([]ObjectError, 0, len(ids))
	for _, id := range ids {
		a := objs[id]
		e := ObjectError{Object: id, Steps: a.steps}
		switch {
		case !a.missingSteps && a.w > 0:
			e.RMSEPosition, e.RMSEVelocity = math.Sqrt(a.pos2/a.w), math.Sqrt(a.vel2/a.w)
		case a.rw > 0:
			e.RMSEPosition, e.RMSEVelocity = math.Sqrt(a.rpos2/a.rw), math.Sqrt(a.rvel2/a.rw)
		}
		out = append(out, e)
	}
	return out
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
