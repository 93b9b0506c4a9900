package variant

import (
	"path/filepath"
	"testing"

	"trackgate/internal/crossbuild"
)

// TestOnlyFusedKernelFuses compiles this package for arm64 and for amd64
// with GOAMD64=v3 and reads the assembly listing: the fused variant's
// kernel (fused.go) must contain fused multiply-add instructions, or the
// port certification in harness/catalogue would prove nothing, and no
// other file may, so that every other variant has the same bits on every
// platform (Go specification, "Arithmetic operators": an explicit
// float64(x*y) conversion forbids fusion).
func TestOnlyFusedKernelFuses(t *testing.T) {
	for _, tg := range crossbuild.Fusing() {
		inKernel := 0
		for _, in := range crossbuild.Fused(crossbuild.Assembly(t, ".", tg)) {
			if filepath.Base(in.File) == "fused.go" {
				inKernel++
				continue
			}
			t.Errorf("%s: fused instruction outside fused.go: %s", tg.Name, in.Text)
		}
		if inKernel == 0 {
			t.Errorf("%s: no fused instruction in fused.go; the fused variant would equal the reference here", tg.Name)
		}
	}
}
