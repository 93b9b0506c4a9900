package motion

import (
	"fmt"
	"math"

	"trackgate/harness/mot"
)

// MaxAxes is the largest number of spatial axes of constant velocity.
const MaxAxes = 3

// RandomWalk returns F = I and Q = noise for a random walk whose process
// covariance per interval is noise (n×n). It panics if noise is not square.
// noise is copied, never retained.
func RandomWalk(noise mot.Mat) (F, Q mot.Mat) {
	if noise.Rows != noise.Cols || len(noise.Data) != noise.Rows*noise.Cols {
		panic(fmt.Sprintf("motion: random-walk noise is %d×%d, want square", noise.Rows, noise.Cols))
	}
	return mot.Identity(noise.Rows), noise.Clone()
}

// RandomWalkDiag returns F = I and Q = diag(variance): a random walk whose
// components are independent with the given per-interval variances.
func RandomWalkDiag(variance []float64) (F, Q mot.Mat) {
	n := len(variance)
	Q = mot.NewMat(n, n)
	for i, v := range variance {
		Q.Set(i, i, v)
	}
	return mot.Identity(n), Q
}

// ConstantVelocity returns F and Q of constant velocity in axes (1 to 3)
// spatial axes with discrete white-noise acceleration of variance q over an
// interval of dt seconds; see the package documentation for the formulas and
// the state layout. It panics if axes is out of range.
func ConstantVelocity(axes int, dt, q float64) (F, Q mot.Mat) {
	if axes < 1 || axes > MaxAxes {
		panic(fmt.Sprintf("motion: constant velocity with %d axes, want 1 to %d", axes, MaxAxes))
	}
	n := 2 * axes
	F, Q = mot.NewMat(n, n), mot.NewMat(n, n)
	t2 := float64(dt * dt)
	for a := 0; a < axes; a++ {
		i := 2 * a
		F.Set(i, i, 1)
		F.Set(i, i+1, dt)
		F.Set(i+1, i+1, 1)
		setDWNA(Q, i, dt, t2, q)
	}
	return F, Q
}

// setDWNA writes q·ΓΓᵀ, Γ = [T²/2, T]ᵀ, into the 2×2 block of Q at (i, i).
func setDWNA(Q mot.Mat, i int, dt, t2, q float64) {
	g0, g1 := float64(t2/2), dt
	Q.Set(i, i, float64(q*float64(g0*g0)))
	Q.Set(i, i+1, float64(q*float64(g0*g1)))
	Q.Set(i+1, i, float64(q*float64(g1*g0)))
	Q.Set(i+1, i+1, float64(q*float64(g1*g1)))
}

// ConstantTurn returns F and Q of a 2-D constant turn at the known turn rate
// omega (rad/s, positive counter-clockwise) with discrete white-noise
// acceleration of variance q over an interval of dt seconds. omega = 0 gives
// exactly the 2-axis ConstantVelocity model.
func ConstantTurn(dt, omega, q float64) (F, Q mot.Mat) {
	theta := float64(omega * dt)
	half := theta / 2
	c := math.Cos(theta)
	s := math.Sin(theta)
	sOverW := float64(dt * sinc(theta))                                // sin(ωT)/ω
	oneMinusCOverW := float64(float64(dt*math.Sin(half)) * sinc(half)) // (1−cos ωT)/ω
	if omega == 0 {
		c, s = 1, 0
	}
	F = mot.NewMat(4, 4)
	F.Set(0, 0, 1)
	F.Set(0, 1, sOverW)
	F.Set(0, 3, -oneMinusCOverW)
	F.Set(1, 1, c)
	F.Set(1, 3, -s)
	F.Set(2, 1, oneMinusCOverW)
	F.Set(2, 2, 1)
	F.Set(2, 3, sOverW)
	F.Set(3, 1, s)
	F.Set(3, 3, c)
	Q = mot.NewMat(4, 4)
	t2 := float64(dt * dt)
	setDWNA(Q, 0, dt, t2, q)
	setDWNA(Q, 2, dt, t2, q)
	return F, Q
}

// sinc returns sin(u)/u, and 1 at u = 0.
func sinc(u float64) float64 {
	if math.Abs(u) < 1e-4 {
		u2 := float64(u * u)
		return 1 - u2/6 + float64(u2*u2)/120
	}
	return math.Sin(u) / u
}
