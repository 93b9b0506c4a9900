package variant

import (
	"fmt"

	"trackgate/harness/mot"
	"trackgate/reference/kalman"
	"trackgate/reference/tracker"
)

// change is one variant's departure from the reference; a nil field keeps
// the reference's behaviour.
type change struct {
	// model alters the model used for filtering and association.
	model func(mot.Model) mot.Model
	// predict replaces one prediction of (x, p), in place.
	predict func(f *kalman.Filter, m mot.Model, x, p []float64)
	// extra is the number of predictions added to every step of an object
	// after its first.
	extra int
	// choose returns the detection id (or mot.NoDetection) each row of d
	// takes instead of the best hypothesis.
	choose func(d *tracker.Detail) []int
	// update replaces the measurement update of od (from its PredMean and
	// PredCov with z), writing od.Mean and od.Cov.
	update func(f *kalman.Filter, m mot.Model, od *tracker.ObjectDetail, z []float64) error
	// settle alters a posterior before it is stored and reported.
	settle func(od *tracker.ObjectDetail)
	// round rounds every predicted state to float32.
	round bool
	// scan and frame rewrite the incoming scan and the outgoing frame.
	scan  func(mot.Scan) mot.Scan
	frame func(mot.Frame) mot.Frame
}

// machine is the reference tracker rebuilt around tracker.StepFrom, with a
// change applied. It follows tracker.Tracker's rules: an object starts at
// Appear from its prior (no prediction), is predicted once per elapsed step
// afterwards and is dropped at Disappear.
type machine struct {
	ch     change
	model  mot.Model
	f      *kalman.Filter
	objs   []mot.Object
	k      int
	states []objState
	last   int
	began  bool
	err    error
}

type objState struct {
	started bool
	x, p    []float64
}

func newMachine(cfg tracker.Config, ch change) *machine {
	m := &machine{ch: ch, model: cfg.Model, objs: cfg.Objects, k: cfg.K, states: make([]objState, len(cfg.Objects))}
	if ch.model != nil {
		m.model = ch.model(cloneModel(cfg.Model))
	}
	m.f, m.err = kalman.New(m.model)
	if m.err != nil {
		m.err = fmt.Errorf("variant: %w", m.err)
		return m
	}
	n := m.model.StateDim
	for i, o := range cfg.Objects {
		if len(o.Mean) != n || len(o.Cov.Data) != n*n {
			m.err = fmt.Errorf("variant: object %d (%q): prior of length %d with %d covariance entries, want %d and %d", i, o.ID, len(o.Mean), len(o.Cov.Data), n, n*n)
			return m
		}
		if o.Appear < 0 {
			m.err = fmt.Errorf("variant: object %d (%q): appear %d, want ≥ 0", i, o.ID, o.Appear)
			return m
		}
	}
	return m
}

func cloneModel(md mot.Model) mot.Model {
	md.F, md.Q, md.H, md.R = md.F.Clone(), md.Q.Clone(), md.H.Clone(), md.R.Clone()
	md.ClutterMin = append([]float64(nil), md.ClutterMin...)
	md.ClutterMax = append([]float64(nil), md.ClutterMax...)
	return md
}

// Step answers one scan.
func (m *machine) Step(scan mot.Scan) (mot.Frame, error) {
	if m.err != nil {
		return mot.Frame{}, m.err
	}
	if m.ch.scan != nil {
		scan = m.ch.scan(scan)
	}
	k := scan.Step
	if m.began && k <= m.last {
		return mot.Frame{}, fmt.Errorf("variant: step %d after step %d, want increasing steps", k, m.last)
	}
	var states []tracker.State
	var rows []int
	for i, o := range m.objs {
		st := &m.states[i]
		if !o.Alive(k) {
			*st = objState{}
			continue
		}
		if !st.started {
			st.started = true
			st.x = append([]float64(nil), o.Mean...)
			st.p = append([]float64(nil), o.Cov.Data...)
			for s := o.Appear; s < k; s++ {
				m.predict(st.x, st.p)
			}
		} else {
			for s := m.last; s < k+m.ch.extra; s++ {
				m.predict(st.x, st.p)
			}
		}
		if m.ch.round {
			roundAll(st.x)
			roundAll(st.p)
		}
		n := len(st.x)
		states = append(states, tracker.State{ID: o.ID, Mean: st.x, Cov: mot.Mat{Rows: n, Cols: n, Data: st.p}, Predicted: true})
		rows = append(rows, i)
	}
	m.began, m.last = true, k
	d, err := tracker.StepFrom(m.model, states, scan, m.k, 0)
	if err != nil {
		return mot.Frame{}, err
	}
	var pick []int
	if m.ch.choose != nil {
		pick = m.ch.choose(&d)
	}
	z := make(map[int][]float64, len(scan.Detections))
	for _, det := range scan.Detections {
		z[det.ID] = det.Z
	}
	fr := mot.Frame{Step: k, Tracks: make([]mot.Estimate, len(d.Objects))}
	for r := range d.Objects {
		od := &d.Objects[r]
		want := od.Detection
		if pick != nil {
			want = pick[r]
		}
		if want != od.Detection || (m.ch.update != nil && want != mot.NoDetection) {
			if err := m.redo(od, want, z[want]); err != nil {
				return mot.Frame{}, fmt.Errorf("variant: step %d: object %q: %w", k, od.Object, err)
			}
		}
		if m.ch.settle != nil {
			m.ch.settle(od)
		}
		st := &m.states[rows[r]]
		copy(st.x, od.Mean)
		copy(st.p, od.Cov.Data)
		fr.Tracks[r] = mot.Estimate{Track: od.Object, Mean: append([]float64(nil), od.Mean...),
			Cov: od.Cov.Clone(), Detection: od.Detection, HasDetection: true}
	}
	if m.ch.frame != nil {
		fr = m.ch.frame(fr)
	}
	return fr, nil
}

// predict applies one prediction to (x, p) in place.
func (m *machine) predict(x, p []float64) {
	if m.ch.predict != nil {
		m.ch.predict(m.f, m.model, x, p)
		return
	}
	m.f.PredictTo(x, p, x, p)
}

// redo recomputes od's posterior for detection id want (measurement z).
func (m *machine) redo(od *tracker.ObjectDetail, want int, z []float64) error {
	od.Detection = want
	if want == mot.NoDetection {
		od.Mean = append(od.Mean[:0], od.PredMean...)
		od.Cov.Data = append(od.Cov.Data[:0], od.PredCov.Data...)
		return nil
	}
	if z == nil {
		return fmt.Errorf("detection %d is not in the scan", want)
	}
	if m.ch.update != nil {
		return m.ch.update(m.f, m.model, od, z)
	}
	_, err := m.f.Update(od.Mean, od.Cov.Data, od.PredMean, od.PredCov.Data, z)
	return err
}
