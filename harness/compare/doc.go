// Package compare decides whether two sets of tracker numbers agree within
// stated tolerances, and aligns a tracker's own track names with the names of
// a reference run.
//
// # Tolerance rules
//
// A Rule compares one float64 pair (want, got). With
//
//	e = |got − want|,  M = max(|want|, |got|),  bound = max(Abs, Rel·M)
//
// the pair agrees when neither value is NaN and either want == got (so +0 and
// −0 agree), or both are finite and e ≤ bound, or both are finite and their
// distance in units in the last place (ULP) is at most ULPs. NaN never agrees
// with anything, NaN included; an infinity agrees only with the same
// infinity. The relative term uses M = max(|want|, |got|), so the verdict is
// symmetric in want and got: when a port is certified against a reference
// neither side is privileged, and swapping them must not change the answer.
// This is a magnitude-scaled variant of Knuth's "approximately equal" (≈)
// relation (D. E. Knuth, The Art of Computer Programming, vol. 2,
// Seminumerical Algorithms, 3rd ed., 1997, §4.2.2). Knuth scales ε by
// b^max(e_u, e_v), a power of the radix b set by the larger floating-point
// exponent, so his bound is constant across a binade and jumps by a factor
// b at each power of b; with normalised fractions in [1/b, 1) that power
// lies in (M, b·M] (derived here from the normalised representation
// u = f·b^e, 1/b ≤ |f| < 1), so Knuth's bound is up to b (= 2 here) times looser
// than Rel·M for the same ε. This package scales by the magnitude M
// itself, which is continuous in the values and does not depend on how
// they are represented. Knuth's "essentially equal" (~) takes the smaller
// exponent instead; a min-based form is also symmetric but stricter where
// one value is much smaller than the other. With max, two neighbouring
// normal floats always agree once Rel ≥ 2⁻⁵², which makes Rel read as a
// number of ULPs of the larger value.
//
// The ULP distance of a and b counts the float64 values strictly above
// min(a, b) up to and including max(a, b): adjacent floats are 1 apart, +0 and
// −0 are 0 apart, the smallest subnormal and −(smallest subnormal) are 2
// apart.
//
// # Profiles
//
// A Profile holds one Rule per quantity (track means, covariances, metric
// values). The named profiles are BitExact (0 ULP), Float64Port (the same
// algorithm built for other hardware or compiler settings, where fused
// multiply-add and assembly kernels change roundings) and Float32Port (a port
// computing in float32). The port profiles come from PortProfile, whose doc
// comment carries the derivation of every constant.
//
// # Results
//
// A mismatch is a result, not an error: comparisons append Diff values to a
// Result, each with a path such as "step 17 / track ferry / mean[2]", the two
// values, the rule that was exceeded and by how much.
//
// # Identity alignment
//
// Align pairs a tracker's track names with reference track names by one
// optimal assignment over the whole run, and Follow matches step by step to
// find identity switches and tracks that follow nothing; see their doc
// comments for the cost functions.
//
// References:
//
//   - D. E. Knuth, The Art of Computer Programming, Vol. 2: Seminumerical
//     Algorithms, 3rd ed., 1997, §4.2.2 (approximate equality relations;
//     from memory).
//   - N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed.,
//     SIAM, 2002, §3.1 (γ_n = nu/(1−nu)) and eq. (3.4)–(3.5) (inner-product
//     error bound; from memory).
//   - A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson, "Generalized
//     optimal sub-pattern assignment metric", FUSION 2017 (cut-off distance
//     min(d, c) and the c^p/2 cost of an unmatched point for α = 2).
//   - K. Bernardin, R. Stiefelhagen, "Evaluating multiple object tracking
//     performance: the CLEAR MOT metrics", EURASIP J. Image and Video
//     Processing, 2008, §2.1 (correspondences kept while within the
//     threshold; mismatches counted when a partner changes).
//   - Á. F. García-Fernández, A. S. Rahmathullah, L. Svensson, "A metric on
//     the space of finite sets of trajectories for evaluation of
//     multi-target tracking algorithms", IEEE Trans. Signal Processing 68,
//     2020 (whole-run assignment of estimated to true trajectories; from
//     memory).
package compare
