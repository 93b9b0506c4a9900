package kernel

import (
	"fmt"
	"math"
	"os"
	"testing"
)

// TestPrintBits prints the bits of both kernels at a point where fusing
// changes the result, for the crossbuild tests that run this binary on
// other targets.
func TestPrintBits(t *testing.T) {
	if os.Getenv("CROSSBUILD_KERNEL_BITS") != "1" {
		t.Skip("run by the crossbuild tests")
	}
	a, b := 1+math.Ldexp(1, -30), 1-math.Ldexp(1, -30)
	fmt.Printf("plain=%016x rounded=%016x\n", math.Float64bits(Plain(a, b, -1)), math.Float64bits(Rounded(a, b, -1)))
}
