package variant

import (
	"bytes"
	"os"
	"os/exec"
	"regexp"
	"testing"
)

// TestOnlyFusedKernelFuses compiles this package for arm64 and for amd64
// with GOAMD64=v3 and reads the assembly listing: the fused variant's
// kernel (fused.go) must contain fused multiply-add instructions, or the
// port certification in harness/catalogue would prove nothing, and no
// other file may, so that every other variant has the same bits on every
// platform (Go specification, "Arithmetic operators": an explicit
// float64(x*y) conversion forbids fusion).
func TestOnlyFusedKernelFuses(t *testing.T) {
	if testing.Short() {
		t.Skip("cross-compiles the package; skipped under -short")
	}
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Skip("go command not found")
	}
	fusedOp := regexp.MustCompile(`\b(FMADDD|FMSUBD|FNMADDD|FNMSUBD|VFN?M(ADD|SUB)\d+SD)\b`)
	where := regexp.MustCompile(`\(([^()]*\.go):\d+\)`)
	for _, env := range [][]string{{"GOARCH=arm64"}, {"GOARCH=amd64", "GOAMD64=v3"}} {
		cmd := exec.Command(gobin, "build", "-o", os.DevNull, "-gcflags=-S", ".")
		cmd.Env = append(append(os.Environ(), "GOFLAGS=-buildvcs=false", "CGO_ENABLED=0"), env...)
		out, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("%v go build: %v\n%.500s", env, err, out)
		}
		inKernel := 0
		for _, line := range bytes.Split(out, []byte("\n")) {
			if !fusedOp.Match(line) {
				continue
			}
			m := where.FindSubmatch(line)
			if m != nil && bytes.HasSuffix(m[1], []byte("/fused.go")) {
				inKernel++
				continue
			}
			t.Errorf("%v: fused instruction outside fused.go: %s", env, bytes.TrimSpace(line))
		}
		if inKernel == 0 {
			t.Errorf("%v: no fused instruction in fused.go; the fused variant would equal the reference here", env)
		}
	}
}
