package tracker

import (
	"bufio"
	"io"
	"math"
	"strconv"

	"trackgate/harness/mot"
)

// AppendJSON appends d as one JSON object and a newline: the line format of
// a reference run. Keys come in this fixed order:
//
//	step              the step number
//	objects           the live objects, each with
//	  object            its id
//	  predicted_mean    the predicted state
//	  predicted_cov     the predicted covariance, as rows
//	  detection         the id of the detection it was updated with, or null
//	  mean, cov         the updated state and covariance (the prediction on a miss)
//	  nis               the normalised innovation squared, or null on a miss
//	hypothesis_cost   the cost of the chosen hypothesis
//	margin            cost(2nd best) − cost(best), or null with one hypothesis
//	best_probability  the probability of the chosen hypothesis
//	covered_mass      the posterior share of the listed hypotheses
//	exhaustive        whether every association event was enumerated
//	coasting          the objects of clusters without a feasible association
//
// Numbers are in shortest round-trip form (strconv 'g', −1); a non-finite
// number is written null.
func (d *Detail) AppendJSON(b []byte) []byte {
	b = append(b, `{"step":`...)
	b = strconv.AppendInt(b, int64(d.Step), 10)
	b = append(b, `,"objects":[`...)
	for i, o := range d.Objects {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, `{"object":`...)
		b = strconv.AppendQuote(b, o.Object)
		b = append(b, `,"predicted_mean":`...)
		b = appendVec(b, o.PredMean)
		b = append(b, `,"predicted_cov":`...)
		b = appendMat(b, o.PredCov)
		b = append(b, `,"detection":`...)
		if o.Detection == mot.NoDetection {
			b = append(b, "null"...)
		} else {
			b = strconv.AppendInt(b, int64(o.Detection), 10)
		}
		b = append(b, `,"mean":`...)
		b = appendVec(b, o.Mean)
		b = append(b, `,"cov":`...)
		b = appendMat(b, o.Cov)
		b = append(b, `,"nis":`...)
		b = appendNum(b, o.NIS)
		b = append(b, '}')
	}
	b = append(b, `],"hypothesis_cost":`...)
	b = appendNum(b, d.Cost)
	b = append(b, `,"margin":`...)
	b = appendNum(b, d.Margin)
	b = append(b, `,"best_probability":`...)
	b = appendNum(b, d.BestProb)
	b = append(b, `,"covered_mass":`...)
	b = appendNum(b, d.CoveredMass)
	b = append(b, `,"exhaustive":`...)
	b = strconv.AppendBool(b, d.Exhaustive)
	b = append(b, `,"coasting":[`...)
	for i, id := range d.Coasting {
		if i > 0 {
			b = append(b, ',')
		}
		b = strconv.AppendQuote(b, id)
	}
	return append(b, "]}\n"...)
}

// WriteJSONL writes one line per step of ex (see Detail.AppendJSON).
func (ex *Expected) WriteJSONL(w io.Writer) error {
	bw := bufio.NewWriter(w)
	var b []byte
	for i := range ex.Steps {
		b = ex.Steps[i].AppendJSON(b[:0])
		if _, err := bw.Write(b); err != nil {
			return err
		}
	}
	return bw.Flush()
}

func appendNum(b []byte, v float64) []byte {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return append(b, "null"...)
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}

func appendVec(b []byte, v []float64) []byte {
	b = append(b, '[')
	for i, x := range v {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendNum(b, x)
	}
	return append(b, ']')
}

func appendMat(b []byte, m mot.Mat) []byte {
	b = append(b, '[')
	for i := 0; i < m.Rows; i++ {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendVec(b, m.Data[i*m.Cols:(i+1)*m.Cols])
	}
	return append(b, ']')
}
