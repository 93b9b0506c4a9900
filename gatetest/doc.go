// Package gatetest runs trackgate's regression gate from a Go test, for a
// team whose tracker is written in Go: the tracker runs in the test's own
// process (no protocol subprocess), on the team's scenario files, and is
// compared with trackgate's reference tracker and with golden files in a
// folder the team chooses; failures are reported through testing.TB with
// the first divergence of each failing run.
//
// A test calls Check with its tracker, usually behind its own -update flag
// to re-record the goldens after an intended change:
//
//	var update = flag.Bool("update", false, "re-record the trackgate goldens")
//
//	func TestAgainstTrackgate(t *testing.T) {
//		gatetest.Check(t, quayTracker{}, gatetest.Options{
//			Scenarios: []string{"testdata/scenarios/*.yaml"},
//			Golden:    "testdata/golden",
//			Update:    *update,
//		})
//	}
//
// The checks, tolerances, statuses and metrics are those of trackgate check
// (package trackgate/harness/runner): a changed association the reference
// could not tell apart (a tie) is reported with t.Log and does not fail the
// test; a regression, a tracker fault or a failing gate does. With the
// environment variable CI set to true, 1 or yes, goldens are never written
// and a missing one fails, as in trackgate check --ci.
package gatetest
