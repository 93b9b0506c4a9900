package assign_test

import (
	"fmt"
	"math"

	"trackgate/reference/assign"
)

// A harbour approach radar holds three tracks and receives four detections.
// Costs are gated distances; +Inf marks a detection outside a track's gate.
// The expected output was worked out by hand: every row's cheapest column is
// distinct, so the optimum takes them (1.5 + 2 + 0.5 = 4); listing the eight
// feasible assignments gives 4, 9, 11.5, 12, 14, 16.5, 17, 22.
var harbour = []float64{
	1.5, 9, math.Inf(1), 4, // pilot boat
	math.Inf(1), 2, 7, math.Inf(1), // ferry
	6, 3, math.Inf(1), 0.5, // tug
}

func ExampleWorkspace_Solve() {
	var w assign.Workspace
	rowToCol := make([]int, 3)
	total, err := w.Solve(harbour, 3, 4, rowToCol)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(rowToCol, total)
	// Output: [0 1 3] 4
}

func ExampleKBest() {
	hs, err := assign.KBest(harbour, 3, 4, 3)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, h := range hs {
		fmt.Println(h.Cost, h.RowToCol)
	}
	// Output:
	// 4 [0 1 3]
	// 9 [0 2 3]
	// 11.5 [0 2 1]
}
