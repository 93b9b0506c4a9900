package variant

// plain is the fused variant's kernel: the reference's order, but each
// product written plainly into the sum, s += a·b, with no float64(·)
// conversion, and zero terms skipped (F and H are mostly zeros: a common
// shortcut of hand-written trackers). The Go specification lets the
// compiler fuse such a multiply-add into one rounding, and gc does so on
// arm64 (FMADDD, FMSUBD) and, for the additions, on amd64 built with
// GOAMD64=v3 (VFMADD231SD). On amd64 v1 nothing fuses and plain gives the
// reference's bits (a skipped term adds ±0, which changes no sum except the
// sign of a zero).
//
// The zero test is also what lets amd64 v3 fuse at all: gc folds a
// single-use load into the multiply (MULSD from memory), and only a
// multiply of two register operands matches its fusion rule; testing both
// operands gives each a second use and keeps them in registers (observed in
// the -gcflags=-S listing of go1.26).
//
// This file is the only place in the project where a product feeds a sum
// unconverted, on purpose.
var plain = sums{
	add: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := 0; l < n; l++ {
			x, y := a[ia+l*sa], b[ib+l*sb]
			if x == 0 || y == 0 {
				continue
			}
			s += x * y
		}
		return s
	},
	sub: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := 0; l < n; l++ {
			x, y := a[ia+l*sa], b[ib+l*sb]
			if x == 0 || y == 0 {
				continue
			}
			s -= x * y
		}
		return s
	},
}
