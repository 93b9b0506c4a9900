// Package motion turns a declared motion model into the transition matrix F
// and the process noise covariance Q of one scan interval Δt = T.
//
// # State layout
//
// Constant velocity and constant turn interleave position and velocity per
// axis: 1-D [x, vx], 2-D [x, vx, y, vy], 3-D [x, vx, y, vy, z, vz]. A random
// walk's state is whatever the scenario declares, of any dimension.
//
// # Random walk
//
//	x_{k+1} = x_k + w_k,  F = I,  Q = the declared covariance per interval.
//
// # Constant velocity with discrete white-noise acceleration (DWNA)
//
// Per axis the acceleration is constant over an interval and independent
// between intervals with variance q (m²/s⁴):
//
//	F₁ = [1 T; 0 1],  Γ = [T²/2; T],  Q₁ = q·ΓΓᵀ = q·[T⁴/4 T³/2; T³/2 T²]
//
// and for several axes F = I_a ⊗ F₁, Q = I_a ⊗ Q₁ (block diagonal in the
// interleaved layout). Q has rank a, so it is positive semi-definite but not
// positive definite.
//
// # Constant turn with known turn rate
//
// In 2-D, with turn rate ω (rad/s, positive counter-clockwise), θ = ωT,
// s = sin θ, c = cos θ and state [x, vx, y, vy]:
//
//	F(ω) = [1  s/ω       0  −(1−c)/ω]
//	       [0  c         0  −s      ]
//	       [0  (1−c)/ω   1   s/ω    ]
//	       [0  s         0   c      ]
//
// The model is linear because ω is fixed. As ω → 0, s/ω → T and
// (1−c)/ω → 0, so F(ω) → the constant-velocity F. To stay accurate for small
// |ω| the package evaluates s/ω = T·sinc(θ) and (1−c)/ω = T·sin(θ/2)·sinc(θ/2)
// (from 1−cos θ = 2 sin²(θ/2)), with sinc(u) = sin(u)/u replaced by its
// Taylor series 1 − u²/6 + u⁴/120 when |u| < 1e-4, where the truncation
// error u⁶/5040 is below 2e-28.
//
// The process noise uses the same DWNA convention as constant velocity,
// Q = q·blockdiag(ΓΓᵀ, ΓΓᵀ), with no turn-rate noise because ω is known.
// This is one of the conventions found in the literature (texts differ), so
// the tests pin it rather than compare with a single published Q; it makes
// the ω → 0 limit equal the constant-velocity model exactly.
//
// References:
//
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
//     to Tracking and Navigation", Wiley, 2001: §6.3.2 (DWNA, eqs. 6.3.2-1 to
//     6.3.2-4), §11.7.1–11.7.2 (coordinated turn).
//   - X. R. Li, V. P. Jilkov, "Survey of maneuvering target tracking. Part I:
//     Dynamic models", IEEE Trans. Aerospace and Electronic Systems
//     39(4):1333–1364, 2003, §V (coordinated turn with known turn rate).
package motion
