// Package variant holds deliberately changed versions of the reference
// tracker, each a small documented departure from package tracker, that
// serve the same protocol (trackgate reference --variant NAME). They are the
// test bench of the gate itself: a harmful variant must be caught by
// trackgate check, with the right kind of divergence at the right step, and
// a harmless one must pass.
//
// # How a variant is built
//
// Every variant runs the same machine (machine.go): it keeps each known
// object's state, predicts it with the reference filter (package kalman),
// hands the predicted states to tracker.StepFrom, which gates, clusters,
// ranks hypotheses and updates exactly as the reference does, and reports
// the result. With no change the machine reproduces tracker.RunAll bit for
// bit (TestPlainMachineIsTheReference). A variant replaces one link of that
// chain:
//
//	model    the model the machine associates and filters with
//	predict  how one prediction x⁻ = F x, P⁻ = F P Fᵀ + Q is computed
//	choose   which detection each object takes, from the reference's
//	         cost matrix and hypotheses
//	update   how the posterior x = x⁻ + K ν, Joseph-form P is computed
//	settle   what happens to the posterior before it is stored
//	scan, frame  how the messages are read and written
//
// # The catalogue
//
// Harmful (trackgate check must fail):
//
//	greedy             objects in row order take their nearest free gated
//	                   detection (smallest cost cᵢⱼ) instead of the optimal
//	                   assignment of the augmented matrix; never misses when a
//	                   gated detection is left. Kind: association.
//	frozen-covariance  the posterior covariance is the predicted one: P = P⁻
//	                   after an update. Kind: estimate, at the first update.
//	miss-without-pd    the miss cost is a fixed 0 instead of −ln(1 − P_D),
//	                   the assignment otherwise optimal. Kind: association.
//	narrow-gate        P_G = 0.2 instead of the scenario's (γ = χ²_m⁻¹(0.2),
//	                   0.446 for m = 2), so most true detections fall outside
//	                   the gate. Kind: association.
//	no-clutter         the clutter intensity is taken as λ = 1 per unit
//	                   volume whatever the scenario says, so ln λ drops out of
//	                   every pair cost. Kind: association.
//	step-late          an object that has been through one step is predicted
//	                   one interval too far (F applied twice per step). Kind:
//	                   estimate, at its step Appear + 1.
//	no-process-noise   Q = 0 in the prediction. Kind: estimate, at the first
//	                   prediction.
//	float32            every state and covariance is rounded to float32 after
//	                   each predict and update, and the costs are computed
//	                   from the rounded values; fails the float64-port
//	                   profile (relative error 2⁻²⁴ ≫ 2⁻⁴⁰).
//
// Harmless (trackgate check must pass):
//
//	relabel   tracks are named "t" and the FNV-1a hash of the object id in
//	          base 36, sharing nothing with the reference's names.
//	shuffle   the detections of each scan are permuted before association
//	          and the tracks of each reply are permuted (seeded PCG
//	          streams); association works on detection ids, so only exact
//	          ties can resolve differently.
//	resum     predict and update are the reference equations with every
//	          inner product summed from the last term to the first, and
//	          P⁻ = F (P Fᵀ) + Q associated the other way round, so the
//	          last bits move (Higham 2002, eq. 3.4 bounds both orders by
//	          γ_L Σ|xᵢyᵢ|); passes the float64-port profile.
//	tie-flip  when the reference's margin cost(2nd) − cost(best) is at most
//	          FlipMargin, the second-best hypothesis is taken; with a tie
//	          margin τ ≥ FlipMargin the gate calls it a tie.
//	float32   as above, but checked under the float32-port profile.
//
// And for the port certification (fma_test.go):
//
//	fused     the reference's predict and update written with plain x*y + z
//	          expressions, without the float64(x*y) conversions and
//	          skipping zero terms, so the compiler fuses multiply-adds on
//	          arm64 and on amd64 with GOAMD64=v3 (see fused.go). On amd64
//	          v1 it is the reference to the bit; where it is fused it
//	          differs in the last bits and passes the float64-port profile
//	          (harness/catalogue TestPortCertification).
//
// # Determinism
//
// The shuffle variant draws from rand.New(rand.NewPCG(ShuffleSeed, step)),
// so its permutations are the same on every machine; nothing else is
// random. The resum variant converts every product with float64(·) as the
// reference does, so it too has the same bits on every platform; only
// fused does not.
//
// References:
//   - N. J. Higham, "Accuracy and Stability of Numerical Algorithms", 2nd
//     ed., SIAM, 2002, §3.1, eq. (3.4) (inner products in any order; the
//     bound behind the float64-port profile).
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with
//     Applications to Tracking and Navigation", Wiley, 2001, §5.2 (the
//     filter equations the variants bend) and §5.2.3 (Joseph form).
//   - S. Blackman, R. Popoli, "Design and Analysis of Modern Tracking
//     Systems", Artech House, 1999, §6.5 (GNN versus greedy nearest
//     neighbour association; the augmented matrix and its miss costs).
//   - The Go Programming Language Specification, "Arithmetic operators"
//     (an implementation may fuse x*y + z; an explicit conversion forbids
//     it).
package variant
