package result

import (
	"strconv"
	"strings"
)

// Version is the version of the result JSON layout. It changes whenever a
// field is renamed or its meaning changes; adding a field does not change it.
const Version = 1

// Status is the outcome of one check, run, scenario or suite.
type Status string

// The statuses, from best to worst. A suite or scenario takes the worst status
// of its parts.
const (
	Pass Status = "pass" // everything within tolerance
	// Tie marks a changed association where the reference's best hypothesis
	// was not clear (margin under the ambiguity threshold): reported, not a
	// failure.
	Tie   Status = "tie"
	Skip  Status = "skip"  // not run (no golden to compare with, filtered out)
	Fail  Status = "fail"  // a regression
	Error Status = "error" // trackgate could not run the check (bad scenario, stale golden...)
	// Faulted says the tracker itself faulted (crashed, hung, sent what the
	// protocol does not allow). It ranks above Error: a check that could
	// not be made because of the fault, or beside it, must not hide that
	// the tracker failed.
	Faulted Status = "fault"
)

// Rank orders statuses by severity: Pass < Tie < Skip < Fail < Error <
// Faulted. An unknown or missing status ranks with Error.
func (s Status) Rank() int {
	switch s {
	case Pass:
		return 0
	case Tie:
		return 1
	case Skip:
		return 2
	case Fail:
		return 3
	case Error:
		return 4
	case Faulted:
		return 5
	}
	return 4
}

// Worst returns the more severe of a and b.
func Worst(a, b Status) Status {
	if b.Rank() > a.Rank() {
		return b
	}
	return a
}

// Suite is the result of one trackgate invocation (or the merge of shards).
type Suite struct {
	// Version is the result layout version (Version).
	Version int `json:"version"`
	// Tool is the trackgate version that produced the result.
	Tool     string   `json:"tool"`
	Platform Platform `json:"platform"`
	Tracker  Tracker  `json:"tracker"`
	// Against names what the tracker was compared with: "reference",
	// "golden" or "both".
	Against string `json:"against"`
	// Shard is set when the suite is one shard of a larger one.
	Shard     *Shard     `json:"shard,omitempty"`
	Status    Status     `json:"status"`
	Scenarios []Scenario `json:"scenarios"`
	// Notes are remarks about the suite as a whole that a reader must see,
	// such as summaries Merge could not carry over from the shards.
	Notes []string `json:"notes,omitempty"`
	// Rules are the gate rules the scenarios were judged with (the gates
	// of the project file), recorded so that the merge of shard results
	// is judged with the same rules. Nil in a result that does not record
	// them (written before they were recorded); an empty list when there
	// were no gates.
	Rules *Rules `json:"rules,omitempty"`
}

// Rules are the gate rules a suite was judged with.
type Rules struct {
	// Gates are the gate rules in the project file's order.
	Gates []GateRule `json:"gates"`
}

// GateRule is one gate rule of the project file: the metric, which way is
// worse, and an absolute limit, a paired comparison with a baseline, or
// both.
type GateRule struct {
	Metric string `json:"metric"`
	// Worse is "higher" or "lower": the direction in which the metric
	// gets worse.
	Worse string `json:"worse"`
	// Limit, if set, is the absolute limit on the mean of the runs' values.
	Limit *float64 `json:"limit,omitempty"`
	// Paired, if set, is the paired comparison with the baseline.
	Paired *PairedRule `json:"paired,omitempty"`
}

// PairedRule is the paired comparison of a GateRule.
type PairedRule struct {
	// Confidence c is the one-sided confidence level in (0, 1): the gate
	// fails when the one-sided lower confidence bound at level c of the
	// mean worsening exceeds max(0, MinEffect) (a one-sided test at level
	// 1 − c; see metrics.Paired).
	Confidence float64 `json:"confidence"`
	// MinEffect is the smallest mean difference that can fail the gate.
	MinEffect float64 `json:"min_effect"`
}

