package scenario

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"trackgate/harness/mot"
	"trackgate/harness/motion"
)

// Limits on what one scenario file may ask for.
const (
	// MaxFileSize is the largest scenario file read, in bytes (4 MiB).
	MaxFileSize = 4 << 20
	// MaxSteps bounds steps, MaxRuns bounds runs, and MaxRandomWalkDim
	// bounds the state dimension of a random walk.
	MaxSteps         = 100000
	MaxRuns          = 10000
	MaxRandomWalkDim = 12
	// MaxErrors is the most errors reported for one file; a final line
	// says when more were found.
	MaxErrors = 100
	// DefaultGateProb is GateProb when the file does not give one.
	DefaultGateProb = 0.999
	// MaxClutterMean is the largest clutter mean per scan, given as
	// mean-count or derived from density × region volume; it keeps a
	// run's size bounded by the scenario rather than by chance. The
	// simulator enforces the same limit.
	MaxClutterMean = 1e6
)

var (
	nameRE = regexp.MustCompile(`^[a-z0-9]+(-[a-z0-9]+)*$`)
	idRE   = regexp.MustCompile(`^[a-z0-9][a-z0-9_-]*$`)
	lineRE = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)
)

var (
	topKeys     = []string{"format", "name", "description", "seed", "steps", "interval", "runs", "motion", "sensor", "detection-probability", "gate-probability", "clutter", "objects", "scripted"}
	motionKeys  = []string{"kind", "axes", "accel-noise", "turn-rate", "variance", "covariance"}
	sensorKeys  = []string{"observe", "noise"}
	clutterKeys = []string{"region", "mean-count", "density"}
	regionKeys  = []string{"min", "max"}
	objectKeys  = []string{"id", "prior", "start", "appear", "disappear"}
	priorKeys   = []string{"mean", "cov"}
	scriptKeys  = []string{"step", "detections"}
	detKeys     = []string{"at", "from"}
)

// Load reads and checks the scenario file at path; see Parse.
func Load(path string) (*Spec, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, ErrorList{{File: path, Msg: "cannot read: " + unwrapPath(err)}}
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, MaxFileSize+1))
	if err != nil {
		return nil, ErrorList{{File: path, Msg: "cannot read: " + unwrapPath(err)}}
	}
	return Parse(path, data)
}

