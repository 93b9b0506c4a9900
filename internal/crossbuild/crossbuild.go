package crossbuild

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"time"
)

// Target is one build configuration.
type Target struct {
	// Name is a short label for subtests and messages ("arm64").
	Name string
	// Env holds the GOOS, GOARCH and GOAMD64 settings of the build.
	Env []string
	// Fuses reports whether gc fuses x*y + z into one instruction here.
	Fuses bool
}

// The targets tests build for.
var (
	// ARM64 is linux/arm64, where gc fuses multiply-adds.
	ARM64 = Target{Name: "arm64", Env: []string{"GOOS=linux", "GOARCH=arm64"}, Fuses: true}
	// AMD64v3 is linux/amd64 with GOAMD64=v3, where gc fuses multiply-adds.
	AMD64v3 = Target{Name: "amd64-v3", Env: []string{"GOOS=linux", "GOARCH=amd64", "GOAMD64=v3"}, Fuses: true}
	// AMD64v1 is linux/amd64 with GOAMD64=v1, where nothing fuses.
	AMD64v1 = Target{Name: "amd64-v1", Env: []string{"GOOS=linux", "GOARCH=amd64", "GOAMD64=v1"}}
)

// Fusing returns the targets whose compilers fuse multiply-adds.
func Fusing() []Target { return []Target{ARM64, AMD64v3} }

// timeout bounds every go or target command a helper starts.
const timeout = 5 * time.Minute

// Go returns the path of the go command. It skips t under -short (the
// helpers compile whole packages) and when no go command is on PATH.
func Go(t testing.TB) string {
	t.Helper()
	if testing.Short() {
		t.Skip("cross-builds with the go command; skipped under -short")
	}
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Skip("go command not found on PATH")
	}
	return gobin
}

// goCmd runs the go command in dir for tg and returns its combined output,
// failing t when it fails.
func goCmd(t testing.TB, dir string, tg Target, args ...string) []byte {
	t.Helper()
	gobin := Go(t)
	ctx, cancel := context.WithTimeout(t.Context(), timeout)
	defer cancel()
	cmd := exec.CommandContext(ctx, gobin, args...)
	cmd.Dir = dir
	cmd.Env = append(os.Environ(), "CGO_ENABLED=0", "GOFLAGS=-buildvcs=false")
	cmd.Env = append(cmd.Env, tg.Env...)
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("%s: go %s: %v\n%.2000s", tg.Name, strings.Join(args, " "), err, out)
	}
	return out
}

// Assembly compiles the package in dir (a folder, relative to the test's
// working folder) for tg and returns the compiler's assembly listing
// (go build -gcflags=-S) of that package alone.
func Assembly(t testing.TB, dir string, tg Target) []byte {
	t.Helper()
	return goCmd(t, dir, tg, "build", "-o", os.DevNull, "-gcflags=-S", ".")
}

// Build compiles the main package pkg ("./cmd/trackgate") from the module
// folder dir for tg into a temporary folder and returns the binary's path.
func Build(t testing.TB, dir, pkg string, tg Target) string {
	t.Helper()
	out := filepath.Join(t.TempDir(), filepath.Base(pkg)+"-"+tg.Name)
	goCmd(t, dir, tg, "build", "-o", out, pkg)
	return out
}

// BuildTest compiles the tests of the package in dir for tg (go test -c)
// and returns the test binary's path.
func BuildTest(t testing.TB, dir string, tg Target) string {
	t.Helper()
	out := filepath.Join(t.TempDir(), "pkg-"+tg.Name+".test")
	goCmd(t, dir, tg, "test", "-c", "-o", out, ".")
	return out
}

// Runner returns the words that run a binary built for tg on this host:
// none for a native build, the qemu-aarch64 path for arm64 elsewhere. It
// skips t, saying why, when the host cannot run tg's binaries.
func Runner(t testing.TB, tg Target) []string {
	t.Helper()
	prefix, why := runner(tg)
	if why != "" {
		t.Skip(why)
	}
	return prefix
}