// Equal reports whether r and o are the same rules; two nil Rules are
// equal, a nil and a non-nil one are not.
func (r *Rules) Equal(o *Rules) bool {
	if r == nil || o == nil {
		return r == nil && o == nil
	}
	if len(r.Gates) != len(o.Gates) {
		return false
	}
	for i, a := range r.Gates {
		b := o.Gates[i]
		if a.Metric != b.Metric || a.Worse != b.Worse ||
			(a.Limit == nil) != (b.Limit == nil) || (a.Limit != nil && *a.Limit != *b.Limit) ||
			(a.Paired == nil) != (b.Paired == nil) || (a.Paired != nil && *a.Paired != *b.Paired) {
			return false
		}
	}
	return true
}

// String describes the rules in one line, for messages: "none recorded",
// "no gates" or the gates separated by semicolons.
func (r *Rules) String() string {
	if r == nil {
		return "none recorded"
	}
	if len(r.Gates) == 0 {
		return "no gates"
	}
	parts := make([]string, len(r.Gates))
	for i, g := range r.Gates {
		s := g.Metric + " (worse " + g.Worse + ")"
		if g.Limit != nil {
			s += " limit " + strconv.FormatFloat(*g.Limit, 'g', -1, 64)
		}
		if g.Paired != nil {
			s += " paired confidence " + strconv.FormatFloat(g.Paired.Confidence, 'g', -1, 64) +
				" min effect " + strconv.FormatFloat(g.Paired.MinEffect, 'g', -1, 64)
		}
		parts[i] = s
	}
	return strings.Join(parts, "; ")
}

// Platform records where the result was produced; floating-point results can
// differ in the last bits between platforms.
type Platform struct {
	GoVersion string `json:"go"`
	GOOS      string `json:"goos"`
	GOARCH    string `json:"goarch"`
	// GOAMD64 is the amd64 micro-architecture level ("v1".."v4"), "" elsewhere.
	GOAMD64 string `json:"goamd64,omitempty"`
}

// Tracker identifies the tracker under test.
type Tracker struct {
	// Command is the argument vector that started it.
	Command []string `json:"command"`
	// Name and Version are what the tracker said in its opening reply.
	Name    string `json:"name"`
	Version string `json:"version"`
}

// Shard says which share of the (scenario, run) pairs a suite covers.
type Shard struct {
	// Index is 0-based; Total is the number of shards.
	Index int `json:"index"`
	Total int `json:"total"`
	// Scenarios is set when whole scenarios were dealt to shards rather
	// than single runs (see package trackgate/harness/shard).
	Scenarios bool `json:"scenarios,omitempty"`
}

// Scenario is the result of all runs of one scenario.
type Scenario struct {
	Name        string `json:"name"`
	File        string `json:"file"`
	Description string `json:"description"`
	// Hash is the scenario's content hash (hex SHA-256 of the file).
	Hash string `json:"hash"`
	// StateDim and MeasDim size the vectors in the traces.
	StateDim int `json:"state_dim"`
	MeasDim  int `json:"meas_dim"`
	// Position lists the state components that are positions (for plots
	// and position metrics), in axis order.
	Position []int  `json:"position"`
	Status   Status `json:"status"`
	// RunsPlanned is the number of runs of the scenario in the whole suite
	// (indices 0..RunsPlanned-1). A shard holds only some of them in Runs;
	// Merge uses it to find runs that no shard produced. Zero means unknown.
	RunsPlanned int   `json:"runs_planned,omitempty"`
	Runs        []Run `json:"runs"`
	// Metrics summarises the accuracy and consistency metrics over the runs.
	Metrics *Metrics `json:"metrics,omitempty"`
	// Gates are the statistical gates evaluated on the metrics.
	Gates []Gate `json:"gates,omitempty"`
}

