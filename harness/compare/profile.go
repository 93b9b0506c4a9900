package compare

import "math"

// Profile holds the tolerance rule of each compared quantity.
type Profile struct {
	// Name identifies the profile in reports and in the project file.
	Name string
	// Mean applies to every component of a track's state mean.
	Mean Rule
	// Cov applies to every entry of a track's state covariance.
	Cov Rule
	// Metric applies to metric values (GOSPA, NEES, counts as floats).
	Metric Rule
}

// Names of the built-in profiles, as written in the project file.
const (
	BitExactName    = "bit-exact"
	Float64PortName = "float64-port"
	Float32PortName = "float32-port"
)

// Parameters of PortProfile. Each is a choice, stated and justified in the
// PortProfile doc comment.
const (
	// ChainLength is L, the longest chain of dependent multiply-adds in one
	// predict-update cycle that we budget for.
	ChainLength = 32
	// Amplification is A, the factor by which an exponentially stable
	// filter can amplify one step's local rounding errors in later steps.
	Amplification = 8
	// Cancellation is C, the allowed ratio |x|ᵀ|y| / |xᵀy| of an inner
	// product before its result counts as cancelled (handled by the
	// absolute floor instead of the relative term).
	Cancellation = 16
	// SceneScale is S, the magnitude of the numbers in a typical scene:
	// 4096 m of range (a harbour or coastal radar picture), 4096 m² of
	// covariance (a 64 m standard deviation).
	SceneScale = 4096
)

// PortProfile returns the tolerance profile for the same algorithm computed
// with unit roundoff u (2⁻⁵³ for float64, 2⁻²⁴ for float32) on hardware or
// with compiler settings that round differently from the reference.
//
// Derivation. By Higham (2002, eq. 3.4) an inner product of length L
// computed in any order, fused or not, satisfies
//
//	|fl(xᵀy) − xᵀy| ≤ γ_L |x|ᵀ|y|,  γ_L = Lu/(1 − Lu),
//
// so two implementations that both meet the bound differ by at most
// 2γ_L |x|ᵀ|y|. One Kalman predict-update cycle is a chain of such products
// (F P Fᵀ, H P Hᵀ, the gain, the update) whose dependent length we budget at
// L = ChainLength = 32 for states of up to 6 components and measurements of
// up to 3. An exponentially stable filter forgets old errors geometrically
// (Anderson and Moore, Optimal Filtering, 1979, §4.4, from memory), so the
// error accumulated over a run is a bounded multiple of one step's; we budget
// A = Amplification = 8 for it. Where |x|ᵀ|y| exceeds |xᵀy| by up to
// C = Cancellation = 16 the relative term still applies; beyond that the
// result is cancelled and only the absolute floor is meaningful. Hence, with
// 1/(1 − Lu) < 1 + 10⁻⁶ absorbed in rounding up:
//
//	Rel = 2·L·A·C·u = 8192·u        (float64: 2⁻⁴⁰ ≈ 9.1e−13; float32: 2⁻¹¹ ≈ 4.9e−4)
//	Abs = 2·L·A·u·S = 512·u·S       (S = SceneScale = 4096:
//	                                 float64: 2⁻³² ≈ 2.3e−10; float32: 2⁻³ = 0.125)
//
// The absolute floor is the error of a result of size near zero computed
// from operands of size S. The same rules apply to means (metres), to
// covariances (m²) and to metric values, which are sums of such numbers.
// The ULP allowance is 0: the relative term already covers the few-ULP
// differences of fused operations.
//
// TestPortProfileKalman checks the float64 profile against a constant
// velocity Kalman filter (500 steps, a 4 km scene, correlated measurement
// noise) run with and without fused multiply-add, and the float32 profile
// against the same filter run in float32. Measured there: the largest error
// uses about 0.03 % of the float64 bound and 0.05 % of the float32 bound, so
// the budget is generous for a filter this small; it is meant to hold for
// larger states, longer chains and worse conditioning too.
func PortProfile(name string, u float64) Profile {
	rel := float64(2 * ChainLength * Amplification * Cancellation * u)
	abs := float64(2 * ChainLength * Amplification * u * SceneScale)
	r := Rule{Abs: abs, Rel: rel}
	return Profile{Name: name, Mean: r, Cov: r, Metric: r}
}

// Unit roundoffs u = β^(1−t)/2 of IEEE 754 binary64 and binary32.
var (
	Float64Roundoff = math.Ldexp(1, -53)
	Float32Roundoff = math.Ldexp(1, -24)
)

// BitExact demands identical values (0 ULP; +0 and −0 agree; NaN never
// agrees).
func BitExact() Profile { return Profile{Name: BitExactName} }

// Float64Port is PortProfile(Float64PortName, Float64Roundoff).
func Float64Port() Profile { return PortProfile(Float64PortName, Float64Roundoff) }

// Float32Port is PortProfile(Float32PortName, Float32Roundoff).
func Float32Port() Profile { return PortProfile(Float32PortName, Float32Roundoff) }

// Lookup returns the built-in profile with the given name.
func Lookup(name string) (Profile, bool) {
	switch name {
	case BitExactName:
		return BitExact(), true
	case Float64PortName:
		return Float64Port(), true
	case Float32PortName:
		return Float32Port(), true
	}
	return Profile{}, false
}

// ProfileNames lists the built-in profile names in a fixed order.
func ProfileNames() []string {
	return []string{BitExactName, Float64PortName, Float32PortName}
}
