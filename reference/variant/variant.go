package variant

import (
	"math/rand/v2"
	"strconv"

	"trackgate/harness/mot"
	"trackgate/reference/assign"
	"trackgate/reference/tracker"
)

// FlipMargin is the cost margin at or below which the tie-flip variant takes
// the reference's second-best hypothesis. A gate must use a tie margin of at
// least FlipMargin for tie-flip to pass.
const FlipMargin = 0.5

// NarrowGateProb is the gate probability of the narrow-gate variant.
const NarrowGateProb = 0.2

// FixedMissCost is the miss cost of the miss-without-pd variant: 0, as if
// 1 − P_D were 1.
const FixedMissCost = 0.0

// ShuffleSeed is the first PCG seed word of the shuffle variant; the second
// is the step.
const ShuffleSeed = 0x5eed_5ca1

// Variant is one named change to the reference tracker.
type Variant struct {
	Name string
	// Harmful says whether trackgate check must fail the variant (under
	// the float64-port profile).
	Harmful bool
	// Summary says in one sentence what is changed.
	Summary string
	// TieMargin is the smallest tie margin under which a gate must pass
	// the variant when it is harmless: FlipMargin for tie-flip, 0 for the
	// others.
	TieMargin float64
	ch        change
}

// StepFunc answers one scan of a run, as protocol.StepFunc does.
type StepFunc func(mot.Scan) (mot.Frame, error)

// New returns the step function of the variant for one run of cfg. Errors
// in cfg are reported by the first call.
func (v Variant) New(cfg tracker.Config) StepFunc {
	return newMachine(cfg, v.ch).Step
}

var catalogue = []Variant{
	{Name: "greedy", Harmful: true,
		Summary: "objects in order take their nearest free gated detection instead of the optimal assignment",
		ch:      change{choose: chooseGreedy}},
	{Name: "frozen-covariance", Harmful: true,
		Summary: "the covariance is not updated after a detection (P = P⁻)",
		ch:      change{settle: freezeCovariance}},
	{Name: "miss-without-pd", Harmful: true,
		Summary: "the miss cost is a fixed 0 instead of −ln(1 − P_D)",
		ch:      change{choose: chooseFixedMiss}},
	{Name: "narrow-gate", Harmful: true,
		Summary: "the gate probability is 0.2 instead of the scenario's",
		ch:      change{model: func(md mot.Model) mot.Model { md.GateProb = NarrowGateProb; return md }}},
	{Name: "no-clutter", Harmful: true,
		Summary: "the clutter intensity is taken as 1 whatever the scenario says",
		ch:      change{model: func(md mot.Model) mot.Model { md.ClutterDensity = 1; return md }}},
	{Name: "step-late", Harmful: true,
		Summary: "objects after their first step are predicted one interval too far",
		ch:      change{extra: 1}},
	{Name: "no-process-noise", Harmful: true,
		Summary: "the process noise Q is dropped from the prediction",
		ch: change{model: func(md mot.Model) mot.Model {
			clear(md.Q.Data)
			return md
		}}},
	{Name: "float32", Harmful: true,
		Summary: "states, covariances and costs are rounded to float32 (passes only the float32-port profile)",
		ch:      change{round: true, settle: roundPosterior}},
	{Name: "relabel", Summary: "tracks are renamed with a hash of the object id",
		ch: change{frame: relabelFrame}},
	{Name: "shuffle", Summary: "detections are permuted before association and tracks before replying",
		ch: change{scan: shuffleScan, frame: shuffleFrame}},
	{Name: "resum", Summary: "inner products of predict and update summed from the last term to the first, P⁻ = F (P Fᵀ) + Q",
		ch: change{predict: predictResum, update: updateResum}},
	{Name: "tie-flip", Summary: "the second-best hypothesis is taken when the margin is at most FlipMargin",
		TieMargin: FlipMargin, ch: change{choose: chooseFlip}},
	{Name: "fused", Summary: "predict and update written without float64(x*y) conversions, so multiply-adds may fuse",
		ch: change{predict: predictFused, update: updateFused}},
}

// All returns the catalogue in a fixed order: harmful variants first.
func All() []Variant { return append([]Variant(nil), catalogue...) }

