package shard_test

import (
	"fmt"

	"trackgate/harness/shard"
)

// GitLab numbers its parallel jobs from 1: job "3/4" is 0-based shard 2.
func ExampleParse() {
	spec, err := shard.Parse("3/4", 1)
	fmt.Println(spec.Index, spec.Total, err)
	_, err = shard.Parse("4/4", 0)
	fmt.Println(err)
	// Output:
	// 2 4 <nil>
	// shard "4/4": with base 0, K runs from 0 to 3
}

// The runs of one scenario are dealt round robin from a starting shard;
// here FNV-1a("crossing_harbour_ferries") mod 4 = 2 (computed independently
// with the offset basis and prime of the package documentation).
func ExampleOf() {
	for run := 0; run < 6; run++ {
		fmt.Print(shard.Of("crossing_harbour_ferries", run, 4), " ")
	}
	fmt.Println()
	// Output:
	// 2 3 0 1 2 3
}