func unwrapPath(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Parse checks the scenario in data, naming it name in errors and in
// Spec.File. On any problem it returns a nil Spec and an ErrorList holding
// every problem found, sorted by position.
func Parse(name string, data []byte) (*Spec, error) {
	w := &walker{file: name}
	if len(data) > MaxFileSize {
		return nil, ErrorList{{File: name, Msg: fmt.Sprintf("file is larger than %d bytes (4 MiB); expected a scenario file of a few kilobytes", MaxFileSize)}}
	}
	root := w.document(data)
	if root == nil {
		return nil, w.errs
	}
	w.reportAliases(root)
	s := w.spec(root)
	if len(w.errs) > 0 {
		l := w.errs.sort()
		if len(l) > MaxErrors {
			l = append(l[:MaxErrors:MaxErrors], &Error{File: name, Msg: fmt.Sprintf("too many errors; stopped after %d", MaxErrors)})
		}
		return nil, l
	}
	sum := sha256.Sum256(data)
	s.File = name
	s.Hash = hex.EncodeToString(sum[:])
	return s, nil
}

// document parses data as exactly one YAML document and returns its root
// node, or nil after recording why not.
func (w *walker) document(data []byte) (root *yaml.Node) {
	// The decoder reports errors by panicking internally and recovering;
	// should one escape (older releases had such bugs), it becomes an error
	// of the file rather than a crash of the program.
	defer func() {
		if r := recover(); r != nil {
			w.errs = append(w.errs, &Error{File: w.file, Msg: fmt.Sprintf("invalid YAML: the decoder failed: %v", r)})
			root = nil
		}
	}()
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	err := dec.Decode(&doc)
	if err == io.EOF {
		w.errs = append(w.errs, &Error{File: w.file, Msg: "file is empty; expected a scenario mapping starting with 'format: 1'"})
		return nil
	}
	if err != nil {
		w.syntax(err)
		return nil
	}
	var next yaml.Node
	switch err := dec.Decode(&next); {
	case err == io.EOF:
	case err != nil:
		w.syntax(err)
		return nil
	default:
		w.errs = append(w.errs, &Error{File: w.file, Line: next.Line, Col: next.Column, Msg: "a second YAML document; expected exactly one document per scenario file"})
		return nil
	}
	if doc.Kind != yaml.DocumentNode || len(doc.Content) != 1 {
		w.errs = append(w.errs, &Error{File: w.file, Msg: "no YAML document; expected a scenario mapping"})
		return nil
	}
	root = doc.Content[0]
	if root.Kind == yaml.ScalarNode && root.ShortTag() == "!!null" {
		w.errs = append(w.errs, &Error{File: w.file, Msg: "document is empty; expected a scenario mapping starting with 'format: 1'"})
		return nil
	}
	return root
}

// syntax records a YAML syntax error, keeping its line when the decoder
// gives one (it gives no column).
func (w *walker) syntax(err error) {
	msg := err.Error()
	e := &Error{File: w.file}
	if m := lineRE.FindStringSubmatch(msg); m != nil {
		e.Line, _ = strconv.Atoi(m[1])
		msg = m[2]
	} else {
		msg = strings.TrimPrefix(msg, "yaml: ")
	}
	e.Msg = "invalid YAML: " + msg
	w.errs = append(w.errs, e)
}

// declared holds what the motion section declares, before Δt is known.
type declared struct {
	motion   Motion
	variance []float64 // random walk given as per-dimension variances
	n        int       // state dimension, 0 when unknown
	// accelNode and turnNode are the accel-noise and turn-rate values,
	// nil when absent.
	accelNode, turnNode *yaml.Node
}

func (w *walker) spec(root *yaml.Node) *Spec {
	s := &Spec{Runs: 1, Model: mot.Model{GateProb: DefaultGateProb}}
	top, ok := w.mapping(root, "", topKeys)
	if !ok {
		return nil
	}
	if n := w.require(top, "format", "the format version 1"); n != nil {
		if v, ok := w.intVal(n, "format", "the format version 1"); ok {
			if v != FormatVersion {
				w.errAt(n, "format", "unsupported format %d; expected %d, the version this program reads", v, FormatVersion)
			}
			s.Format = int(v)
		}
	}
	if n := w.require(top, "name", "a name of lower-case words joined by '-'"); n != nil {
		if v, ok := w.strVal(n, "name", "a name of lower-case words joined by '-'"); ok {
			if !nameRE.MatchString(v) || len(v) > 64 {
				w.errAt(n, "name", "%q is not a valid name; expected lower-case letters and digits in words joined by '-', at most 64 characters", v)
			}
			s.Name = v
		}
	}
	if n := w.require(top, "description", "one line saying what the scenario stresses"); n != nil {
		if v, ok := w.strVal(n, "description", "one line saying what the scenario stresses"); ok {
			switch {
			case strings.TrimSpace(v) == "":
				w.errAt(n, "description", "is blank; expected one line saying what the scenario stresses")
			case strings.ContainsAny(strings.TrimRight(v, "\n"), "\n\r"):
				w.errAt(n, "description", "has several lines; expected one line")
			}
			s.Description = strings.TrimSpace(v)
		}
	}
	if n := w.require(top, "seed", "an unsigned 64-bit integer, 0 to 18446744073709551615"); n != nil {
		s.Seed, _ = w.uintVal(n, "seed", "an unsigned 64-bit integer, 0 to 18446744073709551615")
	}
	stepsOK := false
	if n := w.require(top, "steps", fmt.Sprintf("the number of scans per run, 1 to %d", MaxSteps)); n != nil {
		s.Steps, stepsOK = w.intIn(n, "steps", fmt.Sprintf("the number of scans per run, 1 to %d", MaxSteps), 1, MaxSteps)
	}
	intervalOK := false
	if n := w.require(top, "interval", "the seconds between scans, a number > 0"); n != nil {
		if v, ok := w.floatVal(n, "interval", "the seconds between scans, a number > 0"); ok {
			if v <= 0 {
				w.errAt(n, "interval", "%g is not positive; expected the seconds between scans, a number > 0", v)
			} else {
				s.Model.Interval, intervalOK = v, true
			}
		}
	}
	if n := top.val["runs"]; n != nil {
		s.Runs, _ = w.intIn(n, "runs", fmt.Sprintf("the number of Monte Carlo runs, 1 to %d", MaxRuns), 1, MaxRuns)
	}

	var d declared
	if n := w.require(top, "motion", "a mapping with the motion model (kind, axes, ...)"); n != nil {
		d = w.motion(n)
	}
	s.Motion = d.motion
	m := 0
	if n := w.require(top, "sensor", "a mapping with the sensor's noise (and optionally observe)"); n != nil {
		m = w.sensor(n, d, &s.Model)
	}
	if n := w.require(top, "detection-probability", "the probability of detection, a number in (0, 1]"); n != nil {
		if v, ok := w.floatVal(n, "detection-probability", "a number in (0, 1]"); ok {
			if !(v > 0 && v <= 1) {
				w.errAt(n, "detection-probability", "%g is outside (0, 1]; expected a probability greater than 0 and at most 1", v)
			}
			s.Model.PD = v
		}
	}
	if n := top.val["gate-probability"]; n != nil {
		if v, ok := w.floatVal(n, "gate-probability", "a number in (0, 1)"); ok {
			if !(v > 0 && v < 1) {
				w.errAt(n, "gate-probability", "%g is outside (0, 1); expected a probability greater than 0 and less than 1", v)
			}
			s.Model.GateProb = v
		}
	}
	if n := top.val["clutter"]; n != nil {
		w.clutter(n, m, &s.Model)
	}
	ids := map[string]int{}
	if n := w.require(top, "objects", "a list of at least one object"); n != nil {
		s.Objects = w.objects(n, d.n, s.Steps, stepsOK, ids)
	}
	if n := top.val["scripted"]; n != nil {
		s.Scripted = w.scripted(n, m, s.Steps, stepsOK, s.Objects)
	}
	if len(w.errs) > 0 || !intervalOK {
		return nil
	}
	dt := s.Model.Interval
	switch d.motion.Kind {
	case RandomWalk:
		if d.variance != nil {
			s.Model.F, s.Model.Q = motion.RandomWalkDiag(d.variance)
			s.Motion.Noise = s.Model.Q.Clone()
		} else {
			s.Model.F, s.Model.Q = motion.RandomWalk(d.motion.Noise)
		}
	case ConstantVelocity:
		s.Model.F, s.Model.Q = motion.ConstantVelocity(d.motion.Axes, dt, d.motion.AccelNoise)
	case ConstantTurn:
		s.Model.F, s.Model.Q = motion.ConstantTurn(dt, d.motion.TurnRate, d.motion.AccelNoise)
	}
	if d.motion.Kind != RandomWalk {
		w.motionFinite(s.Model, d, top.val["interval"])
		if len(w.errs) > 0 {
			return nil
		}
	}
	s.Model.StateDim = d.n
	slices.SortStableFunc(s.Scripted, func(a, b ScriptedScan) int { return a.Step - b.Step })
	return s
}

// motionFinite reports a motion model whose F or Q, derived from the
// interval, accel-noise and turn-rate by the formulas of harness/motion,
// has a non-finite entry (an overflowing interval⁴·q/4, or a turn angle
// ω·interval beyond float64). The error is placed at the value to blame:
// turn-rate when the turn angle overflows, accel-noise when the same
// interval with unit accel-noise gives a finite model, else interval.
func (w *walker) motionFinite(md mot.Model, d declared, intervalNode *yaml.Node) {
	name, at, v := "F", firstNonFinite(md.F), 0.0
	if at < 0 {
		name, at = "Q", firstNonFinite(md.Q)
	}
	if at < 0 {
		return
	}
	bad := md.F
	if name == "Q" {
		bad = md.Q
	}
	v = bad.Data[at]
	dt, q, omega := md.Interval, d.motion.AccelNoise, d.motion.TurnRate
	entry := fmt.Sprintf("%s[%d][%d] = %v", name, at/bad.Cols, at%bad.Cols, v)
	theta := float64(omega * dt)
	switch {
	case d.motion.Kind == ConstantTurn && d.turnNode != nil && (math.IsInf(theta, 0) || math.IsNaN(theta)):
		w.errAt(d.turnNode, "motion.turn-rate", "%g times the interval %g overflows the turn angle, giving %s; expected a turn rate for which F and Q are finite (see the limits in scenarios/README.md)", omega, dt, entry)
		return
	case d.accelNode != nil && unitFinite(d.motion, dt):
		w.errAt(d.accelNode, "motion.accel-noise", "%g with the interval %g gives %s; expected a variance for which Q is finite (interval⁴·accel-noise/4 at most 1.8e308, see scenarios/README.md)", q, dt, entry)
		return
	}
	if intervalNode != nil {
		w.errAt(intervalNode, "interval", "%g gives %s; expected an interval for which F and Q are finite (interval⁴·accel-noise/4 at most 1.8e308 and the interval below about 1.6e77 s, see scenarios/README.md)", dt, entry)
	}
}

// unitFinite reports whether the motion model m over dt is finite with an
// accel-noise of 1.
func unitFinite(m Motion, dt float64) bool {
	var f, q mot.Mat
	if m.Kind == ConstantTurn {
		f, q = motion.ConstantTurn(dt, m.TurnRate, 1)
	} else {
		f, q = motion.ConstantVelocity(m.Axes, dt, 1)
	}
	return firstNonFinite(f) < 0 && firstNonFinite(q) < 0
}

// firstNonFinite returns the index in a.Data of the first NaN or infinite
// entry, or −1.
func firstNonFinite(a mot.Mat) int {
	for i, v := range a.Data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return i
		}
	}
	return -1
}

