// Package metrics scores a tracker against ground truth and decides whether a
// change to a tracker is a regression: set distances (GOSPA, OSPA), filter
// consistency (NEES, NIS), per-object errors and identity bookkeeping, and
// the statistical gates that turn per-run numbers into a pass or a fail.
//
// # Conventions
//
//   - Inputs are never mutated. Points and states are []float64; the caller
//     picks the components a distance is taken on (Params.Components), so the
//     same state vectors serve position-only and full-state distances.
//   - Invalid parameters (p < 1, c ≤ 0, a confidence outside (0, 1)) are
//     programmer errors and panic with a "metrics: " prefix; settings read
//     from a file are checked first with their Validate method. Bad data
//     (non-finite coordinates, ragged points, a covariance that is not
//     positive definite, a track mapped to an object that is not alive)
//     comes back as an error that names the step, track or object.
//   - A Workspace holds scratch memory; its zero value is ready to use and
//     reusing it makes repeated distance computations allocation-free.
//
// # Set distances
//
// X = {x₁..x_m} is the truth, Y = {y₁..y_n} the estimates, d the Euclidean
// distance on the chosen components and d⁽ᶜ⁾(x, y) = min(d(x, y), c).
//
// GOSPA with order p ≥ 1, cut-off c > 0 and α = 2 is
//
//	GOSPA(X, Y)ᵖ = min over partial matchings γ of
//	               Σ_{(i,j)∈γ} d(xᵢ, yⱼ)ᵖ + (cᵖ/2)·(m + n − 2|γ|)
//
// and is computed as a rectangular assignment on the costs d⁽ᶜ⁾(xᵢ, yⱼ)ᵖ: a
// pair with d ≥ c costs cᵖ, exactly what leaving both points unmatched costs
// (cᵖ/2 + cᵖ/2), so the two minima agree. GOSPAᵖ splits into localisation
// Σ_{γ*} dᵖ, missed (cᵖ/2)·(m − |γ*|) and false (cᵖ/2)·(n − |γ*|), where γ*
// keeps only assigned pairs with d < c (a pair at exactly d = c counts as one
// miss and one false track; the value is the same either way).
//
// OSPA with order p and cut-off c is, for m ≤ n (swap otherwise),
//
//	OSPA(X, Y)ᵖ = (1/n)·[ min over injections π of Σᵢ d⁽ᶜ⁾(xᵢ, y_π(i))ᵖ + cᵖ·(n − m) ]
//
// with OSPA(∅, ∅) = 0 and OSPA(∅, Y) = c for Y ≠ ∅. For p = ∞ it is
// min_π maxᵢ d⁽ᶜ⁾(xᵢ, y_π(i)) when m = n and c otherwise. The localisation
// and cardinality parts satisfy OSPAᵖ = e_locᵖ + e_cardᵖ.
//
// # Consistency
//
// The normalised estimation error squared of an estimate x̂ with covariance P
// of the true state x is ε = (x − x̂)ᵀ P⁻¹ (x − x̂); the normalised innovation
// squared of an innovation ν with covariance S is ε_ν = νᵀ S⁻¹ ν. For a
// consistent filter ε ~ χ²ₙ with n = dim x. Averaged over N independent runs,
// N·ε̄ ~ χ²_{nN}, and the two-sided acceptance interval with probability c is
//
//	[ χ²_{nN}⁻¹((1 − c)/2), χ²_{nN}⁻¹((1 + c)/2) ] / N.
//
// # Paired gate
//
// For runs i = 1..N on the same seeds, with per-run metric values aᵢ of the
// candidate and bᵢ of the baseline, the worsening is dᵢ = s·(aᵢ − bᵢ), with
// s = +1 when lower values are better (GOSPA, RMSE) and s = −1 otherwise.
// With d̄ the mean, s_d the sample standard deviation and t_{N−1}⁻¹ the
// Student-t quantile, the one-sided lower confidence bound at confidence c
// for the mean worsening μ_d is
//
//	L₁ = d̄ − t_{N−1}⁻¹(c)·s_d/√N,
//
// and the gate fails exactly when L₁ > max(0, δ), where δ ≥ 0 is the
// smallest worsening worth failing for: "worse with confidence c and by more
// than the minimum effect". This is the one-sided t test of
// H₀: μ_d ≤ max(0, δ) at level 1 − c; its p-value
// P(T_{N−1} ≥ (d̄ − max(0, δ))/(s_d/√N)) is the verdict's PValue, and the
// gate fails exactly when PValue < 1 − c. A verdict's [Lo, Hi] is the
// one-sided interval [L₁, +∞) the decision is taken on; MeanInterval gives
// the two-sided interval d̄ ∓ t_{N−1}⁻¹((1 + c)/2)·s_d/√N for display.
//
// Ranked is the distribution-free alternative: the same one-sided decision
// rule with the Hodges–Lehmann estimate (median of the Walsh averages
// (dᵢ + dⱼ)/2) and the one-sided Walsh-average lower bound that inverts the
// one-sided Wilcoxon signed-rank test. SignedRankTest and SignTest give the
// underlying one-sided p-values.
//
// # Per-object errors and identity
//
// ScoreRun takes, for every step, the mapping from track id to object id
// ("" for a false track) and computes, per object o with covered steps
// K_o (steps at which some track is mapped to o),
//
//	RMSE_pos(o) = √( (1/|K_o|) Σ_{k∈K_o} ‖p_k − p̂_k‖² )
//
// on the caller's position components, likewise for velocity. An identity
// switch is counted when o is covered by a track other than the last track
// that covered it (a gap in between does not reset the last track); a
// track break when o, alive and covered at step k − 1, is alive but not
// covered at step k. False-track steps count tracks mapped to "".
//
// References:
//
//   - A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson, "Generalized
//     optimal sub-pattern assignment metric", 20th Int. Conf. on Information
//     Fusion (FUSION), 2017 (Definition 1, Proposition 1).
//   - Á. F. García-Fernández, A. S. Rahmathullah, L. Svensson, "A metric on
//     the space of finite sets of trajectories for evaluation of
//     multi-target tracking algorithms", IEEE Trans. Signal Processing 68,
//     2020, pp. 3917–3928 (the trajectory extension of GOSPA).
//   - D. Schuhmacher, B.-T. Vo, B.-N. Vo, "A consistent metric for
//     performance evaluation of multi-object filters", IEEE Trans. Signal
//     Processing 56(8):3447–3457, 2008.
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
//     to Tracking and Navigation", Wiley, 2001, §5.4 (NEES, NIS and their
//     chi-square acceptance regions).
//   - W. S. Gosset ("Student"), "The probable error of a mean", Biometrika
//     6(1):1–25, 1908 (the t distribution of the paired mean).
//   - F. Wilcoxon, "Individual comparisons by ranking methods", Biometrics
//     Bulletin 1(6):80–83, 1945 (the signed-rank test).
//   - J. L. Hodges, E. L. Lehmann, "Estimates of location based on rank
//     tests", Ann. Math. Statist. 34(2):598–611, 1963.
package metrics