// Lookup returns the variant with the given name.
func Lookup(name string) (Variant, bool) {
	for _, v := range catalogue {
		if v.Name == name {
			return v, true
		}
	}
	return Variant{}, false
}

// Names lists the variant names in catalogue order.
func Names() []string {
	out := make([]string, len(catalogue))
	for i, v := range catalogue {
		out[i] = v.Name
	}
	return out
}

// relabelFrame renames every track of f (see relabel).
func relabelFrame(f mot.Frame) mot.Frame {
	for i := range f.Tracks {
		f.Tracks[i].Track = relabel(f.Tracks[i].Track)
	}
	return f
}

// relabel maps an object id to a track name that shares nothing with it:
// "t" followed by the FNV-1a hash of the id, in base 36. Distinct ids give
// distinct names unless their 64-bit hashes collide.
func relabel(id string) string {
	h := uint64(14695981039346656037)
	for i := 0; i < len(id); i++ {
		h ^= uint64(id[i])
		h *= 1099511628211
	}
	return "t" + strconv.FormatUint(h, 36)
}

// chooseGreedy lets each row, in order, take the free gated detection of
// least cost; a row with none left misses.
func chooseGreedy(d *tracker.Detail) []int {
	taken := make(map[int]bool)
	out := make([]int, len(d.Costs.Objects))
	for i, row := range d.Costs.Gated {
		out[i] = mot.NoDetection
		best := -1
		for q, e := range row {
			if !taken[e.Col] && (best < 0 || e.Cost < row[best].Cost) {
				best = q
			}
		}
		if best >= 0 {
			taken[row[best].Col] = true
			out[i] = d.Costs.Detections[row[best].Col]
		}
	}
	return out
}

// chooseFixedMiss solves the augmented matrix optimally with every miss
// cost replaced by FixedMissCost.
func chooseFixedMiss(d *tracker.Detail) []int {
	cm := d.Costs
	r, nd := len(cm.Objects), len(cm.Detections)
	out := make([]int, r)
	for i := range out {
		out[i] = mot.NoDetection
	}
	if r == 0 {
		return out
	}
	miss := make([]float64, r)
	for i := range miss {
		miss[i] = FixedMissCost
	}
	fixed := tracker.CostMatrix{Objects: cm.Objects, Detections: cm.Detections, Gated: cm.Gated, Miss: miss}
	rowToCol, _, err := assign.Solve(fixed.Dense(), r, nd+r)
	if err != nil {
		// Every row has a finite miss, so the problem is always feasible;
		// keep the reference's choice should the solver refuse anyway.
		return nil
	}
	for i, c := range rowToCol {
		if c >= 0 && c < nd {
			out[i] = cm.Detections[c]
		}
	}
	return out
}

// chooseFlip takes the second-best hypothesis when the margin is at most
// FlipMargin.
func chooseFlip(d *tracker.Detail) []int {
	if len(d.Hypotheses) < 2 || !(d.Margin <= FlipMargin) {
		return nil
	}
	return d.Hypotheses[1].Assoc
}

func freezeCovariance(od *tracker.ObjectDetail) {
	if od.Detection != mot.NoDetection {
		copy(od.Cov.Data, od.PredCov.Data)
	}
}

func roundPosterior(od *tracker.ObjectDetail) {
	roundAll(od.Mean)
	roundAll(od.Cov.Data)
}

func roundAll(v []float64) {
	for i, x := range v {
		v[i] = float64(float32(x))
	}
}

func shuffleScan(s mot.Scan) mot.Scan {
	rng := rand.New(rand.NewPCG(ShuffleSeed, uint64(s.Step)))
	dets := append([]mot.Detection(nil), s.Detections...)
	rng.Shuffle(len(dets), func(i, j int) { dets[i], dets[j] = dets[j], dets[i] })
	s.Detections = dets
	return s
}

func shuffleFrame(f mot.Frame) mot.Frame {
	rng := rand.New(rand.NewPCG(ShuffleSeed+1, uint64(f.Step)))
	rng.Shuffle(len(f.Tracks), func(i, j int) { f.Tracks[i], f.Tracks[j] = f.Tracks[j], f.Tracks[i] })
	return f
}
