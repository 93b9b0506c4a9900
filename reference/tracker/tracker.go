package tracker

import (
	"fmt"
	"math"

	"trackgate/harness/mot"
	"trackgate/reference/kalman"
)

// DefaultK is the number of hypotheses ranked per scan when Config.K is 0.
const DefaultK = 10

// DefaultEnumLimit is the largest number of candidate association events a
// cluster may have for exhaustive enumeration when Config.EnumLimit is 0.
const DefaultEnumLimit = 4096

// MinClutterDensity is the floor that replaces a clutter intensity λ of 0
// in the association cost (see the package documentation).
const MinClutterDensity = 1e-300

// Config configures a reference run.
type Config struct {
	// Model is the scenario's linear-Gaussian model, including PD,
	// ClutterDensity and GateProb (0 means 0.999).
	Model mot.Model
	// Objects are the known objects, in the order they are reported.
	Objects []mot.Object
	// K is the number of hypotheses ranked per scan; 0 means DefaultK.
	K int
	// EnumLimit bounds exhaustive enumeration per cluster; 0 means
	// DefaultEnumLimit, a negative value turns enumeration off.
	EnumLimit int
}

// CostMatrix is the gated, augmented cost matrix of one scan in sparse form:
// row i is object Objects[i], column j < len(Detections) is detection
// Detections[j], and column len(Detections)+i is the miss of object i.
type CostMatrix struct {
	Objects    []string
	Detections []int
	// Gated lists, per row, the detection columns inside the gate with
	// their costs, in increasing column order; every other detection column
	// is +Inf.
	Gated [][]Entry
	// Miss is the miss cost per row, −ln(1 − P_D) (+Inf when P_D = 1); the
	// miss columns of the other rows are +Inf.
	Miss []float64
}

// Entry is one finite entry of a cost matrix row.
type Entry struct {
	Col  int
	Cost float64
}

// Dense returns the augmented matrix, rows × (len(Detections) + rows),
// row-major, with +Inf for forbidden pairs.
func (c *CostMatrix) Dense() []float64 {
	r, d := len(c.Objects), len(c.Detections)
	cols := d + r
	out := make([]float64, r*cols)
	for i := range out {
		out[i] = math.Inf(1)
	}
	for i := 0; i < r; i++ {
		for _, e := range c.Gated[i] {
			out[i*cols+e.Col] = e.Cost
		}
		out[i*cols+d+i] = c.Miss[i]
	}
	return out
}

// ObjectDetail is what the reference did with one live object at one step.
type ObjectDetail struct {
	Object string
	// PredMean and PredCov are the predicted state for the step (the prior
	// at the object's first step).
	PredMean []float64
	PredCov  mot.Mat
	// Detection is the id of the detection the object was updated with, or
	// mot.NoDetection for a miss or when the object coasts.
	Detection int
	// Mean and Cov are the updated state (the prediction on a miss).
	Mean []float64
	Cov  mot.Mat
	// NIS is the normalised innovation squared of the update; NaN when
	// Detection is mot.NoDetection.
	NIS float64
	// Coasting reports that the object's cluster had no feasible
	// association (possible only with P_D = 1).
	Coasting bool
	// Cluster is the index in Detail.PerCluster of the object's cluster.
	Cluster int
}

// ClusterDetail is one cluster of a scan (a connected component of the
// gating graph) judged on its own. The posterior of the scan factorises
// over its clusters (see the package documentation), so a cluster's
// hypotheses, margin and probabilities do not depend on the other clusters.
type ClusterDetail struct {
	// Rows are the rows of Detail.Objects in the cluster, increasing.
	Rows []int
	// Detections are the ids of the detections gated by its objects, in
	// scan order.
	Detections []int
	// Cost is the cost of its best hypothesis (0 when it coasts).
	Cost float64
	// Margin is cost(2nd best) − cost(best) of the cluster alone, +Inf
	// when it has a single hypothesis or none.
	Margin float64
	// Hypotheses are its k best, best first; Assoc gives the detection id
	// or mot.NoDetection per entry of Rows. Prob is the cluster's own
	// posterior: exact when Exhaustive, else normalised over the list.
	Hypotheses []Hypothesis
	// Exhaustive reports that every association event of the cluster was
	// enumerated, so its probabilities are exact.
	Exhaustive bool
	// Coasting reports that the cluster had no feasible association.
	Coasting bool
}

// Hypothesis is one association event of a scan.
type Hypothesis struct {
	// Cost is the sum of the augmented-matrix entries it uses.
	Cost float64
	// Prob is its probability (see the package documentation).
	Prob float64
	// Assoc gives, per row of Detail.Objects, the detection id or
	// mot.NoDetection.
	Assoc []int
}

