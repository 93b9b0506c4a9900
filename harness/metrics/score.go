package metrics

import (
	"fmt"
	"math"
	"slices"

	"trackgate/harness/mot"
)

// Select names the state components the per-object errors are taken on,
// for example Position {0, 2} and Velocity {1, 3} for a [x, ẋ, y, ẏ] state.
type Select struct {
	// Position must not be empty.
	Position []int
	// Velocity may be empty: the state then has no velocity to score.
	Velocity []int
}

// Validate reports an empty position selection or a negative component
// index; ScoreRun panics on them.
func (s Select) Validate() error {
	if len(s.Position) == 0 {
		return fmt.Errorf("no position components selected")
	}
	for _, c := range slices.Concat(s.Position, s.Velocity) {
		if c < 0 {
			return fmt.Errorf("component index is %d, want a non-negative index", c)
		}
	}
	return nil
}

// ObjectScore is the accuracy and identity record of one object.
type ObjectScore struct {
	Object string
	// Alive is the number of steps the object exists in the truth, and
	// Covered the number of those on which some track was mapped to it.
	Alive, Covered int
	// PositionRMSE is √(mean over covered steps of ‖p − p̂‖²) on the
	// position components; VelocityRMSE likewise on the velocity
	// components (0 when Select.Velocity is empty). Both are 0 when Covered
	// is 0.
	PositionRMSE, VelocityRMSE float64
	// Switches counts the steps at which the object was covered by a
	// track different from the last track that covered it.
	Switches int
	// Breaks counts the steps at which the object, alive and covered at
	// the previous step, is alive but not covered.
	Breaks int
	// Tracks lists, in order of first use, the tracks that covered it.
	Tracks []string
}

// Score is the per-object accuracy and identity bookkeeping of one run.
type Score struct {
	// Objects is sorted by object id.
	Objects []ObjectScore
	// PositionRMSE and VelocityRMSE pool the squared errors of all covered
	// object-steps.
	PositionRMSE, VelocityRMSE float64
	// Switches and Breaks are the sums over objects.
	Switches, Breaks int
	// MissedSteps counts object-steps alive but not covered.
	MissedSteps int
	// FalseSteps counts track-steps mapped to no object, and FalseTracks
	// the distinct tracks that were mapped to no object at least once.
	FalseSteps, FalseTracks int
	// NEES holds, per step, the NEES of every mapped track that reported a
	// covariance, ready for CheckConsistency.
	NEES [][]float64
}

