// Package kalman is the reference linear Kalman filter of trackgate: predict
// and update for the linear-Gaussian mot.Model, the innovation and its
// covariance, the normalised innovation squared, the measurement
// log-likelihood and chi-square gating.
//
// # Equations
//
// State x (length n), covariance P (n×n); model F, Q (n×n), H (m×n), R (m×m):
//
//	predict:   x⁻ = F x,            P⁻ = (F P) Fᵀ + Q
//	project:   ẑ = H x⁻,            S = H P⁻ Hᵀ + R,   S = L Lᵀ (Cholesky)
//	innovate:  ν = z − ẑ,           d² = νᵀ S⁻¹ ν = |L⁻¹ν|²   (NIS)
//	gain:      K = P⁻ Hᵀ S⁻¹
//	update:    x = x⁻ + K ν
//	Joseph:    P = (I − K H) P⁻ (I − K H)ᵀ + K R Kᵀ
//	log-lik.:  ln N(z; ẑ, S) = −½ (d² + m ln 2π + ln|S|),  ln|S| = 2 Σ ln Lᵢᵢ
//
// Every covariance (P⁻, S, P) is symmetrised by construction: only its
// upper triangle is computed and it is mirrored into the lower one, so it
// is exactly symmetric. Input covariances are taken to be symmetric.
//
// The Joseph form keeps P symmetric and positive semi-definite for any gain;
// with the optimal gain it equals the standard form (I − K H) P⁻ in exact
// arithmetic.
//
// # Gating
//
// A detection z lies in the gate of a projection (ẑ, S) when
// d² = νᵀ S⁻¹ ν ≤ γ with γ = χ²_m⁻¹(P_G), the P_G quantile of the chi-square
// distribution with m degrees of freedom (Threshold, computed with gonum's
// distuv.ChiSquared). The gate then holds the object's own detection with
// probability P_G.
//
// # Determinism and fused multiply-add
//
// The Go specification ("Arithmetic operators", floating-point operators)
// allows an implementation to fuse x*y + z into one rounding, and the gc
// compiler does so on arm64, on amd64 built with GOAMD64=v3, and on
// riscv64, ppc64le, s390x and loong64. An explicit conversion float64(x*y)
// rounds the product and forbids the fusion. Every product in this package
// that feeds a sum is written float64(a*b), so the same inputs give the same
// bits for every state, covariance, gain and NIS on amd64 (v1 or v3) and
// arm64. TestNoFusedInstructions compiles the package for arm64 and for
// amd64 with GOAMD64=v3 and fails on any fused instruction in the generated
// code; TestSameBitsWithFusedMultiplyAdd compares the bits of a 200-step
// run between the default and a GOAMD64=v3 build. The log-likelihood also calls math.Log, which has per-architecture
// assembly on some targets; treat it as equal to within a few ulps across
// platforms.
//
// # Errors and allocation
//
// An innovation covariance that is not positive definite is reported as a
// *NotPositiveDefiniteError carrying the failing pivot, never a panic.
// Mismatched dimensions are programmer errors and panic with a "kalman: "
// prefix. A Filter owns a workspace: after New, PredictTo, ProjectTo and
// UpdateTo allocate nothing (Projection buffers are allocated once on first
// use and reused). A Filter is not safe for concurrent use.
//
// References (section and equation numbers from memory):
//   - R. E. Kalman, "A new approach to linear filtering and prediction
//     problems", Trans. ASME J. Basic Engineering 82(1):35–45, 1960.
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
//     to Tracking and Navigation", Wiley, 2001, §5.2 (filter equations),
//     §5.2.3 (Joseph form), §5.4 (NIS consistency).
//   - Y. Bar-Shalom, P. K. Willett, X. Tian, "Tracking and Data Fusion: A
//     Handbook of Algorithms", YBS Publishing, 2011 (validation gate).
//   - G. H. Golub, C. F. Van Loan, "Matrix Computations", 4th ed., 2013,
//     §4.2 (Cholesky factorization).
package kalman
