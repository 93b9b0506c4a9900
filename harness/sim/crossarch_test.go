package sim

import (
	"strings"
	"testing"

	"trackgate/internal/crossbuild"
)

// TestGoldenOtherTargets builds this package's tests for linux/arm64 and
// for amd64 with GOAMD64=v3 and runs TestGolden there (arm64 under
// qemu-aarch64 user-mode emulation on other hosts). Both targets may fuse
// multiply-adds, so this is the check that the float64(...) roundings in the
// simulator keep the bytes identical across architectures. It is skipped
// under -short, when qemu-aarch64 is not on PATH (the arm64 half), and when
// the CPU lacks the v3 features (the v3 half).
func TestGoldenOtherTargets(t *testing.T) {
	for _, tg := range crossbuild.Fusing() {
		t.Run(tg.Name, func(t *testing.T) {
			prefix := crossbuild.Runner(t, tg)
			bin := crossbuild.BuildTest(t, ".", tg)
			// TestGolden reads testdata/, so the binary runs in this folder.
			out := string(crossbuild.Run(t, ".", nil, append(prefix, bin, "-test.run=^TestGolden$", "-test.v", "-test.count=1")...))
			if !strings.Contains(out, "--- PASS: TestGolden ") {
				t.Fatalf("TestGolden did not pass:\n%s", out)
			}
			t.Logf("%s", out)
		})
	}
}
