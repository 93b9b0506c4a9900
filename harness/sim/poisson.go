package sim

import (
	"math"
	"math/rand/v2"
)

// knuthLimit is the mean from which poisson switches from Knuth's
// multiplication method (expected mean+1 uniforms per draw) to PTRS
// (bounded expected cost); Hörmann (1993) states PTRS for means ≥ 10.
const knuthLimit = 10

// poisson draws a Poisson(mean) count from r. mean must be finite and ≥ 0.
//
// For mean < 10 it is Knuth's method (TAOCP Vol. 2, 3rd ed., 1997, §3.4.1):
// multiply uniforms U_1 U_2 … until the product drops to e^{−mean} or
// below; the count of factors before that is the draw. From 10 up it is
// Hörmann's algorithm PTRS ("The transformed rejection method for generating
// Poisson random variables", Insurance: Mathematics and Economics
// 12(1):39–45, 1993), with the constants of the paper:
//
//	b = 0.931 + 2.53·√μ,  a = −0.059 + 0.02483·b
//	1/α = 1.1239 + 1.1328/(b − 3.4),  v_r = 0.9277 − 3.6224/(b − 2)
//	repeat: U ~ U(−½, ½), V ~ U(0, 1), u_s = ½ − |U|
//	        k = ⌊(2a/u_s + b)·U + μ + 0.43⌋
//	        accept at once if u_s ≥ 0.07 and V ≤ v_r
//	        reject if k < 0 or (u_s < 0.013 and V > u_s)
//	        accept if ln V + ln(1/α) − ln(a/u_s² + b) ≤ −μ + k ln μ − ln k!
//
// Both methods are exact: the draws follow the Poisson law, not an
// approximation of it.
func poisson(r *rand.Rand, mean float64) int {
	if mean <= 0 {
		return 0
	}
	if mean < knuthLimit {
		limit := math.Exp(-mean)
		k := 0
		p := r.Float64()
		for p > limit {
			k++
			p *= r.Float64()
		}
		return k
	}
	sq := math.Sqrt(mean)
	logMean := math.Log(mean)
	b := 0.931 + float64(2.53*sq)
	a := -0.059 + float64(0.02483*b)
	logInvAlpha := math.Log(1.1239 + 1.1328/(b-3.4))
	vr := 0.9277 - 3.6224/(b-2)
	for {
		u := r.Float64() - 0.5
		v := r.Float64()
		us := 0.5 - math.Abs(u)
		k := math.Floor(float64((2*a/us+b)*u) + mean + 0.43)
		if us >= 0.07 && v <= vr {
			return int(k)
		}
		if !(k >= 0) || (us < 0.013 && v > us) {
			continue
		}
		lg, _ := math.Lgamma(k + 1)
		lhs := math.Log(v) + logInvAlpha - math.Log(a/float64(us*us)+b)
		rhs := -mean + float64(k*logMean) - lg
		if lhs <= rhs {
			return int(k)
		}
	}
}