// runner is Runner without the test: a reason is returned instead of
// skipping.
func runner(tg Target) (prefix []string, why string) {
	arch := envValue(tg.Env, "GOARCH", runtime.GOARCH)
	if goos := envValue(tg.Env, "GOOS", runtime.GOOS); goos != runtime.GOOS {
		return nil, tg.Name + ": " + goos + " binaries do not run on " + runtime.GOOS
	}
	if arch == runtime.GOARCH {
		if arch == "amd64" && envValue(tg.Env, "GOAMD64", "v1") == "v3" {
			if missing := missingV3(); missing != "" {
				return nil, tg.Name + ": this CPU lacks " + missing + ", needed by GOAMD64=v3"
			}
		}
		return nil, ""
	}
	if arch == "arm64" {
		qemu, err := exec.LookPath("qemu-aarch64")
		if err != nil {
			return nil, tg.Name + ": qemu-aarch64 not on PATH; install qemu-user (Debian: apt-get install qemu-user) to run arm64 builds"
		}
		return []string{qemu}, ""
	}
	return nil, tg.Name + ": " + arch + " binaries do not run on " + runtime.GOARCH
}

// envValue returns the value of key in env (the last setting wins), or def.
func envValue(env []string, key, def string) string {
	v := def
	for _, kv := range env {
		if k, val, ok := strings.Cut(kv, "="); ok && k == key {
			v = val
		}
	}
	return v
}

// v3Flags are the /proc/cpuinfo flags of the x86-64-v3 features that v1
// and v2 lack (the psABI level list; "abm" is how Linux names LZCNT).
var v3Flags = []string{"avx", "avx2", "bmi1", "bmi2", "f16c", "fma", "abm", "movbe", "xsave"}

// missingV3 names the first x86-64-v3 feature this CPU lacks, or "" when it
// has them all.
func missingV3() string {
	info, err := os.ReadFile("/proc/cpuinfo")
	if err != nil {
		return "a readable /proc/cpuinfo"
	}
	return missingFlag(info, v3Flags)
}

// missingFlag returns the first of want missing from the first "flags"
// line of a /proc/cpuinfo text, or "" when none is.
func missingFlag(cpuinfo []byte, want []string) string {
	have := map[string]bool{}
	for _, line := range strings.Split(string(cpuinfo), "\n") {
		if k, v, ok := strings.Cut(line, ":"); ok && strings.TrimSpace(k) == "flags" {
			for _, f := range strings.Fields(v) {
				have[f] = true
			}
			break
		}
	}
	for _, f := range want {
		if !have[f] {
			return f
		}
	}
	return ""
}

// Run runs argv (a Runner prefix and a binary with its arguments) in dir
// with extra environment settings and returns its combined output, failing
// t when it fails.
func Run(t testing.TB, dir string, env []string, argv ...string) []byte {
	t.Helper()
	ctx, cancel := context.WithTimeout(t.Context(), timeout)
	defer cancel()
	cmd := exec.CommandContext(ctx, argv[0], argv[1:]...)
	cmd.Dir = dir
	cmd.Env = append(os.Environ(), env...)
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("%s: %v\n%.4000s", strings.Join(argv, " "), err, out)
	}
	return out
}

// Instr is one instruction of an assembly listing.
type Instr struct {
	// File and Line locate the Go source the instruction came from.
	File string
	Line int
	// Text is the listing line, trimmed.
	Text string
}

var (
	// fusedOp matches the float64 fused multiply-add instructions gc emits:
	// arm64 FMADDD, FMSUBD, FNMADDD, FNMSUBD and amd64 VFMADD231SD and its
	// relatives (Go assembler mnemonics).
	fusedOp = regexp.MustCompile(`\b(FMADDD|FMSUBD|FNMADDD|FNMSUBD|VFN?M(ADD|SUB)\d+SD)\b`)
	// source matches the "(file.go:line)" position of a listing line.
	source = regexp.MustCompile(`\(([^()]*\.go):(\d+)\)`)
)

// Fused returns the fused multiply-add instructions of an assembly listing,
// in listing order.
func Fused(listing []byte) []Instr {
	var out []Instr
	for _, line := range bytes.Split(listing, []byte("\n")) {
		if !fusedOp.Match(line) {
			continue
		}
		in := Instr{Text: string(bytes.TrimSpace(line))}
		if m := source.FindSubmatch(line); m != nil {
			in.File = string(m[1])
			in.Line, _ = strconv.Atoi(string(m[2]))
		}
		out = append(out, in)
	}
	return out
}
