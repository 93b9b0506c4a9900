package sim

import (
	"fmt"
	"math"
	"math/rand/v2"

	"trackgate/harness/mot"
	"trackgate/harness/scenario"
)

// MaxClutterMean is the largest clutter mean per scan the simulator accepts;
// it keeps a run's size bounded by the scenario rather than by chance. It
// is the scenario loader's limit, so that a scenario that loads can be
// simulated.
const MaxClutterMean = scenario.MaxClutterMean

// Sim is a scenario prepared for simulation: the spec checked and the
// noise covariances factored once, so that many runs share the work. A Sim
// is safe for concurrent use; it is never modified after Prepare.
type Sim struct {
	spec *scenario.Spec
	n, m int
	// procG, measG are the factors of Q and R (see factor); priorG[i] is
	// the factor of object i's prior covariance, nil when it starts at the
	// prior mean.
	procG, measG []float64
	priorG       [][]float64
	// width[j] = ClutterMax[j] − ClutterMin[j].
	width []float64
	// scripted[k] is the scripted scan of step k, or nil.
	scripted []*scenario.ScriptedScan
}

// Prepare checks that spec can be simulated and factors its covariances.
// The error names the field and what was expected; spec is not modified and
// must not be modified while the Sim is in use.
func Prepare(spec *scenario.Spec) (*Sim, error) {
	s, err := prepare(spec)
	if err != nil {
		name := ""
		if spec != nil {
			name = spec.Name
			if spec.File != "" {
				name = spec.File
			}
		}
		return nil, fmt.Errorf("sim: scenario %q: %w", name, err)
	}
	return s, nil
}