func (w *walker) motion(node *yaml.Node) declared {
	var d declared
	f, ok := w.mapping(node, "motion", motionKeys)
	if !ok {
		return d
	}
	kinds := "random-walk, constant-velocity or constant-turn"
	kn := w.require(f, "kind", "the motion model: "+kinds)
	if kn == nil {
		return d
	}
	k, ok := w.strVal(kn, "motion.kind", "the motion model: "+kinds)
	if !ok {
		return d
	}
	kind := MotionKind(k)
	if kind != RandomWalk && kind != ConstantVelocity && kind != ConstantTurn {
		w.errAt(kn, "motion.kind", "unknown motion model %q; expected %s", k, kinds)
		return d
	}
	d.motion.Kind = kind
	// The state dimension is known as soon as axes is valid, even when a
	// noise value is wrong, so that sizes elsewhere are still checked.
	axesOK := false
	forbid := func(key, onlyFor string) {
		if kn := f.key[key]; kn != nil {
			w.errAt(kn, "motion."+key, "not used by %s; it belongs to %s only", kind, onlyFor)
		}
	}
	axesWant := map[MotionKind]string{
		ConstantVelocity: "the number of spatial axes, 1 to 3",
		ConstantTurn:     "2 (constant turn is planar)",
		RandomWalk:       fmt.Sprintf("the state dimension, 1 to %d", MaxRandomWalkDim),
	}[kind]
	axes := 0
	if an := w.require(f, "axes", axesWant); an != nil {
		lo, hi := int64(1), int64(3)
		switch kind {
		case ConstantTurn:
			lo, hi = 2, 2
		case RandomWalk:
			hi = MaxRandomWalkDim
		}
		axes, axesOK = w.intIn(an, "motion.axes", axesWant, lo, hi)
	}
	d.motion.Axes = axes
	if kind == RandomWalk {
		forbid("accel-noise", "constant-velocity and constant-turn")
		forbid("turn-rate", "constant-turn")
		vn, cn := f.val["variance"], f.val["covariance"]
		switch {
		case vn == nil && cn == nil:
			w.errAt(f.node, "motion.variance", "missing; expected either variance (a list of per-dimension variances) or covariance (a full matrix)")
		case vn != nil && cn != nil:
			w.errAt(f.key["covariance"], "motion.covariance", "given together with variance; expected only one of the two")
		case vn != nil:
			v, ok := w.floatList(vn, "motion.variance", "a list of per-dimension variances ≥ 0")
			if ok && axes > 0 && len(v) != axes {
				w.errAt(vn, "motion.variance", "has %d entries; expected %d (motion.axes)", len(v), axes)
			}
			for i, x := range v {
				if x < 0 {
					w.errAt(vn.Content[i], index("motion.variance", i), "%g is negative; expected a variance ≥ 0", x)
				}
			}
			d.variance = v
		default:
			dim := axes
			if axes == 0 {
				dim = -1
			}
			d.motion.Noise, _ = w.covariance(cn, "motion.covariance", dim)
		}
		if axesOK {
			d.n = axes
		}
		return d
	}
	forbid("variance", "random-walk")
	forbid("covariance", "random-walk")
	if kind == ConstantVelocity {
		forbid("turn-rate", "constant-turn")
	}
	d.accelNode, d.turnNode = f.val["accel-noise"], f.val["turn-rate"]
	if qn := w.require(f, "accel-noise", "q, the white-noise acceleration variance ≥ 0 in m²/s⁴"); qn != nil {
		q, ok := w.floatVal(qn, "motion.accel-noise", "q, the white-noise acceleration variance ≥ 0 in m²/s⁴")
		if ok && q < 0 {
			w.errAt(qn, "motion.accel-noise", "%g is negative; expected a variance ≥ 0", q)
		}
		d.motion.AccelNoise = q
	}
	if kind == ConstantTurn {
		if tn := w.require(f, "turn-rate", "ω, the turn rate in rad/s (positive turns counter-clockwise)"); tn != nil {
			d.motion.TurnRate, _ = w.floatVal(tn, "motion.turn-rate", "ω, the turn rate in rad/s")
		}
	}
	if axesOK {
		d.n = 2 * axes
	}
	return d
}

