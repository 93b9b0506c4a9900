// Package scenario reads scenario files: it decodes the YAML format
// described in scenarios/README.md, checks it strictly and turns it into a
// Spec whose model is ready for the simulator and the reference tracker.
//
// # Checking
//
// Load and Parse walk the YAML node tree rather than decoding into structs,
// so that every problem keeps its line and column. All problems of a file
// are reported at once, as an ErrorList sorted by position, one line each:
//
//	harbour.yaml:14:7: objects[1].prior.cov: not positive definite (Cholesky failed at row 2); expected a symmetric positive definite 4×4 matrix
//
// Unknown keys, wrong types, missing keys, out-of-range values, sizes that
// disagree with the motion model or the sensor, duplicate ids, impossible
// lifetimes and scripted scans that do not fit the run are all errors.
// Covariances must be symmetric (each pair within a relative 1e-9) and
// positive definite, which is tested by attempting a Cholesky factorisation.
//
// # Safety
//
// Files larger than MaxFileSize are refused before parsing. YAML aliases
// are refused, so the node tree is never expanded and alias bombs cost no
// more than their text. Empty files, several documents in one file, non-YAML
// bytes and non-finite numbers (.nan, .inf) are errors, never panics.
//
// # Derived numbers
//
// Model.F and Model.Q come from package motion. Model.H selects the observed
// state components. The clutter box has volume V = ∏(max_i − min_i); a file
// gives either the expected clutter count per scan, from which
// ClutterDensity = ClutterMean / V, or the density, from which
// ClutterMean = ClutterDensity · V. GateProb defaults to 0.999.
//
// References:
//
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
//     to Tracking and Navigation", Wiley, 2001, §6.3.2 (the motion models)
//     and §8.2 (Poisson clutter of spatial density λ over a volume V).
//   - G. H. Golub, C. F. Van Loan, "Matrix Computations", 4th ed., 2013,
//     §4.2 (a symmetric matrix is positive definite exactly when its
//     Cholesky factorisation exists).
package scenario
