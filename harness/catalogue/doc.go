// Package catalogue proves the regression gate on a bench of known trackers:
// its test runs every variant of reference/variant through runner.Check
// against the reference, on the stock scenarios where the variant's change
// matters, and demands that each harmful variant is caught with the
// expected kind of divergence at the expected first step, and that each
// harmless one passes.
//
// The expected step of a harmful variant is computed here from the
// reference's own run (tracker.RunAll), not from the variant's output:
// until its first divergence a variant's state is the reference's, bit for
// bit, so the first step where its rule would choose or compute differently
// from the reference's recorded detail is where the gate must stop it. For
// example a greedy tracker first departs at the first step where row-order
// nearest-neighbour choice over the reference's gated cost matrix differs
// from the reference's optimal assignment; a tracker that predicts one
// step too far first departs at the step after an object's first step.
//
// The package has no code of its own; everything is in the test.
package catalogue
