// Package crossbuild lets tests build this module's code for the targets
// whose Go compiler fuses multiply-adds, read the generated assembly, and
// run the builds on this host, so that a test can show that trackgate's
// floating-point results do not depend on the target it was built for.
//
// The Go specification allows an implementation to fuse x*y + z into one
// fused multiply-add, rounding once instead of twice; an explicit
// conversion, float64(x*y), forces the product to be rounded and forbids
// the fusion. gc fuses on arm64, and on amd64 when built with GOAMD64=v3;
// it does not fuse on amd64 v1 (common practice, observed with the gc
// toolchain; the kernel in testdata/kernel checks it on each run).
//
// Targets whose binaries this host cannot run natively are run under
// qemu-aarch64 user-mode emulation when it is on PATH (Debian and Ubuntu:
// apt-get install qemu-user); otherwise the test is skipped with a message
// saying what to install. A GOAMD64=v3 binary runs only on a CPU with the
// x86-64-v3 features, which Runner checks in /proc/cpuinfo.
//
// The package is meant for _test.go files only; every helper takes the
// test's testing.TB and fails or skips it rather than returning an error.
//
// References:
//   - The Go Programming Language Specification, "Arithmetic operators"
//     (fused multiply-add and explicit conversions), https://go.dev/ref/spec.
//   - x86-64 psABI, "Micro-architecture levels" (x86-64-v3: AVX2, BMI1,
//     BMI2, F16C, FMA, LZCNT, MOVBE, XSAVE), version 1.0, 2020, from memory.
package crossbuild
