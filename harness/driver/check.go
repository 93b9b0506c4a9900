package driver

import (
	"strconv"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
)

// checker validates frames against the model and the scan they answer. It
// keeps its maps between scans so that steady-state checking does not
// allocate.
type checker struct {
	n         int
	wantCov   bool
	wantAssoc bool
	dets      map[int]int // detection id → index of the track using it, or −1
	ids       map[string]int
	work      []float64
}

func (c *checker) init(m mot.Model, r protocol.Ready) {
	c.n = m.StateDim
	c.wantCov, c.wantAssoc = r.Covariance, r.Association
	if c.dets == nil {
		c.dets = map[int]int{}
		c.ids = map[string]int{}
	}
}

func tf(i int, rest string) string { return "tracks[" + strconv.Itoa(i) + "]" + rest }

// frame checks f as the answer to scan; the returned fault has its Class
// and Detail set.
func (c *checker) frame(scan *mot.Scan, f *mot.Frame) *Fault {
	if f.Step != scan.Step {
		return &Fault{Class: WrongStep, Detail: "reply for step " + itoa(f.Step) + ", want " + itoa(scan.Step)}
	}
	clear(c.dets)
	clear(c.ids)
	for _, d := range scan.Detections {
		c.dets[d.ID] = -1
	}
	for i := range f.Tracks {
		t := &f.Tracks[i]
		if j, dup := c.ids[t.Track]; dup {
			return &Fault{Class: DuplicateTrack, Detail: tf(i, ".id") + ": " + strconv.Quote(t.Track) + " already used by " + tf(j, "")}
		}
		c.ids[t.Track] = i
		if len(t.Mean) != c.n {
			return &Fault{Class: Dimension, Detail: tf(i, ".mean") + ": length " + itoa(len(t.Mean)) + ", want the state dimension " + itoa(c.n)}
		}
		if t.Cov.Rows == 0 {
			if c.wantCov {
				return &Fault{Class: Malformed, Detail: tf(i, ".cov") + ": missing, but the ready reply declared covariances"}
			}
		} else {
			if t.Cov.Rows != c.n || t.Cov.Cols != c.n {
				return &Fault{Class: Dimension, Detail: tf(i, ".cov") + ": " + itoa(t.Cov.Rows) + "×" + itoa(t.Cov.Cols) + ", want " + itoa(c.n) + "×" + itoa(c.n)}
			}
			if msg := c.psd(t.Cov); msg != "" {
				return &Fault{Class: BadCovariance, Detail: tf(i, ".cov") + ": " + msg}
			}
		}
		if !t.HasDetection {
			if c.wantAssoc {
				return &Fault{Class: Malformed, Detail: tf(i, ".detection") + ": missing, but the ready reply declared associations"}
			}
			continue
		}
		if t.Detection == mot.NoDetection {
			continue
		}
		j, ok := c.dets[t.Detection]
		if !ok {
			return &Fault{Class: UnknownDetection, Detail: tf(i, ".detection") + ": " + itoa(t.Detection) + " is not a detection of scan " + itoa(scan.Step)}
		}
		if j >= 0 {
			return &Fault{Class: DuplicateDetection, Detail: tf(i, ".detection") + ": " + itoa(t.Detection) + " already used by " + tf(j, "")}
		}
		c.dets[t.Detection] = i
	}
	return nil
}

// psd reports why p is not symmetric positive semi-definite, or "" when it
// is, by the test in the package documentation.
func (c *checker) psd(p mot.Mat) string {
	ok, msg := symmetricPSD(p, &c.work)
	if ok {
		return ""
	}
	return msg
}

// symmetricPSD tests p (n×n) with protocol.CovarianceProblem's tolerances
// for a positive semi-definite matrix; work is scratch space.
func symmetricPSD(p mot.Mat, work *[]float64) (bool, string) {
	msg := protocol.CovarianceProblem(p, false, work)
	return msg == "", msg
}
