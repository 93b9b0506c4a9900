// Package sim is the deterministic simulator: from a scenario.Spec and a run
// index it produces the ground truth and the noisy scans of one Monte Carlo
// run, byte for byte the same on every machine.
//
// # Model
//
// Each object i exists at the steps k with Appear ≤ k < Disappear. At its
// first step its state is the prior mean, or a draw from the prior when
// DrawStart is set:
//
//	x_Appear = μ            or   x_Appear = μ + G_P u,   u ~ N(0, I)
//	x_{k+1}  = F x_k + G_Q u_k,                          u_k ~ N(0, I)
//
// where G G ᵀ is the covariance (P, Q or R) factored by an LDLᵀ
// decomposition that tolerates a singular positive semi-definite matrix,
// such as the rank-one per-axis Q of the discrete white-noise acceleration
// model: G = L·D^½ with pivots below 10⁻¹⁰ of their diagonal entry set to
// zero (see factor). At every step each living object is detected with
// probability PD, giving
//
//	z = H x + G_R v,   v ~ N(0, I),
//
// and the scan gets a Poisson(ClutterMean) number of clutter detections,
// uniform in the box [ClutterMin, ClutterMax]. The detections of a scan are
// shuffled (Fisher–Yates, math/rand/v2 Shuffle) so that their order says
// nothing about their origin, then numbered 0, 1, 2, … through the run.
// A scripted scan replaces the simulated scan at its step, keeping its
// detections in the order written. Origins go only into mot.Truth.
//
// # Random streams
//
// Every draw comes from a math/rand/v2 PCG source seeded explicitly; the
// global generator is never used. Run r of a scenario with seed s uses the
// run seed RunSeed(s, r) (the (r+1)-th output of SplitMix64 started at s),
// and from it separate sub-streams (see streamSeeds):
//
//   - one per object, for its starting draw and its process noise, so that
//     adding an object or a scripted scan never shifts another object's
//     trajectory;
//   - one per step, for the scan: detection coins, measurement noise, the
//     clutter count, the clutter positions and the shuffle, in that order.
//     A scripted step does not touch it, so scripting one scan leaves every
//     other scan unchanged.
//
// The Poisson count uses Knuth's multiplication method for means below 10
// and Hörmann's transformed rejection (PTRS) from 10 up; both are exact.
//
// # Floating point
//
// Go may fuse x*y + z into one fused multiply-add on arm64 (and on amd64
// built with GOAMD64=v3), which rounds once instead of twice and changes the
// last bits. Every product that is added to something is therefore written
// float64(x*y), which the Go specification defines to round, so amd64 and
// arm64 produce the same bytes. The only library functions used are
// math.Sqrt (correctly rounded everywhere) and math.Exp, math.Log and
// math.Lgamma inside the Poisson sampler, whose last-bit differences between
// architectures can change a count only when a uniform draw falls within an
// ulp of an acceptance bound (probability about 10⁻¹⁶ per draw).
//
// # Output
//
// Write renders a run as JSON Lines: a header line, then one line per step
// with the scan and its truth; Read parses it back. See Write for the
// layout.
//
// References:
//
//   - G. L. Steele Jr., D. Lea, C. H. Flood, "Fast splittable pseudorandom
//     number generators", OOPSLA 2014 (SplitMix64, the golden-gamma increment
//     0x9E3779B97F4A7C15); the finaliser constants 0xBF58476D1CE4E5B9,
//     0x94D049BB133111EB and shifts 30, 27, 31 are those of S. Vigna's
//     reference splitmix64.c (prng.di.unimi.it), "variant 13" of D. Stafford's
//     "Better bit mixing" (2011; attribution from memory). Checked against
//     the outputs published on Rosetta Code, "Pseudo-random
//     numbers/Splitmix64" (TestRunSeedSplitMix64Reference).
//   - D. E. Knuth, The Art of Computer Programming, Vol. 2, 3rd ed., 1997,
//     §3.4.1 (Poisson deviates by multiplying uniforms; section from memory).
//   - W. Hörmann, "The transformed rejection method for generating Poisson
//     random variables", Insurance: Mathematics and Economics 12(1):39–45,
//     1993 (algorithm PTRS).
//   - G. H. Golub, C. F. Van Loan, Matrix Computations, 4th ed., 2013,
//     §4.1 (the LDLᵀ factorisation) and §4.2.8 (semidefinite matrices);
//     section numbers from memory.
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, Estimation with Applications
//     to Tracking and Navigation, Wiley, 2001, §6.3.2 (the discrete
//     white-noise acceleration model, whose Q is singular; section number
//     from memory).
package sim
