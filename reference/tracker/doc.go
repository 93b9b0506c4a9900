// Package tracker is trackgate's reference multi-object tracker: a Kalman
// filter per known object, chi-square gating, a globally optimal nearest
// neighbour (GNN) association per scan, and the posterior of the k best
// association hypotheses, against which other trackers are judged.
//
// # Objects
//
// The reference tracks the known objects of a scenario, not tracks it has
// to start itself. Object o enters at step Appear with the state N(Mean,
// Cov) of its prior, which is taken as the predicted state for that step
// (no prediction is applied at Appear); at each later step its estimate is
// predicted with F, Q (package kalman) before association; it is dropped at
// step Disappear.
//
// # Association cost
//
// For a live object i with projection ẑᵢ = H x̂ᵢ, Sᵢ = H Pᵢ Hᵀ + R and a
// detection z_j of dimension m, with d²ᵢⱼ = (z_j − ẑᵢ)ᵀ Sᵢ⁻¹ (z_j − ẑᵢ):
//
//	gate:     d²ᵢⱼ ≤ γ,  γ = χ²_m⁻¹(P_G)
//	update:   cᵢⱼ = −ln( P_D · N(z_j; ẑᵢ, Sᵢ) / λ )
//	              = d²ᵢⱼ/2 + ½ ln|Sᵢ| + (m/2) ln 2π − ln P_D + ln λ   (gated pairs)
//	          cᵢⱼ = +∞                                               (outside the gate)
//	miss:     cᵢ,miss = −ln(1 − P_D)
//
// and the augmented matrix, live objects × (detections + objects), is
// [C | D] with D diagonal (Dᵢᵢ = cᵢ,miss, +∞ elsewhere). A hypothesis
// assigns every object one column; detections left over are clutter and
// cost nothing. The cost of a hypothesis is the sum of its entries, which
// is minus the log of its unnormalised posterior (the log-likelihood ratio
// against "all detections are clutter"), so its probability is
// p ∝ exp(−cost). The costs are always computed in this log form, never as
// a ratio of densities, so nothing underflows.
//
// Choices:
//   - P_G: the likelihood is the untruncated Gaussian and the miss term is
//     1 − P_D, not 1 − P_D·P_G; the gate only removes pairs. This is the
//     cost of Blackman & Popoli and of CHECK-VALUES §6.1/§6.3; with the
//     default P_G = 0.999 the truncation would change a cost by at most
//     −ln(0.999) ≈ 0.001.
//   - P_D = 1: the miss cost is +∞, so a miss is impossible. A cluster whose
//     objects cannot all be given a gated detection has no feasible
//     hypothesis: its objects coast (their posterior is their prediction),
//     they are listed in Detail.Coasting, and the scan's hypotheses cover
//     the other clusters. Nothing panics and nothing becomes NaN.
//   - λ = 0 (no clutter): λ is replaced by the floor MinClutterDensity
//     (1e-300). In the limit λ → 0 the best hypothesis explains as many
//     detections as possible; the floor keeps that order (each unexplained
//     detection costs about 690 more than an explained one) while every
//     cost stays finite.
//
// # Clusters
//
// Objects that share a gated detection are joined; the connected components
// of this gating graph are clusters, solved independently (each optimally,
// with reference/assign). Because the augmented cost separates over
// clusters, the sum of the cluster optima is the optimum of the whole scan.
// For the same reason the posterior factorises: exp(−cost) of a scan
// hypothesis is the product of its clusters' factors, and so is the sum
// over all events, so p(h) = ∏_c p_c(h_c) with p_c the posterior of
// cluster c alone, and what happens in one cluster says nothing about
// another.
//
// Detail.PerCluster records each cluster on its own (ObjectDetail.Cluster
// indexes it): its rows and gated detections, its margin (cost of its
// second-best hypothesis − its best; +∞ with a single hypothesis), and its
// k best hypotheses with the probabilities p_c, exact when the cluster was
// enumerated (or its list ran out) and otherwise normalised over its
// listed hypotheses. A changed association can then be judged by the
// margin of the cluster in which it happens rather than by the scan's.
// These per-cluster records are not written to the JSON lines.
//
// # Hypotheses
//
// Each cluster ranks its max(k, 2) + 1 best hypotheses (Murty's method; a
// one-object cluster simply sorts its entries), so that the margin is known
// even for k = 1 and a list that stops short proves itself complete. A
// hypothesis costs the sum of its entries added in row order, so equal
// events cost the same bits. The k best hypotheses of the scan are the k
// smallest sums that pick one hypothesis per cluster. The best has the total of the cluster optima; the margin,
// cost(2nd best) − cost(best), is the smallest second-best gap over the
// clusters (+∞ when the scan has a single hypothesis).
//
// Probabilities p_h = exp(−(cost_h − cost_best)) / Z:
//   - exhaustive: when every cluster has at most Config.EnumLimit candidate
//     association events (the product over its objects of 1 + number of
//     gated detections), each cluster's events are enumerated, Z is the
//     product of the cluster sums and every probability is the exact
//     posterior over all association events; CoveredMass is the share the
//     listed k hypotheses hold.
//   - otherwise Z is the sum over the listed k best, so the listed
//     probabilities sum to one, and CoveredMass is a lower bound on their
//     true share: a cluster whose list stops at its k-th hypothesis (cost
//     c_k) holds at most (N − k)·exp(−c_k) more, with N its candidate count.
//
// # Forced association
//
// StepWith is the single step of StepFrom with the association of named
// objects given: the clusters holding them take the given event instead
// of their best, whole (every object of such a cluster is named) and only
// when feasible (each detection inside its object's gate and used once, a
// miss only when P_D < 1). The ranking of the scan is reported as
// StepFrom reports it; only the updates follow the forced event. Chained
// step by step from its own posteriors, it continues the reference down
// the branch another tracker took after a tie, and with nothing forced the
// chain is the reference's own run, bit for bit.
//
// # Determinism
//
// Like package kalman, every product that feeds a sum is rounded by an
// explicit float64 conversion, so no platform fuses a multiply-add
// (TestNoFusedInstructions checks the arm64 and amd64 v3 code); ties
// between equal costs are broken by row, column and rank, never by map or
// goroutine order. The same inputs give the same output bytes.
//
// References (section and equation numbers from memory):
//   - S. Blackman, R. Popoli, "Design and Analysis of Modern Tracking
//     Systems", Artech House, 1999, §6.5 (GNN assignment, augmented matrix)
//     and §6.2 (track score increments ln(P_D/λ) − ½ ln|2πS| − d²/2 and
//     ln(1 − P_D)).
//   - Y. Bar-Shalom, P. K. Willett, X. Tian, "Tracking and Data Fusion: A
//     Handbook of Algorithms", YBS Publishing, 2011 (validation gate,
//     association events, clustering).
//   - B.-N. Vo, B.-T. Vo, D. Phung, "Labeled random finite sets and the
//     Bayes multi-target tracking filter", IEEE TSP 62(24):6554–6567, 2014,
//     §IV (ranked assignment on the objects × (detections + objects) cost
//     matrix).
//   - K. G. Murty, "An algorithm for ranking all the assignments in order of
//     increasing cost", Operations Research 16(3):682–687, 1968.
package tracker