// Run is the result of one Monte Carlo run of a scenario.
type Run struct {
	Index  int    `json:"index"`
	Seed   uint64 `json:"seed"`
	Status Status `json:"status"`
	// Checks are the comparisons made on this run (against the reference,
	// the golden file, one-step conformance...).
	Checks []Check `json:"checks"`
	// Fault is set when the tracker faulted during the run.
	Fault *Fault `json:"fault,omitempty"`
	// Metrics are this run's per-step metric series.
	Metrics *RunMetrics `json:"metrics,omitempty"`
	// Trace holds what the plots of this run need; it may be omitted for
	// large suites.
	Trace *Trace `json:"trace,omitempty"`
	// Seconds is the wall-clock time the run took, zero when not measured.
	// It is the only field that differs between identical runs; leave it
	// zero where byte-identical results are wanted.
	Seconds float64 `json:"seconds,omitempty"`
	// Values are the tracker's whole-run metric values on this run, by
	// metric name in alphabetical order: what the scenario's gates are
	// judged on. ReferenceValues are the reference tracker's on the same
	// run (the same seed) and BlessedValues the tracker's blessed ones, when
	// its golden metrics were read; they are the paired gates' baselines.
	// Carrying them in the run lets the gates be judged again after the
	// runs of a scenario were spread over shards and merged.
	Values          []Value `json:"values,omitempty"`
	ReferenceValues []Value `json:"reference_values,omitempty"`
	BlessedValues   []Value `json:"blessed_values,omitempty"`
}

// Value is one whole-run metric value ("mean_gospa", "id_switches" ...).
type Value struct {
	Metric string  `json:"metric"`
	Value  float64 `json:"value"`
}

// Lookup returns the value of the named metric in vs.
func Lookup(vs []Value, metric string) (float64, bool) {
	for _, v := range vs {
		if v.Metric == metric {
			return v.Value, true
		}
	}
	return 0, false
}

// Check is one comparison made on a run.
type Check struct {
	// Name says what was compared: "reference", "golden", "conformance",
	// "identity", "metrics".
	Name    string `json:"name"`
	Status  Status `json:"status"`
	Message string `json:"message,omitempty"`
	// First is the first step where the tracker departs, when it does.
	First *Divergence `json:"first,omitempty"`
	// Diffs lists differences beyond tolerance (capped; see Truncated).
	Diffs     []Diff `json:"diffs,omitempty"`
	Truncated int    `json:"truncated,omitempty"`
	// Ties lists changed associations judged ties, by step.
	Ties []Divergence `json:"ties,omitempty"`
}

// Divergence names where and why a tracker departed from what was expected.
type Divergence struct {
	Step int `json:"step"`
	// Kind is "association", "estimate", "track-count", "identity" or
	// "fault".
	Kind    string   `json:"kind"`
	Objects []string `json:"objects,omitempty"`
	Message string   `json:"message"`
	// Margin is, for association divergences, the reference's cost gap
	// between its best and second-best hypotheses in the clusters (connected
	// components of the gating graph) where the tracker's association
	// differs: the smallest such gap among the clusters judged.
	Margin *float64 `json:"margin,omitempty"`
	// Probability is the probability the reference gives the tracker's
	// choice in those clusters (the product of the clusters' posteriors of
	// the tracker's cluster hypotheses), when each is among its cluster's k
	// best.
	Probability *float64 `json:"probability,omitempty"`
}

// Diff is one value beyond tolerance.
type Diff struct {
	// Path locates the value: "step 17 / track ferry / mean[2]".
	Path string  `json:"path"`
	Want float64 `json:"want"`
	Got  float64 `json:"got"`
	// Tolerance describes the rule that was exceeded ("abs 1e-9 + rel
	// 1e-12", "4 ulp") and Excess by how much, in the rule's own unit.
	Tolerance string  `json:"tolerance"`
	Excess    float64 `json:"excess"`
}

