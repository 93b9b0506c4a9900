package crossbuild

import (
	"fmt"
	"math"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"
)

func TestFused(t *testing.T) {
	tests := []struct {
		name string
		line string
		want []Instr
	}{
		{"arm64 multiply-add",
			"\t0x0010 00016 (/src/pier/fused.go:30)\tFMADDD\tF2, F1, F0, F3",
			[]Instr{{File: "/src/pier/fused.go", Line: 30, Text: "0x0010 00016 (/src/pier/fused.go:30)\tFMADDD\tF2, F1, F0, F3"}}},
		{"arm64 negated multiply-subtract",
			"\t0x0024 00036 (k.go:7)\tFNMSUBD\tF2, F1, F0, F3",
			[]Instr{{File: "k.go", Line: 7, Text: "0x0024 00036 (k.go:7)\tFNMSUBD\tF2, F1, F0, F3"}}},
		{"amd64 v3 multiply-add",
			"\t0x0000 00000 (quay/gate.go:112)\tVFMADD231SD\tX1, X0, X2",
			[]Instr{{File: "quay/gate.go", Line: 112, Text: "0x0000 00000 (quay/gate.go:112)\tVFMADD231SD\tX1, X0, X2"}}},
		{"amd64 v3 negated multiply-subtract",
			"\t0x0000 00000 (a.go:1)\tVFNMSUB213SD\tX1, X0, X2",
			[]Instr{{File: "a.go", Line: 1, Text: "0x0000 00000 (a.go:1)\tVFNMSUB213SD\tX1, X0, X2"}}},
		{"separate multiply and add", "\t0x0010 00016 (k.go:7)\tFMULD\tF1, F0, F0\n\t0x0014 00020 (k.go:7)\tFADDD\tF2, F0, F0", nil},
		{"single precision is not float64", "\t0x0010 00016 (k.go:7)\tFMADDS\tF2, F1, F0, F3", nil},
		{"mnemonic inside a symbol name", "\t0x0010 00016 (k.go:7)\tCALL\tpier.FMADDDish(SB)", nil},
		{"no position", "\tFMADDD\tF2, F1, F0, F3", []Instr{{Text: "FMADDD\tF2, F1, F0, F3"}}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := Fused([]byte(tt.line))
			if !slices.Equal(got, tt.want) {
				t.Errorf("Fused(%q) = %+v, want %+v", tt.line, got, tt.want)
			}
		})
	}
}

func FuzzFused(f *testing.F) {
	f.Add([]byte("\t0x0010 00016 (/src/pier/fused.go:30)\tFMADDD\tF2, F1, F0, F3\n"))
	f.Add([]byte("(x.go:99999999999999999999)\tVFMADD231SD\n"))
	f.Add([]byte("FMADDD (a.go:1) (b.go:2)"))
	const known = "\t0x0000 00000 (berth.go:4)\tVFMSUB231SD\tX1, X0, X2"
	f.Fuzz(func(t *testing.T, listing []byte) {
		got := Fused(listing)
		for _, in := range got {
			if in.Line < 0 || !fusedOp.MatchString(in.Text) {
				t.Fatalf("Fused(%q) returned %+v", listing, in)
			}
		}
		more := Fused(append(append(slices.Clip(listing), '\n'), known...))
		if len(more) != len(got)+1 || more[len(more)-1].File != "berth.go" || more[len(more)-1].Line != 4 {
			t.Fatalf("appending one fused line to %q: %d instructions, then %+v", listing, len(got), more)
		}
	})
}

func TestMissingFlag(t *testing.T) {
	const info = "processor\t: 0\nflags\t\t: fpu sse2 avx avx2 fma bmi1\nbugs\t\t: none\nprocessor\t: 1\nflags\t\t: fpu\n"
	tests := []struct {
		name string
		want []string
		miss string
	}{
		{"all present", []string{"avx2", "fma"}, ""},
		{"one missing", []string{"avx2", "movbe", "fma"}, "movbe"},
		{"prefix is not a flag", []string{"avx5"}, "avx5"},
		{"only the first processor counts", []string{"bmi1"}, ""},
	}
	for _, tt := range tests {
		if got := missingFlag([]byte(info), tt.want); got != tt.miss {
			t.Errorf("%s: missingFlag(%q) = %q, want %q", tt.name, tt.want, got, tt.miss)
		}
	}
	if got := missingFlag(nil, []string{"fma"}); got != "fma" {
		t.Errorf("missingFlag(no flags line) = %q, want %q", got, "fma")
	}
}