// Detail is the full record of one reference step.
type Detail struct {
	Step int
	// Objects holds the live objects, in Config order.
	Objects []ObjectDetail
	// Costs is the gated cost matrix of the scan.
	Costs CostMatrix
	// Cost is the cost of the chosen (best) hypothesis.
	Cost float64
	// Hypotheses are the k best, best first.
	Hypotheses []Hypothesis
	// Margin is cost(2nd best) − cost(best), +Inf with one hypothesis:
	// the smallest PerCluster margin.
	Margin float64
	// BestProb is the probability of the best hypothesis.
	BestProb float64
	// CoveredMass is the share of the posterior mass the listed hypotheses
	// hold: exact when Exhaustive, a lower bound otherwise.
	CoveredMass float64
	// Exhaustive reports that every association event was enumerated, so
	// the probabilities are exact posteriors.
	Exhaustive bool
	// Clusters is the number of independent clusters solved.
	Clusters int
	// PerCluster describes each cluster, in order of its first row
	// (len(PerCluster) == Clusters). ObjectDetail.Cluster indexes it.
	PerCluster []ClusterDetail
	// Coasting lists the objects of clusters with no feasible association.
	Coasting []string
}

// Tracker is the reference tracker for one run. Create it with New.
type Tracker struct {
	cfg    Config
	err    error
	eng    *engine
	states []objState
	last   int
	began  bool
}

type objState struct {
	started bool
	x, p    []float64
}

// New returns a reference tracker for cfg. Configuration errors are
// reported by the first Step.
func New(cfg Config) *Tracker {
	t := &Tracker{cfg: cfg, states: make([]objState, len(cfg.Objects))}
	t.eng, t.err = newEngine(cfg.Model, cfg.K, cfg.EnumLimit)
	if t.err == nil {
		t.err = checkObjects(cfg.Model, cfg.Objects)
	}
	return t
}

func checkObjects(md mot.Model, objs []mot.Object) error {
	seen := map[string]bool{}
	n := md.StateDim
	for i, o := range objs {
		if o.ID == "" || seen[o.ID] {
			return fmt.Errorf("tracker: object %d: id %q is empty or repeated, want a unique id", i, o.ID)
		}
		seen[o.ID] = true
		if len(o.Mean) != n || o.Cov.Rows != n || o.Cov.Cols != n || len(o.Cov.Data) != n*n {
			return fmt.Errorf("tracker: object %q: prior of length %d with %d×%d covariance, want %d and %d×%d", o.ID, len(o.Mean), o.Cov.Rows, o.Cov.Cols, n, n, n)
		}
		for j, v := range o.Mean {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("tracker: object %q: prior mean[%d] is %g, want a finite number", o.ID, j, v)
			}
		}
		for j, v := range o.Cov.Data {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("tracker: object %q: prior covariance entry (%d, %d) is %g, want a finite number", o.ID, j/n, j%n, v)
			}
		}
		if o.Appear < 0 {
			return fmt.Errorf("tracker: object %q: appear %d, want ≥ 0", o.ID, o.Appear)
		}
	}
	return nil
}

// Step runs the reference on one scan: it starts objects that appear,
// predicts the others, drops those that disappeared, associates and
// updates. Scans must come in increasing step order; a gap of g steps
// predicts g times. The Frame names each track by its object id.
func (t *Tracker) Step(scan mot.Scan) (mot.Frame, Detail, error) {
	if t.err != nil {
		return mot.Frame{}, Detail{}, t.err
	}
	k := scan.Step
	if t.began && k <= t.last {
		return mot.Frame{}, Detail{}, fmt.Errorf("tracker: step %d after step %d, want increasing steps", k, t.last)
	}
	var ids []string
	var xs, ps [][]float64
	var rows []int
	for i, o := range t.cfg.Objects {
		st := &t.states[i]
		if !o.Alive(k) {
			if st.started {
				*st = objState{}
			}
			continue
		}
		var from int
		if !st.started {
			st.started = true
			st.x = append([]float64(nil), o.Mean...)
			st.p = append([]float64(nil), o.Cov.Data...)
			from = o.Appear
		} else {
			from = t.last
		}
		for s := from; s < k; s++ {
			t.eng.f.PredictTo(st.x, st.p, st.x, st.p)
		}
		ids = append(ids, o.ID)
		xs = append(xs, st.x)
		ps = append(ps, st.p)
		rows = append(rows, i)
	}
	t.began, t.last = true, k
	d, err := t.eng.associate(k, ids, xs, ps, scan)
	if err != nil {
		return mot.Frame{}, Detail{}, err
	}
	fr := mot.Frame{Step: k, Tracks: make([]mot.Estimate, len(d.Objects))}
	for r, od := range d.Objects {
		st := &t.states[rows[r]]
		copy(st.x, od.Mean)
		copy(st.p, od.Cov.Data)
		fr.Tracks[r] = mot.Estimate{
			Track: od.Object, Mean: append([]float64(nil), od.Mean...), Cov: od.Cov.Clone(),
			Detection: od.Detection, HasDetection: true,
		}
	}
	return fr, d, nil
}

// State is one track handed to StepFrom.
type State struct {
	ID   string
	Mean []float64
	Cov  mot.Mat
	// Predicted reports that Mean and Cov are already the predicted state
	// for the scan's step (as an object's prior is at its first step).
	// Otherwise they are the estimate at the previous step and are
	// predicted once.
	Predicted bool
}

