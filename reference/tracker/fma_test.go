package tracker

import (
	"bytes"
	"testing"

	"trackgate/internal/crossbuild"
)

// TestNoFusedInstructions compiles this package for arm64 and for amd64
// with GOAMD64=v3, whose compilers fuse x*y + z unless the product is
// converted explicitly (Go specification, "Arithmetic operators"), and fails
// on any fused multiply-add instruction, so association costs and
// probabilities have the same bits on every platform (up to math.Exp and
// math.Log, see the kalman package documentation).
func TestNoFusedInstructions(t *testing.T) {
	for _, tg := range crossbuild.Fusing() {
		listing := crossbuild.Assembly(t, ".", tg)
		if !bytes.Contains(listing, []byte("tracker.(*engine).associate")) {
			t.Fatalf("%s: no assembly listing for associate in the compiler output", tg.Name)
		}
		for _, in := range crossbuild.Fused(listing) {
			t.Errorf("%s: fused instruction: %s", tg.Name, in.Text)
		}
	}
}
