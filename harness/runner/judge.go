package runner

import (
	"fmt"
	"math"
	"sort"

	"trackgate/harness/config"
	"trackgate/harness/metrics"
	"trackgate/harness/result"
)

// Judge summarises every scenario of s whose planned runs are all present
// (RunsPlanned > 0 and as many runs) and judges the project's gates on it,
// from nothing but what the runs carry: their per-step metrics
// (RunMetrics.GOSPA, NEESSamples) and whole-run values (Values,
// ReferenceValues, BlessedValues). It replaces those scenarios' Metrics and
// Gates, sets their status to the worst of their runs and of the gates that
// were decided, and the suite's status to the worst of its scenarios.
// Scenarios with runs missing (one shard's share), and those with a run
// that has metrics but no Values (a result written before runs carried
// them), are left as they are.
//
// Check calls it on the suite it has just filled, and trackgate merge on
// the merge of shard results, so that a suite whose runs were spread over
// shards and merged is judged exactly like the unsharded one: same inputs,
// same order of summation, same bytes.
//
// The summary of a scenario over its N runs with metrics:
//
//	GOSPA per step:  the mean over runs of the run's GOSPA at the step;
//	MeanGOSPA:       the mean over runs of the run's time average;
//	PositionRMSE:    sqrt of the mean over runs of the run's RMSE²;
//	NEES per step:   the mean of the M_k NEES values at step k (every
//	                 matched track that reports a covariance, over all
//	                 runs), judged against the chi-square band of its own
//	                 count, [χ²_{n·M_k}⁻¹((1−c)/2), χ²_{n·M_k}⁻¹((1+c)/2)] / M_k,
//	                 c = 0.95. Steps with M_k = 0 are left out of the
//	                 series, Metrics.NEESSteps names the steps kept;
//	                 Metrics.NEESLowByStep and NEESHighByStep hold
//	                 each remaining step's band, parallel to Metrics.NEES,
//	                 and Metrics.NEESLow and NEESHigh the single band when
//	                 every such step has the same M_k (else both are 0).
//	GOSPA split:     per step and as time averages, the mean over runs
//	                 of the runs' localisation, missed and false parts of
//	                 GOSPAᵖ; OSPA likewise;
//	Objects:         per object, √(Σ_runs steps·RMSE² / Σ_runs steps)
//	                 for position and velocity, steps summed;
//	NIS per step:    as NEES, from the runs' NISSamples, with meas_dim
//	                 degrees of freedom per sample (NISSteps,
//	                 NISLowByStep, NISHighByStep, NISInBand); MeanNIS the
//	                 mean of every sample and NISSamplesInBand the fraction
//	                 of samples inside the single-sample 95 % interval.
//
// An absolute gate compares the mean of the runs' values with its limit;
// a paired gate (metrics.Paired) compares the runs' values with a baseline
// on the same seeds: the blessed values when every run with a value
// carries them, the reference's otherwise (and, when only some runs carry
// blessed values, the gate's message says it was judged against the
// reference on every run instead).
//
// The error is for a gate naming an unknown metric; s is then unchanged.
//
// References:
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
//     to Tracking and Navigation", Wiley, 2001, §5.4.2 (the average of M
//     independent NEES values and its chi-square acceptance interval).
//   - W. S. Gosset ("Student"), "The probable error of a mean", Biometrika
//     6(1):1–25, 1908 (the paired t interval of metrics.Paired).
func Judge(s *result.Suite, cfg config.Config) error {
	for i, g := range cfg.Gates {
		if _, ok := gateMetrics[g.Metric]; !ok {
			return fmt.Errorf("gates[%d].metric: expected one of %v, got %q", i, gateMetricNames(), g.Metric)
		}
	}
	for i := range s.Scenarios {
		sc := &s.Scenarios[i]
		if sc.RunsPlanned <= 0 || len(sc.Runs) != sc.RunsPlanned || !carriesValues(sc) {
			continue
		}
		sc.Status = result.Pass
		for _, r := range sc.Runs {
			sc.Status = result.Worst(sc.Status, r.Status)
		}
		sc.Metrics = summarise(sc)
		sc.Gates = judgeGates(sc, cfg.Gates)
		for _, g := range sc.Gates {
			// A gate that could not be judged (too few runs) is reported
			// but does not mark the scenario skipped.
			if g.Status.Rank() > result.Skip.Rank() {
				sc.Status = result.Worst(sc.Status, g.Status)
			}
		}
	}
	if len(s.Scenarios) > 0 {
		s.Status = result.Pass
		for _, sc := range s.Scenarios {
			s.Status = result.Worst(s.Status, sc.Status)
		}
	}
	return nil
}