// ScoreRun scores the tracker's frames against the truth, step by step,
// given for each step the mapping from track id to object id ("" for a
// false track) that the comparison of tracks with objects produced. The
// three slices are aligned by index and must describe the same steps.
//
// It returns an error naming the step, track and object when the inputs
// disagree: different lengths or step numbers, a track reported twice or
// missing from the mapping, a mapping entry for a track not reported, an
// object that is not alive at that step or mapped from two tracks, a state
// too short for the selected components, or a covariance that is not
// positive definite.
func ScoreRun(truth []mot.Truth, frames []mot.Frame, mapping []map[string]string, sel Select) (Score, error) {
	if err := sel.Validate(); err != nil {
		panic("metrics: " + err.Error())
	}
	if len(truth) != len(frames) || len(truth) != len(mapping) {
		return Score{}, fmt.Errorf("truth has %d steps, frames %d, mapping %d; want equal counts", len(truth), len(frames), len(mapping))
	}
	need := 0
	for _, c := range slices.Concat(sel.Position, sel.Velocity) {
		need = max(need, c+1)
	}

	type state struct {
		score       ObjectScore
		last        string // last covering track
		prevCovered bool   // alive and covered at the previous step
		seenAt      int    // last step alive
		posSum      float64
		velSum      float64
	}
	objs := map[string]*state{}
	falseTracks := map[string]bool{}
	sc := Score{NEES: make([][]float64, len(truth))}
	var posSum, velSum float64
	covered := 0

	for k := range truth {
		tr, fr, mp := truth[k], frames[k], mapping[k]
		if tr.Step != fr.Step {
			return Score{}, fmt.Errorf("index %d: truth is step %d, frame is step %d", k, tr.Step, fr.Step)
		}
		step := tr.Step
		alive := make(map[string][]float64, len(tr.Objects))
		for _, o := range tr.Objects {
			if _, dup := alive[o.Object]; dup {
				return Score{}, fmt.Errorf("step %d: object %q appears twice in the truth", step, o.Object)
			}
			if len(o.X) < need {
				return Score{}, fmt.Errorf("step %d: object %q has a state of length %d, want at least %d", step, o.Object, len(o.X), need)
			}
			alive[o.Object] = o.X
		}
		reported := make(map[string]bool, len(fr.Tracks))
		coveredBy := make(map[string]string, len(fr.Tracks))
		for _, e := range fr.Tracks {
			if reported[e.Track] {
				return Score{}, fmt.Errorf("step %d: track %q reported twice", step, e.Track)
			}
			reported[e.Track] = true
			obj, ok := mp[e.Track]
			if !ok {
				return Score{}, fmt.Errorf("step %d: track %q has no entry in the mapping", step, e.Track)
			}
			if obj == "" {
				sc.FalseSteps++
				falseTracks[e.Track] = true
				continue
			}
			x, ok := alive[obj]
			if !ok {
				return Score{}, fmt.Errorf("step %d: track %q is mapped to object %q, which is not alive at this step", step, e.Track, obj)
			}
			if other, dup := coveredBy[obj]; dup {
				return Score{}, fmt.Errorf("step %d: object %q is mapped from tracks %q and %q", step, obj, other, e.Track)
			}
			coveredBy[obj] = e.Track
			if len(e.Mean) < need {
				return Score{}, fmt.Errorf("step %d: track %q has a state of length %d, want at least %d", step, e.Track, len(e.Mean), need)
			}
			s := objs[obj]
			if s == nil {
				s = &state{score: ObjectScore{Object: obj}, seenAt: -2}
				objs[obj] = s
			}
			pe, ve := sqDist(x, e.Mean, sel.Position), 0.0
			if len(sel.Velocity) > 0 {
				ve = sqDist(x, e.Mean, sel.Velocity)
			}
			if math.IsNaN(pe) || math.IsInf(pe, 0) || math.IsNaN(ve) || math.IsInf(ve, 0) {
				return Score{}, fmt.Errorf("step %d: track %q against object %q: error is not finite", step, e.Track, obj)
			}
			s.posSum += pe
			s.velSum += ve
			posSum += pe
			velSum += ve
			covered++
			if e.Cov.Rows > 0 {
				v, err := NEES(x, e.Mean, e.Cov)
				if err != nil {
					return Score{}, fmt.Errorf("step %d: track %q against object %q: NEES: %w", step, e.Track, obj, err)
				}
				sc.NEES[k] = append(sc.NEES[k], v)
			}
		}
		if len(mp) > len(reported) {
			var extra []string
			for id := range mp {
				if !reported[id] {
					extra = append(extra, id)
				}
			}
			slices.Sort(extra)
			return Score{}, fmt.Errorf("step %d: the mapping names track %q, which the tracker did not report", step, extra[0])
		}
		// Identity bookkeeping, in a fixed order of objects.
		for _, o := range tr.Objects {
			s := objs[o.Object]
			if s == nil {
				s = &state{score: ObjectScore{Object: o.Object}, seenAt: -2}
				objs[o.Object] = s
			}
			contiguous := s.seenAt == k-1
			s.seenAt = k
			s.score.Alive++
			t, ok := coveredBy[o.Object]
			if !ok {
				if contiguous && s.prevCovered {
					s.score.Breaks++
				}
				s.prevCovered = false
				sc.MissedSteps++
				continue
			}
			s.score.Covered++
			if s.last != "" && t != s.last {
				s.score.Switches++
			}
			if !slices.Contains(s.score.Tracks, t) {
				s.score.Tracks = append(s.score.Tracks, t)
			}
			s.last = t
			s.prevCovered = true
		}
	}

	ids := make([]string, 0, len(objs))
	for id := range objs {
		ids = append(ids, id)
	}
	slices.Sort(ids)
	for _, id := range ids {
		s := objs[id]
		if n := s.score.Covered; n > 0 {
			s.score.PositionRMSE = math.Sqrt(s.posSum / float64(n))
			s.score.VelocityRMSE = math.Sqrt(s.velSum / float64(n))
		}
		sc.Switches += s.score.Switches
		sc.Breaks += s.score.Breaks
		sc.Objects = append(sc.Objects, s.score)
	}
	if covered > 0 {
		sc.PositionRMSE = math.Sqrt(posSum / float64(covered))
		sc.VelocityRMSE = math.Sqrt(velSum / float64(covered))
	}
	sc.FalseTracks = len(falseTracks)
	return sc, nil
}
