// Package shard splits the (scenario, run) pairs of a suite among N CI jobs
// deterministically, and reads which share a job has from flags or the CI
// system's environment.
//
// # Assignment
//
// Run r of the scenario named n goes to shard
//
//	(h(n) + r) mod N,    h = 64-bit FNV-1a of the UTF-8 bytes of n,
//
// computed in uint64 arithmetic. The runs of one scenario are dealt round
// robin from a starting shard that the hash spreads over the scenarios, so:
//
//   - every scenario's runs are balanced: the shards' counts of them differ
//     by at most one, and the suite's totals per shard differ by at most the
//     number of scenarios whose run count is not a multiple of N (usually far
//     less, since the starting shards are spread);
//   - the assignment is stable: adding, removing or renaming a scenario moves
//     no run of any other scenario, and adding runs to a scenario moves none
//     of its existing runs. Changing N reshuffles everything.
//   - it depends on nothing but the name, the run index and N: every job
//     computes the same split without talking to the others.
//
// The hash is FNV-1a (Fowler, Noll, Vo), as in hash/fnv; the Go tree's own
// test runner shards test files by an FNV hash of their names too (common
// practice).
//
// # Whole scenarios
//
// A scenario's statistical gates and summary metrics need all of its runs.
// Each run of a result carries its own metric values and baselines
// (result.Run.Values), so 'trackgate merge' judges the gates again on the
// merged runs (runner.Judge) and plain run-level shards merge to the
// unsharded result. "K/N:scenarios" (Spec.Scenarios) deals whole scenarios
// instead: every run goes to the shard of the scenario's run 0, h(n) mod N,
// so that each shard can also judge its scenarios' gates on its own; the price
// is balance, since a shard's load is the sum of whole scenarios. Adding a
// scenario still moves no other.
//
// # Numbering
//
// Shard indices inside trackgate are 0-based (result.Shard). On the command
// line a shard is written K/N with an explicit base, because CI systems
// differ and a guess would silently run one share twice and another never:
//
//	GitHub Actions matrix   strategy.job-index (0-based), strategy.job-total;
//	                        expression contexts, pass them through env:
//	GitLab parallel: N      CI_NODE_INDEX (1-based), CI_NODE_TOTAL
//	CircleCI parallelism    CIRCLE_NODE_INDEX (0-based), CIRCLE_NODE_TOTAL
//	Buildkite parallelism   BUILDKITE_PARALLEL_JOB (0-based), BUILDKITE_PARALLEL_JOB_COUNT
//	Kubernetes Indexed Job  JOB_COMPLETION_INDEX (0-based); the total is
//	                        spec.completions, which the pod must be told
//
// Parse takes the base as an argument; FromEnv knows the base of each
// system by name (see Systems). A command that takes "-shard K/N" should
// give its base flag no default and refuse a shard without one, so that the
// base is always stated where the shard is.
//
// References:
//   - G. Fowler, L. C. Noll, K.-P. Vo, D. Eastlake, "The FNV Non-Cryptographic
//     Hash Algorithm", IETF draft-eastlake-fnv (2019): offset basis
//     14695981039346656037, prime 1099511628211 for 64 bits.
//   - GitHub Actions contexts reference, "strategy context"; GitLab CI/CD
//     YAML reference, "parallel"; Kubernetes documentation, "Indexed Job for
//     Parallel Processing with Static Work Assignment".
package shard