func prepare(spec *scenario.Spec) (*Sim, error) {
	if spec == nil {
		return nil, fmt.Errorf("no scenario")
	}
	md := &spec.Model
	n, m := md.StateDim, md.MeasDim
	if n < 1 {
		return nil, fmt.Errorf("model.state-dim: expected at least 1, got %d", n)
	}
	if m < 1 {
		return nil, fmt.Errorf("model.meas-dim: expected at least 1, got %d", m)
	}
	if spec.Steps < 0 {
		return nil, fmt.Errorf("steps: expected at least 0, got %d", spec.Steps)
	}
	if !(md.Interval > 0) || math.IsInf(md.Interval, 0) {
		return nil, fmt.Errorf("interval: expected a finite number > 0, got %v", md.Interval)
	}
	if err := checkShape("model.F", md.F, n, n); err != nil {
		return nil, err
	}
	if err := checkShape("model.H", md.H, m, n); err != nil {
		return nil, err
	}
	s := &Sim{spec: spec, n: n, m: m}
	var err error
	if s.procG, err = factor("model.Q", md.Q); err != nil {
		return nil, err
	}
	if md.Q.Rows != n {
		return nil, fmt.Errorf("model.Q: expected %d×%d, got %d×%d", n, n, md.Q.Rows, md.Q.Cols)
	}
	if s.measG, err = factor("model.R", md.R); err != nil {
		return nil, err
	}
	if md.R.Rows != m {
		return nil, fmt.Errorf("model.R: expected %d×%d, got %d×%d", m, m, md.R.Rows, md.R.Cols)
	}
	if !(md.PD >= 0 && md.PD <= 1) {
		return nil, fmt.Errorf("detection-probability: expected a number in [0, 1], got %v", md.PD)
	}
	if !(md.ClutterMean >= 0 && md.ClutterMean <= MaxClutterMean) {
		return nil, fmt.Errorf("clutter.mean-count: expected a number in [0, %g], got %v", float64(MaxClutterMean), md.ClutterMean)
	}
	if md.ClutterMean > 0 {
		if len(md.ClutterMin) != m || len(md.ClutterMax) != m {
			return nil, fmt.Errorf("clutter.region: expected min and max of length %d, got %d and %d", m, len(md.ClutterMin), len(md.ClutterMax))
		}
		s.width = make([]float64, m)
		for j := range m {
			lo, hi := md.ClutterMin[j], md.ClutterMax[j]
			w := hi - lo
			if math.IsNaN(w) || math.IsInf(w, 0) || w < 0 {
				return nil, fmt.Errorf("clutter.region: expected finite min[%d] ≤ max[%d], got %v and %v", j, j, lo, hi)
			}
			s.width[j] = w
		}
	}
	seen := make(map[string]bool, len(spec.Objects))
	s.priorG = make([][]float64, len(spec.Objects))
	for i, o := range spec.Objects {
		field := fmt.Sprintf("objects[%d]", i)
		if o.ID == "" {
			return nil, fmt.Errorf("%s.id: expected a non-empty id", field)
		}
		if seen[o.ID] {
			return nil, fmt.Errorf("%s.id: expected a unique id, %q is used twice", field, o.ID)
		}
		seen[o.ID] = true
		if len(o.Mean) != n {
			return nil, fmt.Errorf("%s.prior.mean: expected %d values, got %d", field, n, len(o.Mean))
		}
		for j, v := range o.Mean {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%s.prior.mean[%d]: expected a finite number, got %v", field, j, v)
			}
		}
		if o.Appear < 0 {
			return nil, fmt.Errorf("%s.appear: expected at least 0, got %d", field, o.Appear)
		}
		if o.Disappear != -1 && o.Disappear <= o.Appear {
			return nil, fmt.Errorf("%s.disappear: expected -1 (never) or a step after appear (%d), got %d", field, o.Appear, o.Disappear)
		}
		if o.DrawStart {
			if o.Cov.Rows != n {
				return nil, fmt.Errorf("%s.prior.cov: expected %d×%d, got %d×%d", field, n, n, o.Cov.Rows, o.Cov.Cols)
			}
			if s.priorG[i], err = factor(field+".prior.cov", o.Cov); err != nil {
				return nil, err
			}
		}
	}
	s.scripted = make([]*scenario.ScriptedScan, spec.Steps)
	for i := range spec.Scripted {
		sc := &spec.Scripted[i]
		field := fmt.Sprintf("scripted[%d]", i)
		if sc.Step < 0 || sc.Step >= spec.Steps {
			return nil, fmt.Errorf("%s.step: expected a step in [0, %d), got %d", field, spec.Steps, sc.Step)
		}
		if s.scripted[sc.Step] != nil {
			return nil, fmt.Errorf("%s.step: step %d is scripted twice", field, sc.Step)
		}
		s.scripted[sc.Step] = sc
		for j, d := range sc.Detections {
			if len(d.Z) != m {
				return nil, fmt.Errorf("%s.detections[%d].at: expected %d values, got %d", field, j, m, len(d.Z))
			}
			for _, v := range d.Z {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, fmt.Errorf("%s.detections[%d].at: expected finite numbers, got %v", field, j, v)
				}
			}
			if d.Object != "" && !seen[d.Object] {
				return nil, fmt.Errorf("%s.detections[%d].from: expected an object id, got %q", field, j, d.Object)
			}
		}
	}
	return s, nil
}

func checkShape(what string, a mot.Mat, rows, cols int) error {
	if a.Rows != rows || a.Cols != cols || len(a.Data) != rows*cols {
		return fmt.Errorf("%s: expected %d×%d, got %d×%d", what, rows, cols, a.Rows, a.Cols)
	}
	for i, v := range a.Data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%s[%d][%d]: expected a finite number, got %v", what, i/cols, i%cols, v)
		}
	}
	return nil
}

// Run simulates Monte Carlo run `run` of spec. It panics, with a "sim: "
// message, when spec cannot be simulated; use Prepare to get that as an
// error.
func Run(spec *scenario.Spec, run int) mot.Run {
	s, err := Prepare(spec)
	if err != nil {
		panic(err.Error())
	}
	return s.Run(run)
}

