package catalogue

import (
	"context"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"trackgate/harness/compare"
	"trackgate/harness/config"
	"trackgate/harness/result"
	"trackgate/harness/runner"
	"trackgate/internal/crossbuild"
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
// The amd64 builds run only on an amd64 host, and the v3 build only on a
// CPU with the x86-64-v3 features; the arm64 build is skipped with a
// message when qemu-aarch64 is not installed (Debian: apt-get install
// qemu-user). The builds and skips come from internal/crossbuild.
func TestPortCertification(t *testing.T) {
	if testing.Short() {
		t.Skip("builds trackgate for amd64 v3 and arm64 and runs the stock library six times; skipped under -short")
	}
	if runtime.GOARCH != "amd64" {
		t.Skipf("the amd64 v1 and v3 builds need an amd64 host, this is %s", runtime.GOARCH)
	}
	targets := []crossbuild.Target{crossbuild.AMD64v1, crossbuild.AMD64v3, crossbuild.ARM64}
	files, err := filepath.Glob("../../scenarios/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no stock scenarios (err %v)", err)
	}
	check := func(t *testing.T, argv []string, profile string) *result.Suite {
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
		t.Run(tg.Name, func(t *testing.T) {
			argv := []string{bin} // TestMain built it for amd64 v1
			if tg.Name != crossbuild.AMD64v1.Name {
				prefix := crossbuild.Runner(t, tg)
				argv = append(prefix, crossbuild.Build(t, "../..", "./cmd/trackgate", tg))
			}
			ref := check(t, append(argv[:len(argv):len(argv)], "reference"), compare.BitExactName)
			if ref.Status != result.Pass {
				t.Errorf("reference built for %s: %s under bit-exact, want pass: %s", tg.Name, ref.Status, problems(ref))
			}
			fused := append(argv[:len(argv):len(argv)], "reference", "-variant", "fused")
			exact := check(t, fused, compare.BitExactName)
			diffs, kinds := estimateDiffs(exact)
			switch {
			case !tg.Fuses && exact.Status != result.Pass:
				t.Errorf("fused variant on %s, where nothing fuses: %s under bit-exact, want pass: %s", tg.Name, exact.Status, problems(exact))
			case tg.Fuses && (exact.Status != result.Fail || diffs == 0 || kinds != "estimate"):
				t.Errorf("fused variant on %s: %s under bit-exact with %d differences of kinds %q, want fail with estimate differences in the last bits", tg.Name, exact.Status, diffs, kinds)
			}
			port := check(t, fused, compare.Float64PortName)
			if port.Status != result.Pass {
				t.Errorf("fused variant on %s: %s under float64-port, want pass: %s", tg.Name, port.Status, problems(port))
			}
			t.Logf("%s: reference bit-exact %s; fused bit-exact %s (%d values differ), float64-port %s", tg.Name, ref.Status, exact.Status, diffs, port.Status)
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
