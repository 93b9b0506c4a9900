package sim

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// TestGoldenOtherTargets builds this package's tests for linux/arm64 and
// runs TestGolden under qemu-aarch64 (user-mode emulation), then builds them
// for amd64 with GOAMD64=v3 and runs TestGolden natively. Both targets may
// fuse multiply-adds, so this is the check that the float64(...) roundings
// in the simulator keep the bytes identical across architectures. It is
// skipped under -short, when qemu-aarch64 is not on PATH (the arm64 half),
// and when the CPU lacks the v3 features (the v3 half).
func TestGoldenOtherTargets(t *testing.T) {
	if testing.Short() {
		t.Skip("cross-architecture golden check skipped under -short")
	}
	goBin, err := exec.LookPath("go")
	if err != nil {
		t.Skip("no go command on PATH")
	}
	pkgDir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()

	build := func(t *testing.T, out string, env ...string) {
		t.Helper()
		cmd := exec.CommandContext(ctx, goBin, "test", "-c", "-o", out, ".")
		cmd.Dir = pkgDir
		cmd.Env = append(os.Environ(), env...)
		if b, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("go test -c %v: %v\n%s", env, err, b)
		}
	}
	runGolden := func(t *testing.T, argv ...string) {
		t.Helper()
		argv = append(argv, "-test.run", "^TestGolden$", "-test.v", "-test.count", "1")
		cmd := exec.CommandContext(ctx, argv[0], argv[1:]...)
		cmd.Dir = pkgDir // TestGolden reads testdata/
		b, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("%s: %v\n%s", strings.Join(argv, " "), err, b)
		}
		if !strings.Contains(string(b), "--- PASS: TestGolden ") {
			t.Fatalf("TestGolden did not pass:\n%s", b)
		}
		t.Logf("%s", b)
	}

	t.Run("arm64", func(t *testing.T) {
		qemu, err := exec.LookPath("qemu-aarch64")
		if err != nil {
			t.Skip("qemu-aarch64 not on PATH; install qemu-user to run the arm64 golden check")
		}
		bin := filepath.Join(t.TempDir(), "sim-arm64.test")
		build(t, bin, "GOOS=linux", "GOARCH=arm64", "CGO_ENABLED=0")
		runGolden(t, qemu, bin)
	})
	t.Run("amd64-v3", func(t *testing.T) {
		if runtime.GOARCH != "amd64" {
			t.Skip("GOAMD64=v3 binaries run only on amd64 hosts")
		}
		cpu, err := os.ReadFile("/proc/cpuinfo")
		if err != nil {
			t.Skipf("cannot read /proc/cpuinfo: %v", err)
		}
		for _, flag := range []string{"avx2", "fma", "bmi2", "movbe"} {
			if !strings.Contains(string(cpu), " "+flag) {
				t.Skipf("this CPU lacks %s, needed by GOAMD64=v3", flag)
			}
		}
		bin := filepath.Join(t.TempDir(), "sim-v3.test")
		build(t, bin, "GOOS=linux", "GOARCH=amd64", "GOAMD64=v3", "CGO_ENABLED=0")
		runGolden(t, bin)
	})
}