// StepFrom is the stateless single step of the reference: it predicts the
// given states (unless marked Predicted), associates them with the scan and
// updates them, exactly as Step does for its own objects. k and enumLimit
// have the meaning of Config.K and Config.EnumLimit. It is meant for
// conformance checks that restart the reference from another tracker's
// estimate at step k−1. The states are not modified.
func StepFrom(model mot.Model, states []State, scan mot.Scan, k, enumLimit int) (Detail, error) {
	return stepStates(model, states, scan, k, enumLimit, nil)
}

// StepWith is StepFrom with the association of some objects given rather
// than chosen: force maps an object id to the id of the detection it is
// updated with, or to mot.NoDetection for a miss. It is meant for
// following another tracker down a branch the reference ranks below its
// best, as after a tie that tracker resolved the other way.
//
// Forcing is by whole clusters: every object of a cluster that holds a
// forced object must be named, and the forced event must be feasible
// (each detection in the object's gate and used once, a miss only when
// P_D < 1); otherwise StepWith returns an error naming the step, object
// and detection. Clusters without a forced object take their best
// hypothesis, exactly as in StepFrom. The ranking of the scan (Cost,
// Hypotheses, Margin, BestProb, CoveredMass, PerCluster) is that of
// StepFrom, unchanged by the forcing; ObjectDetail's Detection, Mean, Cov
// and NIS follow the association used. An empty or nil force is StepFrom.
func StepWith(model mot.Model, states []State, scan mot.Scan, k, enumLimit int, force map[string]int) (Detail, error) {
	if len(force) == 0 {
		force = nil
	}
	return stepStates(model, states, scan, k, enumLimit, force)
}

func stepStates(model mot.Model, states []State, scan mot.Scan, k, enumLimit int, force map[string]int) (Detail, error) {
	eng, err := newEngine(model, k, enumLimit)
	if err != nil {
		return Detail{}, err
	}
	eng.force = force
	n := model.StateDim
	ids := make([]string, len(states))
	xs := make([][]float64, len(states))
	ps := make([][]float64, len(states))
	seen := map[string]bool{}
	for i, s := range states {
		if s.ID == "" || seen[s.ID] {
			return Detail{}, fmt.Errorf("tracker: state %d: id %q is empty or repeated, want a unique id", i, s.ID)
		}
		seen[s.ID] = true
		if len(s.Mean) != n || s.Cov.Rows != n || s.Cov.Cols != n || len(s.Cov.Data) != n*n {
			return Detail{}, fmt.Errorf("tracker: state %q: mean of length %d with %d×%d covariance, want %d and %d×%d", s.ID, len(s.Mean), s.Cov.Rows, s.Cov.Cols, n, n, n)
		}
		for j, v := range s.Mean {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return Detail{}, fmt.Errorf("tracker: state %q: mean[%d] is %g, want a finite number", s.ID, j, v)
			}
		}
		ids[i] = s.ID
		xs[i] = append([]float64(nil), s.Mean...)
		ps[i] = append([]float64(nil), s.Cov.Data...)
		if !s.Predicted {
			eng.f.PredictTo(xs[i], ps[i], xs[i], ps[i])
		}
	}
	return eng.associate(scan.Step, ids, xs, ps, scan)
}

// engine holds what one association needs: the filter, the gate and the
// cost constants.
type engine struct {
	f         *kalman.Filter
	m         int
	gamma     float64
	logPD     float64
	missCost  float64
	logLambda float64
	k         int
	enumLimit int
	// force, when not nil, gives the association of named objects
	// (StepWith).
	force map[string]int
}

func newEngine(md mot.Model, k, enumLimit int) (*engine, error) {
	f, err := kalman.New(md)
	if err != nil {
		return nil, fmt.Errorf("tracker: %w", err)
	}
	if !(md.PD > 0 && md.PD <= 1) {
		return nil, fmt.Errorf("tracker: detection probability %g, want a number in (0, 1]", md.PD)
	}
	lam := md.ClutterDensity
	if !(lam >= 0) || math.IsInf(lam, 0) {
		return nil, fmt.Errorf("tracker: clutter density %g, want a finite number ≥ 0", lam)
	}
	if lam < MinClutterDensity {
		lam = MinClutterDensity
	}
	pg := md.GateProb
	if pg == 0 {
		pg = 0.999
	}
	gamma, err := kalman.Threshold(md.MeasDim, pg)
	if err != nil {
		return nil, fmt.Errorf("tracker: %w", err)
	}
	if k == 0 {
		k = DefaultK
	}
	if k < 1 {
		return nil, fmt.Errorf("tracker: %d hypotheses, want ≥ 1", k)
	}
	if enumLimit == 0 {
		enumLimit = DefaultEnumLimit
	}
	return &engine{
		f: f, m: md.MeasDim, gamma: gamma,
		logPD:     math.Log(md.PD),
		missCost:  -math.Log1p(-md.PD), // +Inf when PD = 1
		logLambda: math.Log(lam),
		k:         k, enumLimit: enumLimit,
	}, nil
}
