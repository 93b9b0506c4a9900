package metrics

import (
	"flag"
	"math/rand/v2"
	"testing"
	"time"
)

var seedFlag = flag.Uint64("seed", 1, "seed of the random test inputs; 0 picks one from the clock and logs it")

// testRand returns the seeded source of one test: stream tells tests
// apart, -seed varies all of them at once. A seed other than the default
// is logged so that a failure can be replayed.
func testRand(t testing.TB, stream uint64) *rand.Rand {
	t.Helper()
	seed := *seedFlag
	if seed == 0 {
		seed = uint64(time.Now().UnixNano()) | 1
	}
	if seed != 1 {
		t.Logf("random inputs from -seed=%d", seed)
	}
	return rand.New(rand.NewPCG(stream, seed))
}
