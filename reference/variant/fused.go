package variant

// plain is the fused variant's kernel: the reference's order, but each
// product written plainly into the sum, s += a·b, with no float64(·)
// conversion. The Go specification lets the compiler fuse such a
// multiply-add into one rounding, and gc does so on arm64 (FMADDD, FMSUBD)
// and on amd64 built with GOAMD64=v3 (VFMADD231SD, VFNMADD231SD); on amd64
// v1 it cannot, and plain gives the reference's bits. This file is the only
// place in the project where a product feeds a sum unconverted, on purpose.
var plain = sums{
	add: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := 0; l < n; l++ {
			s += a[ia+l*sa] * b[ib+l*sb]
		}
		return s
	},
	sub: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := 0; l < n; l++ {
			s -= a[ia+l*sa] * b[ib+l*sb]
		}
		return s
	},
}
