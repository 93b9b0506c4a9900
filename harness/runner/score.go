package runner

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"trackgate/harness/config"
	"trackgate/harness/golden"
	"trackgate/harness/metrics"
	"trackgate/harness/mot"
	"trackgate/harness/result"
	"trackgate/reference/kalman"
)

// NEESConfidence is the probability of the two-sided chi-square band the
// average NEES is judged against (common practice: 95 %).
const NEESConfidence = 0.95

// runScore is the metrics of one set of frames on one run.
type runScore struct {
	metrics *result.RunMetrics
	// nees holds, per step, the NEES of every matched track with a
	// covariance.
	nees [][]float64
	// whole maps each whole-run metric name to its value (golden records).
	whole map[string]float64
	err   error
	// skipped counts the matched tracks whose covariance is not positive
	// definite, left out of the NEES; firstSkip describes the first.
	skipped   int
	firstSkip string
	// steps is the number of scored steps, the length of the NIS series
	// (addNIS).
	steps int
}

// withoutSingular returns frames in which every track mapped to a live
// object whose covariance is not positive definite (metrics.NEES fails
// with *metrics.NotPositiveDefiniteError) reports no covariance, with the
// number of such tracks and a description of the first. frames is not
// modified; frames without such a track are shared.
func withoutSingular(frames []mot.Frame, mapping []map[string]string, truth []mot.Truth) ([]mot.Frame, int, string) {
	out := frames
	n, first, cloned := 0, "", false
	for k, fr := range frames {
		alive := make(map[string][]float64, len(truth[k].Objects))
		for _, o := range truth[k].Objects {
			alive[o.Object] = o.X
		}
		copied := false
		for i, e := range fr.Tracks {
			x, ok := alive[mapping[k][e.Track]]
			if e.Cov.Rows == 0 || !ok || len(x) != len(e.Mean) {
				continue
			}
			_, err := metrics.NEES(x, e.Mean, e.Cov)
			var npd *metrics.NotPositiveDefiniteError
			if !errors.As(err, &npd) {
				continue
			}
			if n == 0 {
				first = fmt.Sprintf("step %d track %s: %v", fr.Step, e.Track, err)
			}
			n++
			if !copied {
				if !cloned {
					out, cloned = slices.Clone(frames), true
				}
				out[k].Tracks = slices.Clone(fr.Tracks)
				copied = true
			}
			out[k].Tracks[i].Cov = mot.Mat{}
		}
	}
	return out, n, first
}

// Whole-run metric names, as recorded in golden metrics files and as
// gates name them.
const (
	MetricMeanGOSPA    = "mean_gospa"
	MetricPositionRMSE = "position_rmse"
	MetricIDSwitches   = "id_switches"
	MetricTrackBreaks  = "track_breaks"
	MetricFalseTracks  = "false_tracks"
	MetricMissed       = "missed_objects"
	MetricMeanNEES     = "mean_nees"
	MetricNEESInBand   = "nees_in_band"
	// MetricNEESSkipped counts the matched tracks whose covariance is not
	// positive definite, left out of the NEES (recorded only when > 0).
	MetricNEESSkipped = "nees_skipped"
	// MetricGOSPAStep and MetricNEESStep are the per-step series.
	MetricGOSPAStep = "gospa"
	MetricNEESStep  = "nees"
)

// gateMetrics are the metric names a gate may use; "gospa" and "nees" in a
// gate stand for their run means.
var gateMetrics = map[string]string{
	MetricMeanGOSPA: MetricMeanGOSPA, MetricGOSPAStep: MetricMeanGOSPA,
	MetricPositionRMSE: MetricPositionRMSE, MetricIDSwitches: MetricIDSwitches,
	MetricTrackBreaks: MetricTrackBreaks, MetricFalseTracks: MetricFalseTracks,
	MetricMissed: MetricMissed, MetricMeanNEES: MetricMeanNEES, MetricNEESStep: MetricMeanNEES,
	MetricNEESInBand: MetricNEESInBand,
}

