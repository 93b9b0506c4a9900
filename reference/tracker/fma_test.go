package tracker

import (
	"bytes"
	"os"
	"os/exec"
	"regexp"
	"testing"
)

// TestNoFusedInstructions compiles this package for arm64 and for amd64
// with GOAMD64=v3, whose compilers fuse x*y + z unless the product is
// converted explicitly (Go specification, "Arithmetic operators"), and fails
// on any fused multiply-add instruction, so association costs and
// probabilities have the same bits on every platform (up to math.Exp and
// math.Log, see the kalman package documentation).
func TestNoFusedInstructions(t *testing.T) {
	if testing.Short() {
		t.Skip("cross-compiles the package; skipped under -short")
	}
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Skip("go command not found")
	}
	fused := regexp.MustCompile(`\b(FMADDD|FMSUBD|FNMADDD|FNMSUBD|VFN?M(ADD|SUB)\d+SD)\b`)
	for _, env := range [][]string{{"GOARCH=arm64"}, {"GOARCH=amd64", "GOAMD64=v3"}} {
		cmd := exec.Command(gobin, "build", "-o", os.DevNull, "-gcflags=-S", ".")
		cmd.Env = append(append(os.Environ(), "GOFLAGS=-buildvcs=false", "CGO_ENABLED=0"), env...)
		out, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("%v go build: %v\n%.500s", env, err, out)
		}
		if !bytes.Contains(out, []byte("tracker.(*engine).associate")) {
			t.Fatalf("%v: no assembly listing for associate in the compiler output", env)
		}
		for _, line := range bytes.Split(out, []byte("\n")) {
			if fused.Match(line) {
				t.Errorf("%v: fused instruction: %s", env, bytes.TrimSpace(line))
			}
		}
	}
}