// Fault is a tracker fault, classified.
type Fault struct {
	// Class is the fault class ("crash", "hang", "invalid-json",
	// "non-finite", ...).
	Class   string `json:"class"`
	Step    int    `json:"step"`
	Line    int    `json:"line"`
	Message string `json:"message"`
	Excerpt string `json:"excerpt,omitempty"`
	// Stderr is the tail of the tracker's standard error.
	Stderr string `json:"stderr,omitempty"`
}

// RunMetrics are per-step metric series of one run; a NaN-free encoding is
// used: steps where a value does not exist are left out of the series.
type RunMetrics struct {
	GOSPA []float64 `json:"gospa"`
	// NEES is the average NEES over the matched tracks at each step.
	NEES []float64 `json:"nees,omitempty"`
	// MeanGOSPA is the time average of GOSPA.
	MeanGOSPA       float64 `json:"mean_gospa"`
	IDSwitches      int     `json:"id_switches"`
	TrackBreaks     int     `json:"track_breaks"`
	FalseTracks     int     `json:"false_tracks"`
	MissedObjects   int     `json:"missed_objects"`
	PositionRMSE    float64 `json:"position_rmse"`
	MeanNIS         float64 `json:"mean_nis,omitempty"`
	NEESStepsInBand float64 `json:"nees_steps_in_band,omitempty"`
	// NEESSamples holds, for every step of the run (none left out), the
	// NEES of each track matched to an object that reports a covariance,
	// in frame order; a step without one has an empty list. The
	// scenario's consistency band is judged on these pooled over runs.
	NEESSamples [][]float64 `json:"nees_samples,omitempty"`
	// NEESSkipped counts the matched track estimates whose covariance is
	// not positive definite: they are left out of NEES and NEESSamples
	// (the other metrics count them as usual). Zero, and left out of the
	// file, when there were none.
	NEESSkipped int `json:"nees_skipped,omitempty"`
	// GOSPALocalisation, GOSPAMissed and GOSPAFalse split each step's
	// GOSPA in its p-th power (α = 2), parallel to GOSPA:
	//
	//	GOSPA[k]ᵖ = GOSPALocalisation[k] + GOSPAMissed[k] + GOSPAFalse[k],
	//
	// the localisation part being Σ dᵖ over the matched pairs (d < c), the
	// missed part (cᵖ/2)·(objects left unmatched) and the false part
	// (cᵖ/2)·(tracks left unmatched), in the unit of the positions to the
	// power p (m² for p = 2). Empty in results written before they were
	// recorded.
	GOSPALocalisation []float64 `json:"gospa_localisation,omitempty"`
	GOSPAMissed       []float64 `json:"gospa_missed,omitempty"`
	GOSPAFalse        []float64 `json:"gospa_false,omitempty"`
	// MeanGOSPALocalisation, MeanGOSPAMissed and MeanGOSPAFalse are the
	// time averages of the three parts; they add up to the time average
	// of GOSPAᵖ (not to MeanGOSPAᵖ).
	MeanGOSPALocalisation float64 `json:"mean_gospa_localisation,omitempty"`
	MeanGOSPAMissed       float64 `json:"mean_gospa_missed,omitempty"`
	MeanGOSPAFalse        float64 `json:"mean_gospa_false,omitempty"`
	// OSPA is the OSPA distance per step, with the order p and cut-off c
	// of GOSPA, on the same position components; parallel to GOSPA.
	// MeanOSPA is its time average.
	OSPA     []float64 `json:"ospa,omitempty"`
	MeanOSPA float64   `json:"mean_ospa,omitempty"`
	// Objects holds the errors of each true object, sorted by object id:
	// the objects that some track covered at least once.
	Objects []ObjectError `json:"objects,omitempty"`
	// NIS is the average NIS over the samples of each step that has one
	// (steps without are left out); NISSamples holds, for every step (none
	// left out), the NIS samples in frame order. A sample is taken for a
	// track matched to an object that reports the detection it was updated
	// with and reported a covariance at the previous step: ν = z − H x⁻
	// and S = H P⁻ Hᵀ + R, with (x⁻, P⁻) the scenario model's prediction
	// of the track's own previous estimate, and NIS = νᵀ S⁻¹ ν. MeanNIS is
	// the mean of all samples and NISSamplesInBand the fraction of them
	// inside the two-sided 95 % chi-square interval for meas_dim degrees
	// of freedom. All are empty or zero for a tracker that reports no
	// associations or no covariances.
	NIS              []float64   `json:"nis,omitempty"`
	NISSamples       [][]float64 `json:"nis_samples,omitempty"`
	NISSamplesInBand float64     `json:"nis_samples_in_band,omitempty"`
}

