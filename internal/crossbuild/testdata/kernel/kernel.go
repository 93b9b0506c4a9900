// Package kernel holds two multiply-add kernels, one written plainly and
// one with the product rounded explicitly, for the crossbuild tests.
package kernel

// Plain returns a*b + c as written; gc may fuse it.
func Plain(a, b, c float64) float64 {
	return a*b + c
}

// Rounded returns float64(a*b) + c; the conversion forbids fusion.
func Rounded(a, b, c float64) float64 {
	return float64(a*b) + c
}