func TestEnvValue(t *testing.T) {
	env := []string{"GOARCH=arm64", "GOAMD64", "GOARCH=amd64", "X=a=b"}
	for _, tt := range []struct{ key, def, want string }{
		{"GOARCH", "riscv64", "amd64"}, // the last setting wins, as in exec.Cmd
		{"GOAMD64", "v1", "v1"},        // a word without "=" sets nothing
		{"GOOS", "linux", "linux"},
		{"X", "", "a=b"},
	} {
		if got := envValue(env, tt.key, tt.def); got != tt.want {
			t.Errorf("envValue(%q, %q) = %q, want %q", tt.key, tt.def, got, tt.want)
		}
	}
}

// kernelLines are the source lines of the two kernels in testdata/kernel.
const plainLine, roundedLine = 7, 12

// TestKernelFusion compiles testdata/kernel for every target and checks
// the rule this package's users rely on (Go specification, "Arithmetic
// operators"): on a fusing target the plain a*b + c becomes a fused
// instruction and float64(a*b) + c never does; on amd64 v1 nothing fuses.
// It also checks that Fused finds what the compiler emitted.
func TestKernelFusion(t *testing.T) {
	for _, tg := range append(Fusing(), AMD64v1) {
		t.Run(tg.Name, func(t *testing.T) {
			fused := Fused(Assembly(t, "testdata/kernel", tg))
			plain := 0
			for _, in := range fused {
				if filepath.Base(in.File) != "kernel.go" || in.Line != plainLine {
					t.Errorf("fused instruction outside the plain kernel: %s", in.Text)
					continue
				}
				plain++
			}
			if tg.Fuses && plain == 0 {
				t.Errorf("no fused instruction in the plain kernel; %s should fuse a*b + c", tg.Name)
			}
			if !tg.Fuses && plain != 0 {
				t.Errorf("%d fused instructions; %s should not fuse", plain, tg.Name)
			}
		})
	}
}

// TestKernelBitsOnTargets builds the kernel's tests for each target, runs
// them on this host (under qemu-aarch64 for arm64 on other hosts) and
// reads the bits they print. With a = 1 + 2⁻³⁰, b = 1 − 2⁻³⁰, c = −1 the
// exact product is 1 − 2⁻⁶⁰, which rounds to 1 in float64 (the spacing
// below 1 is 2⁻⁵³), so float64(a*b) + c = 0 everywhere, while a fused
// multiply-add rounds once and gives −2⁻⁶⁰ (hand derivation).
func TestKernelBitsOnTargets(t *testing.T) {
	rounded := fmt.Sprintf("%016x", math.Float64bits(0))
	fusedBits := fmt.Sprintf("%016x", math.Float64bits(-math.Ldexp(1, -60)))
	for _, tg := range append(Fusing(), AMD64v1) {
		t.Run(tg.Name, func(t *testing.T) {
			bin := BuildTest(t, "testdata/kernel", tg)
			argv := append(Runner(t, tg), bin, "-test.run=^TestPrintBits$", "-test.v")
			out := string(Run(t, "testdata/kernel", []string{"CROSSBUILD_KERNEL_BITS=1"}, argv...))
			plain := rounded
			if tg.Fuses {
				plain = fusedBits
			}
			if want := "plain=" + plain + " rounded=" + rounded; !strings.Contains(out, want) {
				t.Errorf("%s kernel printed\n%s\nwant a line %q", tg.Name, out, want)
			}
		})
	}
}

func TestRunnerNative(t *testing.T) {
	native := Target{Name: "native", Env: []string{"GOOS=" + runtime.GOOS, "GOARCH=" + runtime.GOARCH}}
	if prefix, why := runner(native); prefix != nil || why != "" {
		t.Errorf("runner(native) = %q, %q; want no prefix and no reason", prefix, why)
	}
	other := Target{Name: "elsewhere", Env: []string{"GOOS=plan9", "GOARCH=" + runtime.GOARCH}}
	if _, why := runner(other); !strings.Contains(why, "plan9") {
		t.Errorf("runner(plan9) reason = %q, want it to name the system", why)
	}
}
