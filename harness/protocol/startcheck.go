package protocol

import (
	"fmt"
	"math"
	"strconv"

	"trackgate/harness/mot"
)

// Validate checks that the model and objects of a start message describe a
// run a tracker can serve: every matrix has the shape state_dim and
// meas_dim call for, F and H are finite, Q and every object's prior
// covariance are symmetric positive semi-definite and R is symmetric
// positive definite (a Kalman update inverts H P Hᵀ + R, which R alone
// must keep invertible), the probabilities lie in their ranges, the clutter
// figures are finite and non-negative, and object ids are unique with
// Appear < Disappear. The error names the field ("model.R: ...") and what
// was expected; it is nil for a good message.
//
// Symmetry is checked to 1e-9 times the largest entry, and definiteness by
// a Cholesky factorisation of the matrix plus 1e-9·n times its largest
// entry on the diagonal for semi-definiteness (the same round-off allowance
// as the driver's check of track covariances), and without that shift, with
// every pivot above 1e-12 times the largest entry, for definiteness (common
// practice).
//
// References:
//   - G. H. Golub, C. F. Van Loan, Matrix Computations, 4th ed., 2013,
//     section 4.2 (a symmetric matrix is positive definite exactly when its
//     Cholesky factorisation exists with positive pivots).
func (s *Start) Validate() error {
	m := &s.Model
	n, k := m.StateDim, m.MeasDim
	if n < 1 {
		return fieldErr("model.state_dim", "%d, want at least 1", n)
	}
	if k < 1 {
		return fieldErr("model.meas_dim", "%d, want at least 1", k)
	}
	if !(m.Interval > 0) || math.IsInf(m.Interval, 0) {
		return fieldErr("model.interval", "%g, want a finite number of seconds > 0", m.Interval)
	}
	if err := shape("model.F", m.F, n, n, "state_dim×state_dim"); err != nil {
		return err
	}
	if err := finite("model.F", m.F); err != nil {
		return err
	}
	if err := shape("model.Q", m.Q, n, n, "state_dim×state_dim"); err != nil {
		return err
	}
	if err := covariance("model.Q", m.Q, false); err != nil {
		return err
	}
	if err := shape("model.H", m.H, k, n, "meas_dim×state_dim"); err != nil {
		return err
	}
	if err := finite("model.H", m.H); err != nil {
		return err
	}
	if err := shape("model.R", m.R, k, k, "meas_dim×meas_dim"); err != nil {
		return err
	}
	if err := covariance("model.R", m.R, true); err != nil {
		return err
	}
	if !(m.PD > 0 && m.PD <= 1) {
		return fieldErr("model.detect_prob", "%g, want a probability in (0, 1]", m.PD)
	}
	if !(m.GateProb > 0 && m.GateProb < 1) {
		return fieldErr("model.gate_prob", "%g, want a probability in (0, 1)", m.GateProb)
	}
	if !(m.ClutterMean >= 0) || math.IsInf(m.ClutterMean, 0) {
		return fieldErr("model.clutter_mean", "%g, want a finite number ≥ 0", m.ClutterMean)
	}
	if !(m.ClutterDensity >= 0) || math.IsInf(m.ClutterDensity, 0) {
		return fieldErr("model.clutter_density", "%g, want a finite number ≥ 0", m.ClutterDensity)
	}
	if len(m.ClutterMin) != 0 || len(m.ClutterMax) != 0 {
		if len(m.ClutterMin) != k || len(m.ClutterMax) != k {
			return fieldErr("model.clutter_min", "lengths %d and %d of clutter_min and clutter_max, want meas_dim %d each",
				len(m.ClutterMin), len(m.ClutterMax), k)
		}
		for i := range m.ClutterMin {
			lo, hi := m.ClutterMin[i], m.ClutterMax[i]
			if math.IsNaN(lo) || math.IsNaN(hi) || math.IsInf(lo, 0) || math.IsInf(hi, 0) || lo > hi {
				return fieldErr("model.clutter_min["+strconv.Itoa(i)+"]", "%g with clutter_max %g, want finite bounds with min ≤ max", lo, hi)
			}
		}
	}
	seen := make(map[string]int, len(s.Objects))
	for i, o := range s.Objects {
		at := "objects[" + strconv.Itoa(i) + "]"
		if j, dup := seen[o.ID]; dup {
			return fieldErr(at+".id", "%q already used by objects[%d], want unique ids", o.ID, j)
		}
		seen[o.ID] = i
		if len(o.Mean) != n {
			return fieldErr(at+".mean", "length %d, want state_dim %d", len(o.Mean), n)
		}
		for j, v := range o.Mean {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fieldErr(at+".mean["+strconv.Itoa(j)+"]", "%g, want a finite number", v)
			}
		}
		if err := shape(at+".cov", o.Cov, n, n, "state_dim×state_dim"); err != nil {
			return err
		}
		if err := covariance(at+".cov", o.Cov, false); err != nil {
			return err
		}
		if o.Appear < 0 {
			return fieldErr(at+".appear", "%d, want a step ≥ 0", o.Appear)
		}
		if o.Disappear != -1 && o.Disappear <= o.Appear {
			return fieldErr(at+".disappear", "%d, want a step after appear (%d), or absent", o.Disappear, o.Appear)
		}
	}
	return nil
}

