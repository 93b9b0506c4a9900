package compare

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestRuleAgree(t *testing.T) {
	inf, nan := math.Inf(1), math.NaN()
	tiny := math.SmallestNonzeroFloat64
	one1 := math.Nextafter(1, 2) // 1 + 2⁻⁵²
	tests := []struct {
		name      string
		rule      Rule
		want, got float64
		agree     bool
		reason    string
	}{
		{"exact", Rule{}, 1.5, 1.5, true, ""},
		{"exact neighbour", Rule{}, 1, one1, false, "zero rule demands equality"},
		{"signed zeros", Rule{}, 0, math.Copysign(0, -1), true, "+0 == −0 (IEEE 754-2008 §5.11, common practice)"},
		{"nan nan", Rule{Abs: inf, Rel: 1, ULPs: math.MaxUint64}, nan, nan, false, "NaN never agrees, even with itself"},
		{"nan number", Rule{Abs: 1e300}, nan, 0, false, ""},
		{"same inf", Rule{}, inf, inf, true, ""},
		{"opposite inf", Rule{Abs: 1e308, ULPs: math.MaxUint64 - 1}, inf, -inf, false, ""},
		{"inf vs max", Rule{Abs: 1e308, Rel: 1, ULPs: 10}, inf, math.MaxFloat64, false, "an infinity agrees only with itself"},
		{"abs inside", Rule{Abs: 0.1}, 1, 1.1 - 1e-12, true, ""},
		{"abs outside", Rule{Abs: 0.1}, 1, 1.2, false, ""},
		{"rel uses max", Rule{Rel: 0.5}, 1, 2, true, "|2−1| = 1 ≤ 0.5·max(1,2) = 1"},
		{"rel symmetric", Rule{Rel: 0.5}, 2, 1, true, "swapping want and got keeps the verdict"},
		{"rel just outside", Rule{Rel: 0.49}, 1, 2, false, ""},
		{"one ulp", Rule{ULPs: 1}, 1, one1, true, ""},
		{"ulp across zero", Rule{ULPs: 2}, tiny, -tiny, true, "smallest subnormals of both signs are 2 apart"},
		{"ulp across zero short", Rule{ULPs: 1}, tiny, -tiny, false, ""},
		{"abs floor near zero", Rule{Abs: 1e-9, Rel: 1e-12}, 0, 5e-10, true, "floor covers cancellation"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := tt.rule.Agree(tt.want, tt.got); got != tt.agree {
				t.Errorf("%v.Agree(%v, %v) = %v, want %v (%s)", tt.rule, tt.want, tt.got, got, tt.agree, tt.reason)
			}
			if got := tt.rule.Agree(tt.got, tt.want); got != tt.agree {
				t.Errorf("%v.Agree(%v, %v) swapped = %v, want %v", tt.rule, tt.got, tt.want, got, tt.agree)
			}
		})
	}
}

func TestULPDistanceKnown(t *testing.T) {
	// binary64 has a 52-bit fraction field (IEEE 754-2008, Table 3.5), so
	// [1, 2) holds 2⁵² values and the exponent step from 1 to 2 is 2⁵² ULP.
	// MaxFloat64 is followed by +Inf in the encoding (IEEE 754-2008 §3.4).
	tests := []struct {
		a, b float64
		want uint64
	}{
		{1, 2, 1 << 52},
		{1, 1, 0},
		{0, math.Copysign(0, -1), 0},
		{0, math.SmallestNonzeroFloat64, 1},
		{-math.SmallestNonzeroFloat64, math.SmallestNonzeroFloat64, 2},
		{math.MaxFloat64, math.Inf(1), 1},
		{-1, 1, 2 * 0x3FF0000000000000},
		{math.NaN(), 1, math.MaxUint64},
	}
	for _, tt := range tests {
		if got := ULPDistance(tt.a, tt.b); got != tt.want {
			t.Errorf("ULPDistance(%v, %v) = %d, want %d", tt.a, tt.b, got, tt.want)
		}
	}
}

// TestULPDistanceNextafter counts steps with the standard library's
// math.Nextafter, an independent implementation of the float successor.
func TestULPDistanceNextafter(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 4))
	for i := 0; i < 2000; i++ {
		var a float64
		switch i % 4 {
		case 0:
			a = math.Float64frombits(rng.Uint64())
		case 1:
			a = float64(rng.Uint64N(40)) * math.SmallestNonzeroFloat64 * float64(1-2*int(rng.Uint64N(2)))
		default:
			a = rng.NormFloat64() * math.Pow(10, float64(rng.IntN(40)-20))
		}
		if math.IsNaN(a) || math.IsInf(a, 0) {
			continue
		}
		n := rng.IntN(60)
		dir := math.Inf(1)
		if rng.IntN(2) == 0 {
			dir = math.Inf(-1)
		}
		b := a
		steps := 0
		for ; steps < n && !math.IsInf(b, 0); steps++ {
			nb := math.Nextafter(b, dir)
			if nb == 0 && b == 0 { // Nextafter from ±0 never yields the other zero
				break
			}
			b = nb
		}
		if got := ULPDistance(a, b); got != uint64(steps) {
			t.Fatalf("ULPDistance(%v, %v) = %d, want %d steps of math.Nextafter", a, b, got, steps)
		}
	}
}

func TestRuleValid(t *testing.T) {
	for _, r := range []Rule{{Abs: -1}, {Rel: -1e-9}, {Abs: math.NaN()}, {Rel: math.Inf(1)}} {
		if r.Valid() == nil {
			t.Errorf("%v.Valid() = nil, want an error", r)
		}
	}
	if err := Float32Port().Mean.Valid(); err != nil {
		t.Errorf("Float32Port().Mean.Valid() = %v", err)
	}
}

func TestProfileConstants(t *testing.T) {
	// The values the PortProfile doc comment states, recomputed from the
	// formula Rel = 2·L·A·C·u, Abs = 2·L·A·u·S.
	tests := []struct {
		p        Profile
		rel, abs float64
	}{
		{Float64Port(), math.Ldexp(1, -40), math.Ldexp(1, -32)},
		{Float32Port(), math.Ldexp(1, -11), math.Ldexp(1, -3)},
		{BitExact(), 0, 0},
	}
	for _, tt := range tests {
		for _, r := range []Rule{tt.p.Mean, tt.p.Cov, tt.p.Metric} {
			if r.Rel != tt.rel || r.Abs != tt.abs || r.ULPs != 0 {
				t.Errorf("%s rule = %v, want rel %g abs %g", tt.p.Name, r, tt.rel, tt.abs)
			}
		}
		if q, ok := Lookup(tt.p.Name); !ok || q != tt.p {
			t.Errorf("Lookup(%q) = %v, %v", tt.p.Name, q, ok)
		}
	}
	if _, ok := Lookup("nearly"); ok {
		t.Error(`Lookup("nearly") found a profile`)
	}
}

func BenchmarkRuleAgree(b *testing.B) {
	r := Float64Port().Mean
	b.ReportAllocs()
	x := 1234.5
	for i := 0; i < b.N; i++ {
		r.Agree(x, x+1e-9)
	}
}