// sensor fills H and R and returns the measurement dimension, or 0 when it
// is unknown.
func (w *walker) sensor(node *yaml.Node, d declared, model *mot.Model) int {
	f, ok := w.mapping(node, "sensor", sensorKeys)
	if !ok {
		return 0
	}
	var observe []int
	obsOK := d.n > 0
	if on := f.val["observe"]; on != nil {
		obsOK = w.noAlias(on, "sensor.observe") && obsOK
		if on.Kind != yaml.SequenceNode || len(on.Content) == 0 {
			w.errAt(on, "sensor.observe", "expected a non-empty list of state indices, found %s", describe(on))
			obsOK = false
		} else {
			seen := map[int]bool{}
			for i, e := range on.Content {
				p := index("sensor.observe", i)
				want := "a state index ≥ 0"
				hi := int64(math.MaxInt32)
				if d.n > 0 {
					want = fmt.Sprintf("a state index from 0 to %d (the state has %d components)", d.n-1, d.n)
					hi = int64(d.n - 1)
				}
				v, ok := w.intIn(e, p, want, 0, hi)
				if ok && seen[v] {
					w.errAt(e, p, "index %d is observed twice; expected distinct indices", v)
					ok = false
				}
				seen[v] = true
				obsOK = obsOK && ok
				observe = append(observe, v)
			}
		}
	} else if d.n > 0 {
		if d.motion.Kind == RandomWalk {
			for i := range d.n {
				observe = append(observe, i)
			}
		} else {
			for a := range d.motion.Axes {
				observe = append(observe, 2*a)
			}
		}
	}
	// m is the measurement dimension the file intends: the length of the
	// observe list even when one of its indices is wrong.
	m := 0
	if on := f.val["observe"]; on != nil && on.Kind == yaml.SequenceNode {
		m = len(on.Content)
	} else if on == nil && d.n > 0 {
		m = len(observe)
	}
	if rn := w.require(f, "noise", "R, the measurement noise covariance"); rn != nil {
		dim := m
		if m == 0 {
			dim = -1
		}
		if R, ok := w.covariance(rn, "sensor.noise", dim); ok {
			model.R = R
			if m == 0 {
				m = R.Rows
			}
		}
	}
	if obsOK {
		model.H = mot.NewMat(len(observe), d.n)
		for i, j := range observe {
			model.H.Set(i, j, 1)
		}
		model.MeasDim = len(observe)
	}
	return m
}

