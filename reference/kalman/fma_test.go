package kalman

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"regexp"
	"runtime"
	"testing"
)

// bitsOfRun runs 200 predict/update steps of a 6-D model with seeded
// random inputs and returns the bits of every state, covariance and NIS, in
// hex, one step per line.
func bitsOfRun() []byte {
	rng := rand.New(rand.NewPCG(20261201, 99))
	md := randModel(rng, 6, 3)
	f, err := New(md)
	if err != nil {
		panic(err)
	}
	x, p := make([]float64, 6), randSPD(rng, 6, 1)
	z := make([]float64, 3)
	var buf bytes.Buffer
	for k := 0; k < 200; k++ {
		for i := range z {
			z[i] = float64(rng.NormFloat64() * 5)
		}
		f.PredictTo(x, p, x, p)
		res, err := f.Update(x, p, x, p, z)
		if err != nil {
			panic(err)
		}
		// Keep the run bounded: pull the state back towards the origin.
		for i := range x {
			x[i] *= 0.5
		}
		for _, v := range append(append(x, p...), res.NIS) {
			fmt.Fprintf(&buf, "%016x ", math.Float64bits(v))
		}
		buf.WriteByte('\n')
	}
	return buf.Bytes()
}

// TestSameBitsWithFusedMultiplyAdd rebuilds this test binary with
// GOAMD64=v3, where the compiler fuses x*y + z unless the product is
// converted explicitly (Go specification, "Arithmetic operators"), and
// checks that states, covariances and NIS come out bit for bit the same.
func TestSameBitsWithFusedMultiplyAdd(t *testing.T) {
	if os.Getenv("TRACKGATE_KALMAN_BITS") == "1" {
		os.Stdout.Write(bitsOfRun())
		return
	}
	if testing.Short() || runtime.GOARCH != "amd64" {
		t.Skip("needs amd64 and a rebuild; skipped under -short")
	}
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Skip("go command not found")
	}
	cmd := exec.Command(gobin, "test", "-v", "-count=1", "-run", "^TestSameBitsWithFusedMultiplyAdd$", ".")
	cmd.Env = append(os.Environ(), "GOAMD64=v3", "TRACKGATE_KALMAN_BITS=1", "GOFLAGS=-buildvcs=false")
	out, err := cmd.Output()
	if err != nil {
		t.Skipf("cannot run a GOAMD64=v3 build here: %v", err)
	}
	want := bitsOfRun()
	if !bytes.Contains(out, want) {
		t.Fatalf("the GOAMD64=v3 build gave different bits:\n%.400s\nwant\n%.400s", out, want)
	}
}

// TestNoFusedInstructions compiles this package for arm64 and for amd64
// with GOAMD64=v3, the targets whose compilers fuse x*y + z (Go
// specification, "Arithmetic operators"), and fails when the generated code
// contains a fused multiply-add instruction: every product feeding a sum
// must be rounded by an explicit float64 conversion.
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
		if !bytes.Contains(out, []byte("kalman.(*Filter).UpdateTo")) {
			t.Fatalf("%v: no assembly listing for UpdateTo in the compiler output", env)
		}
		for _, line := range bytes.Split(out, []byte("\n")) {
			if fused.Match(line) {
				t.Errorf("%v: fused instruction: %s", env, bytes.TrimSpace(line))
			}
		}
	}
}
