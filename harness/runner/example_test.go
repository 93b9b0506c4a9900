package runner_test

import (
	"context"
	"fmt"
	"os"

	"trackgate/harness/result"
	"trackgate/harness/runner"
)

// Check gates a tracker from a Go test: here the test binary serves a
// tracker variant that renames every track and lists tracks and detections
// in reverse order, which is never a regression. On tie-mirror-pair the
// reversed detections make it break the exact tie of step 1 the other way,
// which is reported as a tie.
func ExampleCheck() {
	var o runner.Options
	o.Tracker = []string{os.Args[0]}
	o.Config.Tracker.Env = map[string]string{"TRACKGATE_RUNNER_VARIANT": "relabel"}
	o.Scenarios = []string{"../../scenarios/tie-mirror-pair.yaml", "../../scenarios/warmup-rail-carts.yaml"}
	o.Against = runner.AgainstReference
	o.Runs = 2
	suite, err := runner.Check(context.Background(), o)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, sc := range suite.Scenarios {
		fmt.Println(sc.Name, sc.Status)
	}
	fmt.Println("suite:", suite.Status, "exit code", runner.ExitCode(suite.Status))
	fmt.Println("tracker:", suite.Tracker.Name, "fault:", suite.Status == result.Faulted)
	// Output:
	// tie-mirror-pair tie
	// warmup-rail-carts pass
	// suite: tie exit code 0
	// tracker: variant-relabel fault: false
}

// SplitCommand turns a --tracker command line into an argument vector.
func ExampleSplitCommand() {
	argv, err := runner.SplitCommand(`./bin/quay --gate "0.99 chi2" --log='warn only'`)
	fmt.Printf("%q %v\n", argv, err)
	// Output:
	// ["./bin/quay" "--gate" "0.99 chi2" "--log=warn only"] <nil>
}