func (w *walker) clutter(node *yaml.Node, m int, model *mot.Model) {
	f, ok := w.mapping(node, "clutter", clutterKeys)
	if !ok {
		return
	}
	volume := math.NaN()
	if rn := w.require(f, "region", "the box in measurement space over which clutter is uniform (min and max)"); rn != nil {
		if r, ok := w.mapping(rn, "clutter.region", regionKeys); ok {
			want := "a list of numbers, one per measured component"
			if m > 0 {
				want = fmt.Sprintf("a list of %d numbers, one per measured component", m)
			}
			get := func(key string) ([]float64, bool) {
				n := w.require(r, key, want)
				if n == nil {
					return nil, false
				}
				v, ok := w.floatList(n, "clutter.region."+key, want)
				if ok && m > 0 && len(v) != m {
					w.errAt(n, "clutter.region."+key, "has %d entries; expected %d (the measurement dimension)", len(v), m)
					ok = false
				}
				return v, ok
			}
			lo, okLo := get("min")
			hi, okHi := get("max")
			if okLo && okHi && len(lo) == len(hi) {
				volume = 1
				for i := range lo {
					if !(hi[i] > lo[i]) {
						w.errAt(r.val["max"].Content[i], fmt.Sprintf("clutter.region.max[%d]", i), "%g is not greater than min[%d] = %g; expected a box of positive size", hi[i], i, lo[i])
						volume = math.NaN()
					} else if !math.IsNaN(volume) {
						volume *= hi[i] - lo[i]
					}
				}
				if math.IsInf(volume, 0) {
					w.errAt(rn, "clutter.region", "the box volume overflows; expected a finite region")
					volume = math.NaN()
				}
				model.ClutterMin, model.ClutterMax = lo, hi
			}
		}
	}
	cn, dn := f.val["mean-count"], f.val["density"]
	switch {
	case cn == nil && dn == nil:
		w.errAt(f.node, "clutter.mean-count", "missing; expected either mean-count (clutter detections per scan) or density (per unit volume)")
	case cn != nil && dn != nil:
		w.errAt(f.key["density"], "clutter.density", "given together with mean-count; expected only one of the two")
	case cn != nil:
		if v, ok := w.floatVal(cn, "clutter.mean-count", "the mean number of clutter detections per scan, ≥ 0"); ok {
			if v < 0 {
				w.errAt(cn, "clutter.mean-count", "%g is negative; expected the mean number of clutter detections per scan, ≥ 0", v)
			} else if v > MaxClutterMean {
				w.errAt(cn, "clutter.mean-count", "%g is above the limit; expected at most %g clutter detections per scan", v, float64(MaxClutterMean))
			} else if !math.IsNaN(volume) {
				model.ClutterMean, model.ClutterDensity = v, v/volume
			}
		}
	default:
		if v, ok := w.floatVal(dn, "clutter.density", "the clutter intensity per unit volume, ≥ 0"); ok {
			if v < 0 {
				w.errAt(dn, "clutter.density", "%g is negative; expected the clutter intensity per unit volume, ≥ 0", v)
			} else if !math.IsNaN(volume) {
				mean := float64(v * volume)
				if math.IsInf(mean, 0) {
					w.errAt(dn, "clutter.density", "density × region volume overflows; expected a finite clutter count")
				} else if mean > MaxClutterMean {
					w.errAt(dn, "clutter.density", "%g × region volume %g gives %g clutter detections per scan; expected at most %g (lower the density or shrink the region)", v, volume, mean, float64(MaxClutterMean))
				}
				model.ClutterMean, model.ClutterDensity = mean, v
			}
		}
	}
}