// Run simulates Monte Carlo run `run` (from 0) from the seed
// RunSeed(spec.Seed, run). The same Sim and run always give the same result,
// bit for bit, on every architecture. A negative run panics.
func (s *Sim) Run(run int) mot.Run {
	spec := s.spec
	md := &spec.Model
	n, m := s.n, s.m
	seed := RunSeed(spec.Seed, run)
	out := mot.Run{
		Index: run,
		Seed:  seed,
		Scans: make([]mot.Scan, spec.Steps),
		Truth: make([]mot.Truth, spec.Steps),
	}

	objs := spec.Objects
	state := make([][]float64, len(objs))
	rngs := make([]*rand.Rand, len(objs))
	for i := range objs {
		rngs[i] = rand.New(rand.NewPCG(streamSeeds(seed, streamObject, i)))
	}
	scanSrc := rand.NewPCG(0, 0)
	scanRng := rand.New(scanSrc)
	scratch := make([]float64, max(n, m))
	noise := make([]float64, max(n, m))

	// pending collects one scan's detections before the shuffle.
	type pending struct {
		z    []float64
		from string
	}
	var scan []pending
	nextID := 0

	for k := 0; k < spec.Steps; k++ {
		// Truth: start or propagate every living object. The states of a
		// step share one backing array.
		living := 0
		for i := range objs {
			if objs[i].Alive(k) {
				living++
			}
		}
		flat := make([]float64, living*n)
		alive := make([]mot.TruthState, 0, living)
		for i := range objs {
			o := &objs[i]
			if !o.Alive(k) {
				state[i] = nil
				continue
			}
			x := flat[:n:n]
			flat = flat[n:]
			if k == o.Appear {
				copy(x, o.Mean)
				if o.DrawStart {
					gaussTo(noise[:n], s.priorG[i], scratch, rngs[i])
					for j := range x {
						x[j] += noise[j]
					}
				}
			} else {
				gaussTo(noise[:n], s.procG, scratch, rngs[i])
				prev := state[i]
				for r := 0; r < n; r++ {
					var v float64
					for c := 0; c < n; c++ {
						v += float64(md.F.Data[r*n+c] * prev[c])
					}
					x[r] = v + noise[r]
				}
			}
			state[i] = x
			alive = append(alive, mot.TruthState{Object: o.ID, X: x})
		}
		out.Truth[k] = mot.Truth{Step: k, Objects: alive}

		// The scan: scripted, or simulated from the step's own stream.
		scan = scan[:0]
		if sc := s.scripted[k]; sc != nil {
			for _, d := range sc.Detections {
				scan = append(scan, pending{z: append([]float64(nil), d.Z...), from: d.Object})
			}
		} else {
			scanSrc.Seed(streamSeeds(seed, streamScan, k))
			zs := make([]float64, living*m)
			for i := range objs {
				x := state[i]
				if x == nil {
					continue
				}
				if !(scanRng.Float64() < md.PD) {
					continue
				}
				gaussTo(noise[:m], s.measG, scratch, scanRng)
				z := zs[:m:m]
				zs = zs[m:]
				for r := 0; r < m; r++ {
					var v float64
					for c := 0; c < n; c++ {
						v += float64(md.H.Data[r*n+c] * x[c])
					}
					z[r] = v + noise[r]
				}
				scan = append(scan, pending{z: z, from: objs[i].ID})
			}
			if md.ClutterMean > 0 {
				count := poisson(scanRng, md.ClutterMean)
				flat := make([]float64, count*m)
				for c := 0; c < count; c++ {
					z := flat[c*m : (c+1)*m : (c+1)*m]
					for j := range z {
						z[j] = md.ClutterMin[j] + float64(s.width[j]*scanRng.Float64())
					}
					scan = append(scan, pending{z: z})
				}
			}
			scanRng.Shuffle(len(scan), func(i, j int) { scan[i], scan[j] = scan[j], scan[i] })
		}
		dets := make([]mot.Detection, len(scan))
		origins := make([]mot.Origin, len(scan))
		for i, p := range scan {
			dets[i] = mot.Detection{ID: nextID, Z: p.z}
			origins[i] = mot.Origin{Detection: nextID, Object: p.from}
			nextID++
		}
		out.Scans[k] = mot.Scan{Step: k, Time: float64(k) * md.Interval, Detections: dets}
		out.Truth[k].Origins = origins
	}
	return out
}
