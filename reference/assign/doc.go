// Package assign solves the linear assignment problem exactly and ranks its
// k best solutions; it is the association engine of the reference tracker.
//
// # Problem
//
// Given an r×c cost matrix C (row-major, flat), find an injective map σ from
// the smaller side to the larger one that minimises
//
//	J(σ) = Σ_i C[i, σ(i)]
//
// When r ≤ c every row receives a distinct column; when r > c every column
// receives a distinct row and the remaining rows stay unassigned (-1). An entry
// of +Inf forbids its pair (a gated-out track/detection pair). NaN and -Inf are
// rejected with an error that names the entry. When no assignment covers the
// smaller side with finite cost, the solvers return [ErrInfeasible].
// [Workspace.SolveMax] maximises instead; there -Inf forbids a pair.
//
// # Method
//
// [Workspace.Solve] is the shortest augmenting path method of Jonker and
// Volgenant in the rectangular form written out by Crouse. Rows are added one
// at a time; for each free row a Dijkstra search over the reduced costs
//
//	c̄_ij = C_ij − u_i − v_j ≥ 0
//
// finds the cheapest alternating path to a free column, the duals (u, v) are
// updated so that every reduced cost stays non-negative and the path's
// reduced costs become zero, and the path is flipped. At the end the duals
// are an optimality certificate (see [Workspace.Duals]):
//
//	C_ij ≥ u_i + v_j for every finite entry, with equality on assigned pairs,
//	v_j ≤ 0, v_j = 0 on unassigned columns (only when r < c),
//	Σ_i u_i + Σ_j v_j = J(σ*).
//
// Before the searches, a square problem is started with the column reduction
// of Jonker and Volgenant (v_j = min_i C_ij, u = 0; the row holding a column's
// minimum takes that column when the row is still free) and a wide one with
// the analogous row reduction (u_i = min_j C_ij, v = 0, which keeps the
// rectangular sign condition; Crouse notes that JV's initialisation as
// published assumes a square matrix). Both leave the reduced costs
// non-negative and the assigned pairs tight, so only the rows left free need
// a search. On uniform random costs this cut the instructions of a 1000×1000
// solve by about 1.8× (see BENCHMARKS.md). JV's reduction transfer step made
// the same problems slower here and is not used. With [Workspace.NoInit] the
// solver follows Crouse's pseudocode exactly, except that instead of shifting
// the matrix by its minimum m the row duals start at u_i = m, which has the
// same effect without copying the costs.
//
// Tall problems (r > c) are solved on the transpose. The worst-case cost is
// O(r²·c) for r ≤ c.
//
// [KBest] ranks assignments with Murty's partitioning: after the best
// assignment {(r₁,c₁)…(rₙ,cₙ)} is found, the remaining solution space is split
// into disjoint subproblems P_k that force (r₁,c₁)…(r_{k−1},c_{k−1}) and forbid
// (r_k,c_k); a heap of solved subproblems yields the next best. Following
// Miller, Stone and Cox, a subproblem first enters the heap with a lower
// bound computed from its parent's reduced costs and is solved only when it
// reaches the top; it is then solved from its parent's duals and partial
// assignment, which stay feasible when costs only rise, so one shortest
// augmenting path (O(n²)) replaces a full solve. To keep that
// argument valid for rectangular problems, the wide problem r×c is padded to
// c×c with zero-cost phantom rows that are never partitioned on, so the
// column duals need no sign condition; hypotheses differ in the real rows.
//
// # Conventions
//
// Inputs are never modified. Dimension mismatches are errors, not panics.
// Results are deterministic: ties are broken by index order and by the order
// in which subproblems were created.
//
// References:
//
//   - R. Jonker, A. Volgenant, "A shortest augmenting path algorithm for dense
//     and sparse linear assignment problems", Computing 38(4):325–340, 1987.
//   - D. F. Crouse, "On implementing 2D rectangular assignment algorithms",
//     IEEE Trans. Aerospace and Electronic Systems 52(4):1679–1696, 2016
//     (pseudocode pp. 1685–1686).
//   - K. G. Murty, "An algorithm for ranking all the assignments in order of
//     increasing cost", Operations Research 16(3):682–687, 1968.
//   - M. L. Miller, H. S. Stone, I. J. Cox, "Optimizing Murty's ranked
//     assignment method", IEEE Trans. Aerospace and Electronic Systems
//     33(3):851–862, 1997.
package assign