func fieldErr(field, format string, args ...any) error {
	return fmt.Errorf("%s: "+format, append([]any{field}, args...)...)
}

func shape(field string, a mot.Mat, rows, cols int, want string) error {
	if a.Rows != rows || a.Cols != cols || len(a.Data) != rows*cols {
		return fieldErr(field, "%d×%d, want %s = %d×%d", a.Rows, a.Cols, want, rows, cols)
	}
	return nil
}

func finite(field string, a mot.Mat) error {
	for i, v := range a.Data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fieldErr(field, "entry (%d,%d) is %g, want a finite number", i/a.Cols, i%a.Cols, v)
		}
	}
	return nil
}

// covariance checks that the square matrix a is finite, symmetric and
// positive semi-definite, or positive definite when definite is set, with
// the tolerances of CovarianceProblem.
func covariance(field string, a mot.Mat, definite bool) error {
	if err := finite(field, a); err != nil {
		return err
	}
	var work []float64
	if msg := CovarianceProblem(a, definite, &work); msg != "" {
		return fieldErr(field, "%s", msg)
	}
	return nil
}

// CovarianceProblem says why the finite square matrix a is not a
// covariance, or returns "" when it is one. With s = max |a_ij|:
//
//   - symmetric: |a_ij − a_ji| ≤ 1e-9·s for every i < j;
//   - positive semi-definite: the Cholesky factorisation of a + 1e-9·n·s·I
//     has only positive pivots (the shift absorbs round-off in a matrix
//     that is singular in exact arithmetic); the zero matrix qualifies;
//   - positive definite, when definite is set: the factorisation of a
//     itself has pivots above 1e-12·s.
//
// The factorisation is Cholesky–Banachiewicz (G. H. Golub, C. F. Van Loan,
// "Matrix Computations", 4th ed., 2013, §4.2); the tolerances are common
// practice. work is scratch space, grown as needed and reused, so a caller
// that keeps it checks without allocating.
func CovarianceProblem(a mot.Mat, definite bool, work *[]float64) string {
	n := a.Rows
	s := 0.0
	for _, v := range a.Data {
		s = math.Max(s, math.Abs(v))
	}
	if s == 0 {
		if definite {
			return "all zero, want a positive definite matrix"
		}
		return ""
	}
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if x, y := a.Data[i*n+j], a.Data[j*n+i]; math.Abs(x-y) > 1e-9*s {
				return fmt.Sprintf("not symmetric: entry (%d,%d) is %g but (%d,%d) is %g", i, j, x, j, i, y)
			}
		}
	}
	shift, floor, want := 1e-9*float64(n)*s, 0.0, "positive semi-definite"
	if definite {
		shift, floor, want = 0, 1e-12*s, "positive definite"
	}
	if cap(*work) < n*n {
		*work = make([]float64, n*n)
	}
	l := (*work)[:n*n]
	// Cholesky–Banachiewicz on the lower triangle of a + shift·I.
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			sum := a.Data[i*n+j]
			if i == j {
				sum += shift
			}
			for q := 0; q < j; q++ {
				sum -= float64(l[i*n+q] * l[j*n+q])
			}
			if i == j {
				if !(sum > floor) {
					return fmt.Sprintf("not %s (Cholesky pivot %d is %.6g)", want, i, sum-shift)
				}
				l[i*n+i] = math.Sqrt(sum)
			} else {
				l[i*n+j] = sum / l[j*n+j]
			}
		}
	}
	return ""
}
