package metrics

import (
	"errors"
	"fmt"

	"trackgate/harness/mot"
)

// GOSPARun returns the GOSPA distance at every step of a run, between the
// true states of the objects alive at the step and the means of the tracks
// the tracker reported, on the components p.Components. truth and frames
// are aligned by index and must describe the same steps. Errors name the
// step and the object or track whose state cannot be used.
func (w *Workspace) GOSPARun(truth []mot.Truth, frames []mot.Frame, p Params) ([]GOSPA, error) {
	if len(truth) != len(frames) {
		return nil, fmt.Errorf("truth has %d steps, frames %d; want equal counts", len(truth), len(frames))
	}
	out := make([]GOSPA, len(truth))
	for k := range truth {
		if truth[k].Step != frames[k].Step {
			return nil, fmt.Errorf("index %d: truth is step %d, frame is step %d", k, truth[k].Step, frames[k].Step)
		}
		w.xs = w.xs[:0]
		for _, o := range truth[k].Objects {
			w.xs = append(w.xs, o.X)
		}
		w.ys = w.ys[:0]
		for _, e := range frames[k].Tracks {
			w.ys = append(w.ys, e.Mean)
		}
		g, err := w.GOSPA(w.xs, w.ys, p)
		if err != nil {
			var pe *PointError
			if errors.As(err, &pe) {
				if pe.Set == "truth" {
					return nil, fmt.Errorf("step %d: object %q: %s", truth[k].Step, truth[k].Objects[pe.Index].Object, pe.Problem)
				}
				return nil, fmt.Errorf("step %d: track %q: %s", truth[k].Step, frames[k].Tracks[pe.Index].Track, pe.Problem)
			}
			return nil, fmt.Errorf("step %d: %w", truth[k].Step, err)
		}
		out[k] = g
	}
	clear(w.xs[:cap(w.xs)])
	clear(w.ys[:cap(w.ys)])
	return out, nil
}

// Average returns the mean of the GOSPA values and their mean of order p,
// (mean of GOSPAᵖ)^(1/p), which for p = 2 is the root-mean-square GOSPA;
// both are 0 for no values. p must be the order the values were computed
// with (zero means 2).
//
// Reference: García-Fernández, Rahmathullah, Svensson (2020), and the
// FUSION 2017 paper (Rahmathullah, García-Fernández, Svensson), Section IV
// (section number from memory): both averages are metrics on random finite
// sets.
func Average(gs []GOSPA, p Params) (mean, pmean float64) {
	if len(gs) == 0 {
		return 0, 0
	}
	order := p.Order
	if order == 0 {
		order = 2
	}
	var sp float64
	for _, g := range gs {
		mean += g.Value
		sp += g.Power
	}
	n := float64(len(gs))
	return mean / n, root(sp/n, order)
}