// summarise computes a scenario's summary metrics from its runs (see
// Judge); nil when no run has metrics.
func summarise(sc *result.Scenario) *result.Metrics {
	out := &result.Metrics{}
	var gsum, nees, nis, locs, misses, falses, ospas [][]float64
	rmse2 := 0.0
	objs := map[string]*objectPool{}
	var objOrder []string
	nisCount, nisInside := 0, 0
	for _, r := range sc.Runs {
		m := r.Metrics
		if m == nil {
			continue
		}
		out.Runs++
		out.MeanGOSPA += m.MeanGOSPA
		out.MeanGOSPALocalisation += m.MeanGOSPALocalisation
		out.MeanGOSPAMissed += m.MeanGOSPAMissed
		out.MeanGOSPAFalse += m.MeanGOSPAFalse
		out.MeanOSPA += m.MeanOSPA
		locs = appendSteps(locs, m.GOSPALocalisation)
		misses = appendSteps(misses, m.GOSPAMissed)
		falses = appendSteps(falses, m.GOSPAFalse)
		ospas = appendSteps(ospas, m.OSPA)
		for _, o := range m.Objects {
			p := objs[o.Object]
			if p == nil {
				p = &objectPool{}
				objs[o.Object] = p
				objOrder = append(objOrder, o.Object)
			}
			w := float64(o.Steps)
			p.pos2 += w * float64(o.RMSEPosition*o.RMSEPosition)
			p.vel2 += w * float64(o.RMSEVelocity*o.RMSEVelocity)
			p.steps += o.Steps
		}
		if len(m.NISSamples) > 0 && sc.MeasDim > 0 {
			lo, hi := metrics.Interval(sc.MeasDim, 1, NISConfidence)
			for _, vals := range m.NISSamples {
				for _, v := range vals {
					out.MeanNIS += v
					nisCount++
					if v >= lo && v <= hi {
						nisInside++
					}
				}
			}
		}
		for k, v := range m.NISSamples {
			for len(nis) <= k {
				nis = append(nis, nil)
			}
			nis[k] = append(nis[k], v...)
		}
		out.IDSwitches += m.IDSwitches
		out.FalseTracks += m.FalseTracks
		rmse2 += m.PositionRMSE * m.PositionRMSE
		for k, g := range m.GOSPA {
			for len(gsum) <= k {
				gsum = append(gsum, nil)
			}
			gsum[k] = append(gsum[k], g)
		}
		for k, v := range m.NEESSamples {
			for len(nees) <= k {
				nees = append(nees, nil)
			}
			nees[k] = append(nees[k], v...)
		}
	}
	if out.Runs == 0 {
		return nil
	}
	runs := float64(out.Runs)
	out.MeanGOSPA /= runs
	out.MeanGOSPALocalisation /= runs
	out.MeanGOSPAMissed /= runs
	out.MeanGOSPAFalse /= runs
	out.MeanOSPA /= runs
	out.PositionRMSE = math.Sqrt(rmse2 / runs)
	for _, gs := range gsum {
		out.GOSPA = append(out.GOSPA, mean(gs))
	}
	out.GOSPALocalisation = stepMeans(locs)
	out.GOSPAMissed = stepMeans(misses)
	out.GOSPAFalse = stepMeans(falses)
	out.OSPA = stepMeans(ospas)
	sort.Strings(objOrder)
	for _, id := range objOrder {
		p := objs[id]
		if p.steps == 0 {
			continue
		}
		w := float64(p.steps)
		out.Objects = append(out.Objects, result.ObjectError{Object: id,
			RMSEPosition: math.Sqrt(p.pos2 / w), RMSEVelocity: math.Sqrt(p.vel2 / w), Steps: p.steps})
	}
	if nisCount > 0 {
		out.MeanNIS /= float64(nisCount)
		out.NISSamplesInBand = float64(nisInside) / float64(nisCount)
		if cons, err := metrics.CheckConsistency(nis, sc.MeasDim, NISConfidence); err == nil && cons.Judged > 0 {
			for _, st := range cons.Steps {
				if st.Count > 0 {
					out.NIS = append(out.NIS, st.Mean)
					out.NISSteps = append(out.NISSteps, st.Step)
					out.NISLowByStep = append(out.NISLowByStep, st.Lo)
					out.NISHighByStep = append(out.NISHighByStep, st.Hi)
				}
			}
			out.NISConfidence = NISConfidence
			out.NISInBand = cons.InsideFraction
		}
	}
	cons, err := metrics.CheckConsistency(nees, sc.StateDim, NEESConfidence)
	if err == nil && cons.Judged > 0 {
		// Each step's mean is judged against the band of its own sample
		// count (runs × matched tracks at the step), stored step by step
		// beside the means; steps without a sample are left out of all
		// three series alike. One band is also stored when every judged
		// step has the same count; otherwise no single band describes the
		// steps and none is (nees_in_band still judges each step by its
		// own).
		for _, st := range cons.Steps {
			if st.Count > 0 {
				out.NEES = append(out.NEES, st.Mean)
				out.NEESSteps = append(out.NEESSteps, st.Step)
				out.NEESLowByStep = append(out.NEESLowByStep, st.Lo)
				out.NEESHighByStep = append(out.NEESHighByStep, st.Hi)
			}
		}
		count := -1
		for _, st := range cons.Steps {
			switch {
			case st.Count == 0:
			case count == -1:
				count = st.Count
				out.NEESLow, out.NEESHigh = st.Lo, st.Hi
			case st.Count != count:
				out.NEESLow, out.NEESHigh = 0, 0
			}
		}
		out.NEESConfidence = NEESConfidence
		out.NEESInBand = cons.InsideFraction
	}
	return out
}

