package catalogue

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"trackgate/harness/compare"
	"trackgate/harness/config"
	"trackgate/harness/result"
	"trackgate/harness/runner"
)

// TestPortCertification is port certification in miniature, for fused
// multiply-add. The Go specification ("Arithmetic operators") lets a
// compiler fuse x*y + z into one rounding; gc does on arm64 and on amd64
// built with GOAMD64=v3, never on amd64 v1. The reference converts every
// product that feeds a sum, float64(x*y), which forbids fusion, so:
//
//   - the reference built for amd64 v1, amd64 v3 and arm64 (run under
//     qemu-aarch64 user-mode emulation) must pass the gate under the
//     bit-exact profile against this test's own reference, on every stock
//     scenario;
//   - the fused variant, the same arithmetic written plainly, must pass
//     bit-exact where nothing fuses (amd64 v1), must fail bit-exact with
//     estimate differences where the compiler fuses (v3, arm64), and must
//     pass the float64-port profile there: the port profile is what
//     certifies a port whose last bits legitimately differ.
//
// The amd64 builds run only on an amd64 host; the arm64 build is skipped
// with a message when qemu-aarch64 is not installed (Debian: apt-get install
// qemu-user).
func TestPortCertification(t *testing.T) {
	if testing.Short() {
		t.Skip("builds trackgate for amd64 v3 and arm64 and runs the stock library six times; skipped under -short")
	}
	if runtime.GOARCH != "amd64" {
		t.Skipf("the amd64 v1 and v3 builds need an amd64 host, this is %s", runtime.GOARCH)
	}
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Skip("go command not found")
	}
	dir := t.TempDir()
	build := func(name string, env ...string) string {
		t.Helper()
		out := filepath.Join(dir, name)
		cmd := exec.Command(gobin, "build", "-o", out, "./cmd/trackgate")
		cmd.Dir = "../.."
		cmd.Env = append(append(os.Environ(), "CGO_ENABLED=0", "GOFLAGS=-buildvcs=false"), env...)
		if b, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("%v go build: %v\n%s", env, err, b)
		}
		return out
	}
	type target struct {
		name  string
		argv  []string
		fuses bool
		skip  string
	}
	targets := []target{
		{name: "amd64-v1", argv: []string{bin}}, // built by TestMain for amd64 v1
		{name: "amd64-v3", argv: []string{build("trackgate-v3", "GOARCH=amd64", "GOAMD64=v3")}, fuses: true},
	}
	if qemu, err := exec.LookPath("qemu-aarch64"); err == nil {
		targets = append(targets, target{name: "arm64", argv: []string{qemu, build("trackgate-arm64", "GOARCH=arm64")}, fuses: true})
	} else {
		targets = append(targets, target{name: "arm64", skip: "qemu-aarch64 not found: the arm64 port is not checked (Debian: apt-get install qemu-user)"})
	}
	files, err := filepath.Glob("../../scenarios/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no stock scenarios (err %v)", err)
	}
	check := func(argv []string, profile string) *result.Suite {
		t.Helper()
		s, err := runner.Check(context.Background(), runner.Options{
			Config:    config.Config{TieMargin: 1e-9},
			Tracker:   argv,
			Scenarios: files,
			Against:   runner.AgainstReference,
			Runs:      1,
			Workers:   2,
			Profile:   profile,
		})
		if err != nil {
			t.Fatalf("runner.Check(%v): %v", argv, err)
		}
		return s
	}
	for _, tg := range targets {
		t.Run(tg.name, func(t *testing.T) {
			if tg.skip != "" {
				t.Skip(tg.skip)
			}
			ref := check(append(tg.argv[:len(tg.argv):len(tg.argv)], "reference"), compare.BitExactName)
			if ref.Status != result.Pass {
				t.Errorf("reference built for %s: %s under bit-exact, want pass: %s", tg.name, ref.Status, problems(ref))
			}
			fused := append(tg.argv[:len(tg.argv):len(tg.argv)], "reference", "-variant", "fused")
			exact := check(fused, compare.BitExactName)
			diffs, kinds := estimateDiffs(exact)
			switch {
			case !tg.fuses && exact.Status != result.Pass:
				t.Errorf("fused variant on %s, where nothing fuses: %s under bit-exact, want pass: %s", tg.name, exact.Status, problems(exact))
			case tg.fuses && (exact.Status != result.Fail || diffs == 0 || kinds != "estimate"):
				t.Errorf("fused variant on %s: %s under bit-exact with %d differences of kinds %q, want fail with estimate differences in the last bits", tg.name, exact.Status, diffs, kinds)
			}
			port := check(fused, compare.Float64PortName)
			if port.Status != result.Pass {
				t.Errorf("fused variant on %s: %s under float64-port, want pass: %s", tg.name, port.Status, problems(port))
			}
			t.Logf("%s: reference bit-exact %s; fused bit-exact %s (%d values differ), float64-port %s", tg.name, ref.Status, exact.Status, diffs, port.Status)
		})
	}
}

// estimateDiffs counts the value differences over a suite's failing checks
// (capped per check by the runner) and lists the kinds of their first
// divergences.
func estimateDiffs(s *result.Suite) (int, string) {
	n := 0
	kinds := map[string]bool{}
	for _, sc := range s.Scenarios {
		for _, r := range sc.Runs {
			for _, c := range r.Checks {
				if c.Status != result.Fail {
					continue
				}
				n += len(c.Diffs) + c.Truncated
				if c.First != nil {
					kinds[c.First.Kind] = true
				}
			}
		}
	}
	var ks []string
	for k := range kinds {
		ks = append(ks, k)
	}
	return n, strings.Join(ks, ",")
}
