package gatetest_test

import (
	"context"
	"fmt"
	"os"

	"trackgate/gatetest"
)

// A tracker written in Go (here trackgate's own reference, in process) is
// checked on a scenario of the stock library against the reference tracker
// and against goldens recorded on the first call. In a test, Check(t, ...)
// does the same and reports failures through t.
func ExampleRun() {
	golden, err := os.MkdirTemp("", "gatetest-example-")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(golden)
	o := gatetest.Options{
		Scenarios: []string{"../scenarios/warmup-rail-carts.yaml"},
		Golden:    golden,
		Runs:      2,
		Update:    true,
		Getenv:    func(string) string { return "" }, // not in CI mode
	}
	s, notes, err := gatetest.Run(context.Background(), gatetest.Reference(), o)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(len(notes) > 0, s.Status, len(s.Scenarios[0].Runs), "runs", len(gatetest.Failures(s)), "failures")
	// Output:
	// true pass 2 runs 0 failures
}