func (w *walker) objects(node *yaml.Node, n, steps int, stepsOK bool, ids map[string]int) []Object {
	if !w.noAlias(node, "objects") {
		return nil
	}
	if node.Kind != yaml.SequenceNode {
		w.errAt(node, "objects", "expected a list of at least one object, found %s", describe(node))
		return nil
	}
	if len(node.Content) == 0 {
		w.errAt(node, "objects", "is empty; expected at least one object")
		return nil
	}
	out := make([]Object, 0, len(node.Content))
	for i, on := range node.Content {
		p := index("objects", i)
		f, ok := w.mapping(on, p, objectKeys)
		if !ok {
			continue
		}
		o := Object{DrawStart: true}
		o.Disappear = -1
		if in := w.require(f, "id", "a unique id of lower-case letters, digits, '-' or '_'"); in != nil {
			if id, ok := w.strVal(in, p+".id", "a unique id of lower-case letters, digits, '-' or '_'"); ok {
				if !idRE.MatchString(id) || len(id) > 64 {
					w.errAt(in, p+".id", "%q is not a valid id; expected lower-case letters, digits, '-' or '_', at most 64 characters", id)
				} else if first, dup := ids[id]; dup {
					w.errAt(in, p+".id", "duplicate id %q; objects[%d] already has it", id, first)
				} else {
					ids[id] = i
				}
				o.ID = id
			}
		}
		if pn := w.require(f, "prior", "a mapping with mean and cov"); pn != nil {
			if pf, ok := w.mapping(pn, p+".prior", priorKeys); ok {
				want := "the prior mean, a list of numbers in state order"
				if n > 0 {
					want = fmt.Sprintf("the prior mean, a list of %d numbers in state order", n)
				}
				if mn := w.require(pf, "mean", want); mn != nil {
					if v, ok := w.floatList(mn, p+".prior.mean", want); ok {
						if n > 0 && len(v) != n {
							w.errAt(mn, p+".prior.mean", "has %d entries; expected %d (the state dimension of the motion model)", len(v), n)
						}
						o.Mean = v
					}
				}
				dim := n
				if n == 0 {
					dim = -1
				}
				if cn := w.require(pf, "cov", "the prior covariance"); cn != nil {
					o.Cov, _ = w.covariance(cn, p+".prior.cov", dim)
				}
			}
		}
		if sn := f.val["start"]; sn != nil {
			if v, ok := w.strVal(sn, p+".start", "mean or draw"); ok {
				switch v {
				case "mean":
					o.DrawStart = false
				case "draw":
				default:
					w.errAt(sn, p+".start", "unknown start %q; expected mean (truth starts at the prior mean) or draw (drawn from the prior)", v)
				}
			}
		}
		appearOK := true
		if an := f.val["appear"]; an != nil {
			hi := int64(MaxSteps - 1)
			want := "the first step the object exists, ≥ 0"
			if stepsOK {
				hi = int64(steps - 1)
				want = fmt.Sprintf("the first step the object exists, 0 to %d (steps − 1)", steps-1)
			}
			o.Appear, appearOK = w.intIn(an, p+".appear", want, 0, hi)
		}
		if dn := f.val["disappear"]; dn != nil {
			hi := int64(MaxSteps)
			want := "the first step the object no longer exists, after appear"
			if stepsOK {
				hi = int64(steps)
				want = fmt.Sprintf("the first step the object no longer exists, after appear and at most %d (steps)", steps)
			}
			if v, ok := w.intIn(dn, p+".disappear", want, 0, hi); ok {
				if appearOK && v <= o.Appear {
					w.errAt(dn, p+".disappear", "%d is not after appear (%d); expected a step greater than appear", v, o.Appear)
				}
				o.Disappear = v
			}
		}
		out = append(out, o)
	}
	return out
}

