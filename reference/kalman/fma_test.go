package kalman

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"trackgate/internal/crossbuild"
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

// TestSameBitsWithFusedMultiplyAdd rebuilds this package's tests for
// arm64 and for amd64 with GOAMD64=v3, where the compiler fuses x*y + z
// unless the product is converted explicitly (Go specification,
// "Arithmetic operators"), runs them (arm64 under qemu-aarch64 on other
// hosts) and checks that states, covariances and NIS come out bit for bit
// the same as in this build.
func TestSameBitsWithFusedMultiplyAdd(t *testing.T) {
	if os.Getenv("TRACKGATE_KALMAN_BITS") == "1" {
		os.Stdout.Write(bitsOfRun())
		return
	}
	want := bitsOfRun()
	for _, tg := range crossbuild.Fusing() {
		t.Run(tg.Name, func(t *testing.T) {
			bin := crossbuild.BuildTest(t, ".", tg)
			argv := append(crossbuild.Runner(t, tg), bin, "-test.run=^TestSameBitsWithFusedMultiplyAdd$", "-test.v", "-test.count=1")
			out := crossbuild.Run(t, ".", []string{"TRACKGATE_KALMAN_BITS=1"}, argv...)
			if !bytes.Contains(out, want) {
				t.Fatalf("the %s build gave different bits:\n%.400s\nwant\n%.400s", tg.Name, out, want)
			}
		})
	}
}

// TestNoFusedInstructions compiles this package for arm64 and for amd64
// with GOAMD64=v3, the targets whose compilers fuse x*y + z (Go
// specification, "Arithmetic operators"), and fails when the generated code
// contains a fused multiply-add instruction: every product feeding a sum
// must be rounded by an explicit float64 conversion.
func TestNoFusedInstructions(t *testing.T) {
	for _, tg := range crossbuild.Fusing() {
		listing := crossbuild.Assembly(t, ".", tg)
		if !bytes.Contains(listing, []byte("kalman.(*Filter).UpdateTo")) {
			t.Fatalf("%s: no assembly listing for UpdateTo in the compiler output", tg.Name)
		}
		for _, in := range crossbuild.Fused(listing) {
			t.Errorf("%s: fused instruction: %s", tg.Name, in.Text)
		}
	}
}