// ObjectError is the accuracy of the estimates of one true object over
// one run (or, in a scenario's summary, pooled over its runs).
type ObjectError struct {
	Object string `json:"object"`
	// RMSEPosition is √(mean over Steps of ‖p − p̂‖²) on the position
	// components, RMSEVelocity likewise on the velocity components (0 when
	// the state has none).
	RMSEPosition float64 `json:"rmse_position"`
	RMSEVelocity float64 `json:"rmse_velocity"`
	// Steps is the number of steps on which a track was mapped to the
	// object (summed over runs in a summary).
	Steps int `json:"steps"`
}

// Metrics summarises a scenario's metrics over its runs.
type Metrics struct {
	Runs int `json:"runs"`
	// GOSPA is the per-step GOSPA averaged over runs.
	GOSPA     []float64 `json:"gospa"`
	MeanGOSPA float64   `json:"mean_gospa"`
	// NEES is the per-step average NEES: at each step, the mean of the
	// NEES values of every matched track with a covariance over all runs.
	// Steps without such a value are left out, as in RunMetrics.
	NEES []float64 `json:"nees,omitempty"`
	// NEESSteps, parallel to NEES, holds the step of each average, in
	// ascending order, so that plots place them at their steps. Empty in
	// a summary pooled from shards and in results written before it was
	// recorded; NEES is then in step order with the steps unknown.
	NEESSteps []int `json:"nees_steps,omitempty"`
	// NEESLowByStep and NEESHighByStep are parallel to NEES: the bounds of
	// the acceptance band of each average at confidence NEESConfidence,
	// for that step's own number of values M_k (runs × matched tracks),
	// [χ²_{n·M_k}⁻¹((1−c)/2), χ²_{n·M_k}⁻¹((1+c)/2)] / M_k with n the
	// state dimension. Both are empty when no band was computed (no NEES,
	// or a summary pooled from shards whose counts are not known); when
	// present, both have the length of NEES.
	NEESLowByStep  []float64 `json:"nees_low_by_step,omitempty"`
	NEESHighByStep []float64 `json:"nees_high_by_step,omitempty"`
	// NEESLow and NEESHigh are the single band [NEESLow, NEESHigh] shared
	// by every step, set only when every step of NEES has the same count
	// (then equal to every entry of NEESLowByStep and NEESHighByStep);
	// both 0 otherwise. Kept for readers of earlier results.
	NEESLow        float64 `json:"nees_low,omitempty"`
	NEESHigh       float64 `json:"nees_high,omitempty"`
	NEESConfidence float64 `json:"nees_confidence,omitempty"`
	// NEESInBand is the fraction of steps whose average NEES lies in the band.
	NEESInBand   float64 `json:"nees_in_band,omitempty"`
	PositionRMSE float64 `json:"position_rmse"`
	IDSwitches   int     `json:"id_switches"`
	FalseTracks  int     `json:"false_tracks"`
	// GOSPALocalisation, GOSPAMissed and GOSPAFalse are the per-step parts
	// of GOSPAᵖ (see RunMetrics) averaged over runs, parallel to GOSPA;
	// MeanGOSPALocalisation, MeanGOSPAMissed and MeanGOSPAFalse the means
	// over runs of the runs' time averages.
	GOSPALocalisation     []float64 `json:"gospa_localisation,omitempty"`
	GOSPAMissed           []float64 `json:"gospa_missed,omitempty"`
	GOSPAFalse            []float64 `json:"gospa_false,omitempty"`
	MeanGOSPALocalisation float64   `json:"mean_gospa_localisation,omitempty"`
	MeanGOSPAMissed       float64   `json:"mean_gospa_missed,omitempty"`
	MeanGOSPAFalse        float64   `json:"mean_gospa_false,omitempty"`
	// OSPA is the per-step OSPA averaged over runs, MeanOSPA the mean over
	// runs of the runs' time averages.
	OSPA     []float64 `json:"ospa,omitempty"`
	MeanOSPA float64   `json:"mean_ospa,omitempty"`
	// Objects pools each object's errors over the runs: RMSE² weighted by
	// the runs' step counts, Steps summed.
	Objects []ObjectError `json:"objects,omitempty"`
	// NIS, NISSteps, NISLowByStep, NISHighByStep, NISConfidence and
	// NISInBand are to the runs' NIS samples what the NEES fields are to
	// the NEES samples, with meas_dim degrees of freedom per sample.
	NIS           []float64 `json:"nis,omitempty"`
	NISSteps      []int     `json:"nis_steps,omitempty"`
	NISLowByStep  []float64 `json:"nis_low_by_step,omitempty"`
	NISHighByStep []float64 `json:"nis_high_by_step,omitempty"`
	NISConfidence float64   `json:"nis_confidence,omitempty"`
	NISInBand     float64   `json:"nis_in_band,omitempty"`
	// MeanNIS is the mean of every NIS sample of every run, and
	// NISSamplesInBand the fraction of them inside the two-sided 95 %
	// chi-square interval for meas_dim degrees of freedom.
	MeanNIS          float64 `json:"mean_nis,omitempty"`
	NISSamplesInBand float64 `json:"nis_samples_in_band,omitempty"`
}

