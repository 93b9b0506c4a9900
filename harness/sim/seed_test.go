package sim

import "testing"

func TestRunSeedSplitMix64Reference(t *testing.T) {
	// SplitMix64 started at state 1234567: its first five outputs as printed
	// on Rosetta Code, "Pseudo-random numbers/Splitmix64" (which follows
	// Vigna's reference splitmix64.c). RunSeed(s, r) is output r+1.
	want := []uint64{
		6457827717110365317,
		3203168211198807973,
		9817491932198370423,
		4593380528125082431,
		16408922859458223821,
	}
	for r, w := range want {
		if got := RunSeed(1234567, r); got != w {
			t.Errorf("RunSeed(1234567, %d) = %d, want %d", r, got, w)
		}
	}
	// Started at 0, the first output is 0xe220a8397b1dcdaf (Vigna's
	// splitmix64.c seeded with 0; the value is widely reproduced, e.g. as
	// the first word of xoshiro seeding examples; from memory).
	if got := RunSeed(0, 0); got != 0xe220a8397b1dcdaf {
		t.Errorf("RunSeed(0, 0) = %#x, want 0xe220a8397b1dcdaf", got)
	}
}

func TestRunSeedDistinct(t *testing.T) {
	seen := map[uint64]int{}
	for r := 0; r < 10000; r++ {
		s := RunSeed(42, r)
		if prev, dup := seen[s]; dup {
			t.Fatalf("RunSeed(42, %d) = RunSeed(42, %d) = %d", r, prev, s)
		}
		seen[s] = r
	}
}

func TestStreamSeedsDistinct(t *testing.T) {
	type pair struct{ a, b uint64 }
	seen := map[pair]string{}
	for _, kind := range []uint64{streamObject, streamScan} {
		for i := 0; i < 2000; i++ {
			a, b := streamSeeds(7, kind, i)
			p := pair{a, b}
			if prev, dup := seen[p]; dup {
				t.Fatalf("streamSeeds(7, %d, %d) repeats %s", kind, i, prev)
			}
			seen[p] = "earlier stream"
		}
	}
}

func TestRunSeedNegativePanics(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("RunSeed(1, -1) did not panic")
		}
	}()
	RunSeed(1, -1)
}