func (w *walker) scripted(node *yaml.Node, m, steps int, stepsOK bool, objects []Object) []ScriptedScan {
	if !w.noAlias(node, "scripted") {
		return nil
	}
	if node.Kind != yaml.SequenceNode {
		w.errAt(node, "scripted", "expected a list of scripted scans, found %s", describe(node))
		return nil
	}
	seen := map[int]int{}
	var out []ScriptedScan
	for i, sn := range node.Content {
		p := index("scripted", i)
		f, ok := w.mapping(sn, p, scriptKeys)
		if !ok {
			continue
		}
		var sc ScriptedScan
		stepOK := false
		if tn := w.require(f, "step", "the step whose scan this replaces"); tn != nil {
			hi := int64(MaxSteps - 1)
			want := "the step whose scan this replaces, ≥ 0"
			if stepsOK {
				hi = int64(steps - 1)
				want = fmt.Sprintf("the step whose scan this replaces, 0 to %d (steps − 1)", steps-1)
			}
			sc.Step, stepOK = w.intIn(tn, p+".step", want, 0, hi)
			if stepOK {
				if first, dup := seen[sc.Step]; dup {
					w.errAt(tn, p+".step", "step %d is scripted twice; scripted[%d] already replaces it", sc.Step, first)
					stepOK = false
				} else {
					seen[sc.Step] = i
				}
			}
		}
		dn := w.require(f, "detections", "a list of detections (may be empty: [])")
		if dn == nil || !w.noAlias(dn, p+".detections") {
			continue
		}
		if dn.Kind != yaml.SequenceNode {
			w.errAt(dn, p+".detections", "expected a list of detections (may be empty: []), found %s", describe(dn))
			continue
		}
		sc.Detections = make([]ScriptedDetection, 0, len(dn.Content))
		for j, en := range dn.Content {
			dp := index(p+".detections", j)
			df, ok := w.mapping(en, dp, detKeys)
			if !ok {
				continue
			}
			var det ScriptedDetection
			want := "the measurement, a list of numbers"
			if m > 0 {
				want = fmt.Sprintf("the measurement, a list of %d numbers", m)
			}
			if an := w.require(df, "at", want); an != nil {
				if v, ok := w.floatList(an, dp+".at", want); ok {
					if m > 0 && len(v) != m {
						w.errAt(an, dp+".at", "has %d entries; expected %d (the measurement dimension)", len(v), m)
					}
					det.Z = v
				}
			}
			if fn := df.val["from"]; fn != nil {
				if id, ok := w.strVal(fn, dp+".from", "the id of an object"); ok {
					k := slices.IndexFunc(objects, func(o Object) bool { return o.ID == id })
					switch {
					case k < 0:
						w.errAt(fn, dp+".from", "unknown object %q; expected the id of one of the objects", id)
					case stepOK && !objects[k].Alive(sc.Step):
						w.errAt(fn, dp+".from", "object %q does not exist at step %d; expected an object alive at this step", id, sc.Step)
					}
					det.Object = id
				}
			}
			sc.Detections = append(sc.Detections, det)
		}
		out = append(out, sc)
	}
	return out
}