func gateMetricNames() []string {
	var out []string
	for k := range gateMetrics {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// score computes the metrics of frames against the truth of run: GOSPA
// per step (order p, α = 2, cut-off c) on the position components, and, from
// the per-step GOSPA matching of tracks to objects, metrics.ScoreRun's
// identity and error bookkeeping and the NEES of matched tracks.
func score(run mot.Run, frames []mot.Frame, pos, vel []int, p, c float64, n int) *runScore {
	steps := min(len(frames), len(run.Truth))
	params := metrics.Params{Order: p, Cutoff: c, Components: pos}
	var ws metrics.Workspace
	m := &result.RunMetrics{GOSPA: make([]float64, steps)}
	if steps > 0 {
		m.GOSPALocalisation = make([]float64, steps)
		m.GOSPAMissed = make([]float64, steps)
		m.GOSPAFalse = make([]float64, steps)
		m.OSPA = make([]float64, steps)
	}
	mapping := make([]map[string]string, steps)
	sum, ospaSum := 0.0, 0.0
	var locSum, missSum, falseSum float64
	for k := 0; k < steps; k++ {
		truth := run.Truth[k]
		x := make([][]float64, len(truth.Objects))
		for i, o := range truth.Objects {
			x[i] = o.X
		}
		y := make([][]float64, len(frames[k].Tracks))
		for i, t := range frames[k].Tracks {
			y[i] = t.Mean
		}
		g, err := ws.GOSPA(x, y, params)
		if err != nil {
			return &runScore{err: fmt.Errorf("step %d: %v", k, err)}
		}
		m.GOSPA[k] = g.Value
		sum += g.Value
		mp := make(map[string]string, len(y))
		for _, t := range frames[k].Tracks {
			mp[t.Track] = ""
		}
		for i, jdx := range ws.Matches() {
			if jdx >= 0 {
				mp[frames[k].Tracks[jdx].Track] = truth.Objects[i].Object
			}
		}
		mapping[k] = mp
		m.GOSPALocalisation[k], m.GOSPAMissed[k], m.GOSPAFalse[k] = g.Localisation, g.Missed, g.False
		locSum += g.Localisation
		missSum += g.Missed
		falseSum += g.False
		// After the matching above has been read: OSPA reuses ws.
		o, err := ws.OSPA(x, y, params)
		if err != nil {
			return &runScore{err: fmt.Errorf("step %d: %v", k, err)}
		}
		m.OSPA[k] = o.Value
		ospaSum += o.Value
	}
	if steps > 0 {
		n := float64(steps)
		m.MeanGOSPA = sum / n
		m.MeanGOSPALocalisation, m.MeanGOSPAMissed, m.MeanGOSPAFalse = locSum/n, missSum/n, falseSum/n
		m.MeanOSPA = ospaSum / n
	}
	// NEES needs a positive definite covariance; the protocol admits any
	// symmetric one (a tracker may report zeros for a state it holds
	// exactly). Such samples are left out of the NEES, counted and named;
	// everything else is scored as usual.
	scored, skipped, firstSkip := withoutSingular(frames[:steps], mapping, run.Truth[:steps])
	sc, err := metrics.ScoreRun(run.Truth[:steps], scored, mapping, metrics.Select{Position: pos, Velocity: vel})
	if err != nil {
		return &runScore{err: err}
	}
	m.IDSwitches, m.TrackBreaks, m.FalseTracks = sc.Switches, sc.Breaks, sc.FalseTracks
	m.MissedObjects, m.PositionRMSE = sc.MissedSteps, sc.PositionRMSE
	m.NEESSamples = neesSamples(sc.NEES, steps)
	for _, o := range sc.Objects {
		if o.Covered == 0 {
			continue
		}
		m.Objects = append(m.Objects, result.ObjectError{Object: o.Object,
			RMSEPosition: o.PositionRMSE, RMSEVelocity: o.VelocityRMSE, Steps: o.Covered})
	}
	rs := &runScore{metrics: m, nees: sc.NEES, steps: steps}
	rs.whole = map[string]float64{
		MetricMeanGOSPA: m.MeanGOSPA, MetricPositionRMSE: m.PositionRMSE,
		MetricIDSwitches: float64(m.IDSwitches), MetricTrackBreaks: float64(m.TrackBreaks),
		MetricFalseTracks: float64(m.FalseTracks), MetricMissed: float64(m.MissedObjects),
	}
	rs.skipped, rs.firstSkip = skipped, firstSkip
	m.NEESSkipped = skipped
	if skipped > 0 {
		rs.whole[MetricNEESSkipped] = float64(skipped)
	}
	var all []float64
	for _, vals := range sc.NEES {
		if len(vals) == 0 {
			continue
		}
		s := 0.0
		for _, v := range vals {
			s += v
			all = append(all, v)
		}
		m.NEES = append(m.NEES, s/float64(len(vals)))
	}
	if len(all) > 0 && n > 0 {
		cons, err := metrics.CheckConsistency(sc.NEES, n, NEESConfidence)
		if err == nil {
			m.NEESStepsInBand = cons.InsideFraction
			rs.whole[MetricNEESInBand] = cons.InsideFraction
		}
		s := 0.0
		for _, v := range all {
			s += v
		}
		rs.whole[MetricMeanNEES] = s / float64(len(all))
	}
	return rs
}

// scoreJob scores the tracker's and the reference's frames of j.
func (s *settings) scoreJob(j *job) {
	n := j.sc.spec.Model.StateDim
	j.score = score(j.run, j.res.Frames, j.sc.pos, j.sc.vel, s.order, s.cutoff, n)
	j.refSc = score(j.run, j.ex.Frames, j.sc.pos, j.sc.vel, s.order, s.cutoff, n)
	if j.score.err == nil {
		j.score.err = addNIS(j.score, j.sc.spec.Model, j.run.Scans, j.res.Frames)
	}
	if j.refSc.err == nil {
		j.refSc.err = addNIS(j.refSc, j.sc.spec.Model, j.run.Scans, j.ex.Frames)
	}
	if j.score.err != nil {
		j.out.Checks = append(j.out.Checks, result.Check{Name: "metrics", Status: result.Error,
			Message: fmt.Sprintf("the tracker's metrics could not be computed: %v", j.score.err)})
		j.score = nil
		return
	}
	if s.against != AgainstReference {
		if v, st, _ := s.blessedRun(j); st == golden.Passing {
			j.blessed = v
		}
	}
	if n := j.score.skipped; n > 0 {
		j.out.Checks = append(j.out.Checks, result.Check{Name: "metrics", Status: result.Pass,
			Message: fmt.Sprintf("%d matched track estimate(s) with a covariance that is not positive definite were left out of the NEES (first: %s); GOSPA and the other metrics are complete", n, j.score.firstSkip)})
	}
}

func absoluteGate(g config.Gate, key string, vals []float64) result.Gate {
	name := g.Metric + " limit"
	if len(vals) == 0 {
		return result.Gate{Name: name, Status: result.Skip, Message: "no run has a value of " + key}
	}
	v := mean(vals)
	var vd metrics.Verdict
	if g.LowerIsWorse {
		vd = metrics.AtLeast(name, v, *g.Limit)
	} else {
		vd = metrics.AtMost(name, v, *g.Limit)
	}
	return gateOf(vd, fmt.Sprintf("mean %s over %d runs: ", key, len(vals)))
}

func pairedGate(g config.Gate, key string, cand, base []float64, baseName string) result.Gate {
	name := g.Metric + " paired"
	if len(cand) < 2 {
		return result.Gate{Name: name, Status: result.Skip, Message: "a paired gate needs at least two runs"}
	}
	p := metrics.Paired{Confidence: g.Paired.Confidence, MinEffect: g.Paired.MinEffect, HigherIsBetter: g.LowerIsWorse}
	vd, err := p.Compare(name, cand, base)
	if err != nil {
		return result.Gate{Name: name, Status: result.Error, Message: err.Error()}
	}
	return gateOf(vd, fmt.Sprintf("%s against %s on the same %d seeds: ", key, baseName, len(cand)))
}

func gateOf(v metrics.Verdict, prefix string) result.Gate {
	st := result.Pass
	if !v.Pass {
		st = result.Fail
	}
	return result.Gate{Name: v.Gate, Status: st, Estimate: v.Estimate, Low: v.Lo, High: v.Hi,
		Threshold: v.Limit, Message: prefix + v.Reason}
}

// neesSamples copies the per-step NEES values for the result: one list per
// step, empty where no matched track has a covariance; nil when no step
// has any (a tracker without covariances).
func neesSamples(nees [][]float64, steps int) [][]float64 {
	any := false
	for _, v := range nees {
		any = any || len(v) > 0
	}
	if !any {
		return nil
	}
	out := make([][]float64, steps)
	for k := range out {
		out[k] = []float64{}
		if k < len(nees) {
			out[k] = append(out[k], nees[k]...)
		}
	}
	return out
}

// valuesOf lists whole-run metric values by name, in alphabetical order.
func valuesOf(m map[string]float64) []result.Value {
	if len(m) == 0 {
		return nil
	}
	out := make([]result.Value, 0, len(m))
	for k, v := range m {
		out = append(out, result.Value{Metric: k, Value: v})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Metric < out[j].Metric })
	return out
}

// NISConfidence is the probability of the two-sided chi-square interval
// NIS samples and their per-step averages are judged against (common
// practice: 95 %).
const NISConfidence = 0.95

// addNIS fills the NIS series of rs from frames, the frames rs was scored
// on, under model and the run's scans. At step k ≥ 1, every track that
// reports the detection it was updated with, and that reported a
// covariance under the same name (the tracker's own track id) at step
// k−1, gives one sample, whether or not the GOSPA matching maps it to an
// object: the NIS needs no ground truth, and a track that has drifted
// beyond the cut-off from every object has the largest innovations, which
// must not drop out of the consistency check. For the sample, the
// track's previous estimate (x, P) is predicted with the model,
// x⁻ = F x and P⁻ = F P Fᵀ + Q, projected, ẑ = H x⁻ and
// S = H P⁻ Hᵀ + R, and NIS = νᵀ S⁻¹ ν with ν = z − ẑ for the detection z
// the track named. This is the innovation the Kalman update of the
// track's own state with its own choice of detection would see; for the
// reference's frames it is the reference's own NIS. A prediction whose S
// is not positive definite, or a detection id that is not in the scan,
// gives no sample (the association checks report the latter). MeanNIS is
// the mean of all samples, NISSamplesInBand the fraction inside
// metrics.Interval(m, 1, NISConfidence).
//
// References:
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
//     to Tracking and Navigation", Wiley, 2001, §5.4.2 (the NIS, χ²_m for a
//     consistent filter) and §5.2 (the innovation and its covariance).
func addNIS(rs *runScore, model mot.Model, scans []mot.Scan, frames []mot.Frame) error {
	m := rs.metrics
	steps := rs.steps
	if model.MeasDim < 1 || model.StateDim < 1 {
		return nil
	}
	filt, err := kalman.New(model)
	if err != nil {
		return fmt.Errorf("NIS: %v", err)
	}
	n := model.StateDim
	xp, pp := make([]float64, n), make([]float64, n*n)
	var pr kalman.Projection
	samples := make([][]float64, steps)
	total := 0
	for k := 1; k < steps && k < len(frames) && k < len(scans); k++ {
		prev := make(map[string]mot.Estimate, len(frames[k-1].Tracks))
		for _, e := range frames[k-1].Tracks {
			prev[e.Track] = e
		}
		for _, e := range frames[k].Tracks {
			if !e.HasDetection || e.Detection == mot.NoDetection {
				continue
			}
			pe, ok := prev[e.Track]
			if !ok || pe.Cov.Rows != n || pe.Cov.Cols != n || len(pe.Mean) != n {
				continue
			}
			z := detectionZ(scans[k], e.Detection)
			if len(z) != model.MeasDim {
				continue
			}
			filt.PredictTo(xp, pp, pe.Mean, pe.Cov.Data)
			if err := filt.ProjectTo(&pr, xp, pp); err != nil {
				continue
			}
			v := pr.Distance2(z)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			samples[k] = append(samples[k], v)
			total++
		}
	}
	if total == 0 {
		return nil
	}
	lo, hi := metrics.Interval(model.MeasDim, 1, NISConfidence)
	m.NISSamples = make([][]float64, steps)
	sum, inside := 0.0, 0
	for k, vals := range samples {
		m.NISSamples[k] = append([]float64{}, vals...)
		if len(vals) == 0 {
			continue
		}
		s := 0.0
		for _, v := range vals {
			s += v
			sum += v
			if v >= lo && v <= hi {
				inside++
			}
		}
		m.NIS = append(m.NIS, s/float64(len(vals)))
	}
	m.MeanNIS = sum / float64(total)
	m.NISSamplesInBand = float64(inside) / float64(total)
	return nil
}

// detectionZ returns the measurement of the detection with the given id in
// scan, nil when there is none.
func detectionZ(scan mot.Scan, id int) []float64 {
	for _, d := range scan.Detections {
		if d.ID == id {
			return d.Z
		}
	}
	return nil
}