// objectPool accumulates one object's squared errors over runs, weighted
// by the runs' step counts.
type objectPool struct {
	pos2, vel2 float64
	steps      int
}

// appendSteps appends each value of series to its step's list in acc.
func appendSteps(acc [][]float64, series []float64) [][]float64 {
	for k, v := range series {
		for len(acc) <= k {
			acc = append(acc, nil)
		}
		acc[k] = append(acc[k], v)
	}
	return acc
}

// stepMeans returns the mean of each step's list; nil for none.
func stepMeans(acc [][]float64) []float64 {
	var out []float64
	for _, vs := range acc {
		out = append(out, mean(vs))
	}
	return out
}

func mean(xs []float64) float64 {
	if len(xs) == 0 {
		return 0
	}
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return s / float64(len(xs))
}

// judgeGates judges the gates on a scenario's runs (see Judge).
func judgeGates(sc *result.Scenario, gates []config.Gate) []result.Gate {
	var out []result.Gate
	for _, g := range gates {
		key := gateMetrics[g.Metric]
		var cand, candRef, ref, candB, blessed []float64
		for _, r := range sc.Runs {
			v, ok := result.Lookup(r.Values, key)
			if !ok {
				continue
			}
			cand = append(cand, v)
			if b, ok := result.Lookup(r.ReferenceValues, key); ok {
				candRef, ref = append(candRef, v), append(ref, b)
			}
			if b, ok := result.Lookup(r.BlessedValues, key); ok {
				candB, blessed = append(candB, v), append(blessed, b)
			}
		}
		if g.Limit != nil {
			out = append(out, absoluteGate(g, key, cand))
		}
		if g.Paired != nil {
			switch {
			case len(blessed) > 0 && len(blessed) == len(cand):
				out = append(out, pairedGate(g, key, candB, blessed, "the blessed metrics"))
			case len(blessed) > 0:
				// Never judged silently on a subset of the runs.
				pg := pairedGate(g, key, candRef, ref, "the reference")
				pg.Message += fmt.Sprintf(" (blessed values cover %d of the %d runs, so the gate is judged against the reference on every run; bless to record them for all runs)", len(blessed), len(cand))
				out = append(out, pg)
			default:
				out = append(out, pairedGate(g, key, candRef, ref, "the reference"))
			}
		}
	}
	return out
}

// carriesValues reports whether every run of sc that has metrics also
// carries its whole-run values.
func carriesValues(sc *result.Scenario) bool {
	for _, r := range sc.Runs {
		if r.Metrics != nil && r.Values == nil {
			return false
		}
	}
	return true
}