// Gate is one statistical gate and its decision.
type Gate struct {
	Name   string `json:"name"`
	Status Status `json:"status"`
	// Estimate and the interval [Low, High] it was judged on, and the
	// threshold it was judged against. An absolute gate has
	// Low = High = Estimate. A paired gate reports the one-sided interval
	// [L₁, +Inf) at its confidence c: Low is the one-sided lower confidence
	// bound of the mean worsening (worse-direction units, so positive means
	// worse) and High is +Inf; the gate fails when Low > max(0, min_effect).
	Estimate  float64 `json:"estimate"`
	Low       float64 `json:"low"`
	High      float64 `json:"high"`
	Threshold float64 `json:"threshold"`
	Message   string  `json:"message"`
}

// Trace is what the plots of one run need: truth, detections and the
// reference's and the tracker's estimates, positions only.
type Trace struct {
	// Truth holds each object's true positions by step.
	Truth []Path `json:"truth"`
	// Detections holds, per step, the measured positions.
	Detections [][]Point `json:"detections"`
	// Reference and Tracker hold the estimated tracks, with 2-sigma
	// ellipses where covariances are known.
	Reference []Path `json:"reference"`
	Tracker   []Path `json:"tracker"`
	// Associations lists, per step, whether the tracker's association agreed
	// with the reference's ("same", "tie", "differs").
	Associations []string `json:"associations,omitempty"`
}

// Path is one object's or track's positions over time.
type Path struct {
	ID     string  `json:"id"`
	Points []Point `json:"points"`
}

// Point is a position at a step; in 1-D scenarios X is the position and Y
// is unused. Ellipse, when present, is the 2-sigma position covariance as
// [σxx, σxy, σyy].
type Point struct {
	Step    int         `json:"step"`
	X       float64     `json:"x"`
	Y       float64     `json:"y"`
	Ellipse *[3]float64 `json:"ellipse,omitempty"`
}
