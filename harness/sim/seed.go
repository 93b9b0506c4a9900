package sim

// golden is the SplitMix64 increment γ = 0x9E3779B97F4A7C15, the odd integer
// nearest 2⁶⁴/φ (Steele, Lea, Flood 2014).
const golden uint64 = 0x9E3779B97F4A7C15

// mix is the SplitMix64 output function (Vigna's splitmix64.c):
//
//	z ← (z ⊕ (z ≫ 30)) · 0xBF58476D1CE4E5B9
//	z ← (z ⊕ (z ≫ 27)) · 0x94D049BB133111EB
//	z ← z ⊕ (z ≫ 31)
//
// with arithmetic modulo 2⁶⁴. It is a bijection of the 64-bit words.
func mix(z uint64) uint64 {
	z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9
	z = (z ^ (z >> 27)) * 0x94D049BB133111EB
	return z ^ (z >> 31)
}

// RunSeed returns the seed of Monte Carlo run `run` (from 0) of a scenario
// whose seed is seed:
//
//	RunSeed(s, r) = mix(s + γ·(r+1) mod 2⁶⁴)
//
// which is the (r+1)-th output of a SplitMix64 generator whose state starts
// at s (Steele, Lea, Flood, "Fast splittable pseudorandom number
// generators", OOPSLA 2014; Vigna's reference splitmix64.c). Distinct runs of
// one scenario thus get distinct seeds (mix is a bijection), and neighbouring
// scenario seeds give unrelated run seeds. A negative run panics.
func RunSeed(seed uint64, run int) uint64 {
	if run < 0 {
		panic("sim: negative run index")
	}
	return mix(seed + golden*uint64(run+1))
}

// Stream kinds of streamSeeds.
const (
	streamObject uint64 = 1 // one stream per object: start draw and process noise
	streamScan   uint64 = 2 // one stream per step: the simulated scan
)

// streamSeeds returns the two PCG seed words of sub-stream (kind, index) of
// the run seed s:
//
//	h  = mix(s ⊕ mix(kind·γ))
//	a  = mix(h + γ·(index+1))
//	b  = mix(a + γ)
//
// so each (kind, index) pair starts an unrelated PCG state and increment.
func streamSeeds(s, kind uint64, index int) (uint64, uint64) {
	h := mix(s ^ mix(kind*golden))
	a := mix(h + golden*(uint64(index)+1))
	b := mix(a + golden)
	return a, b
}
