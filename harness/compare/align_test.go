package compare

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/mot"
)

// points makes one frame of 2-D tracks named prefix1, prefix2, ...
func points(step int, prefix string, xy ...[2]float64) mot.Frame {
	f := mot.Frame{Step: step}
	for i, p := range xy {
		f.Tracks = append(f.Tracks, mot.Estimate{Track: fmt.Sprintf("%s%d", prefix, i+1), Mean: []float64{p[0], p[1]}})
	}
	return f
}

type pt = [2]float64

var plane = Options{Position: []int{0, 1}}

// TestAlignGOSPA checks that on a one-step run the alignment cost is the
// squared GOSPA (p = 2, α = 2) and the pairs are its optimal assignment.
// Cases G2–G6 and their values: project notes CHECK-VALUES.md §1.3, computed
// there from Definition 1 and Proposition 1 of Rahmathullah,
// García-Fernández, Svensson, "Generalized optimal sub-pattern assignment
// metric", FUSION 2017, by brute force and with scipy 1.10.1.
func TestAlignGOSPA(t *testing.T) {
	tests := []struct {
		name   string
		x, y   []pt
		c      float64
		cost   float64 // GOSPA^p
		pairs  map[string]string
		reason string
	}{
		{"G2", []pt{{0, 0}, {10, 0}, {20, 0}}, []pt{{0, 1}, {10, 0.5}, {50, 50}}, 5, 26.25,
			map[string]string{"y1": "x1", "y2": "x2"}, "(20,0)–(50,50) is beyond c: one missed, one false"},
		{"G3 c=5", []pt{{0, 0}, {6, 8}}, []pt{{0, 3}, {5, 8}, {4, 4}}, 5, 22.5,
			map[string]string{"y1": "x1", "y2": "x2"}, "(4,4) is the false one although within c of (6,8)"},
		{"G3 c=2", []pt{{0, 0}, {6, 8}}, []pt{{0, 3}, {5, 8}, {4, 4}}, 2, 7,
			map[string]string{"y2": "x2"}, ""},
		{"G4 greedy trap", []pt{{0, 0}, {2, 0}}, []pt{{1, 0}, {3.5, 0}}, 3, 3.25,
			map[string]string{"y1": "x1", "y2": "x2"}, "greedy nearest neighbour would give 10"},
		{"G5 no truth", nil, []pt{{1, 1}, {2, 2}, {3, 3}}, 5, 37.5, map[string]string{}, ""},
		{"G6", []pt{{0, 0}, {1, 1}, {5, 5}}, []pt{{0.5, 0}}, 5, 25.25,
			map[string]string{"y1": "x1"}, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			o := plane
			o.Cutoff = tt.c
			a, err := Align([]mot.Frame{points(0, "x", tt.x...)}, []mot.Frame{points(0, "y", tt.y...)}, o)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(a.Cost-tt.cost) > 1e-12*tt.cost {
				t.Errorf("Align cost = %v, want GOSPA² %v (%s)", a.Cost, tt.cost, tt.reason)
			}
			if diff := cmp.Diff(tt.pairs, a.Names); diff != "" {
				t.Errorf("Align pairs (-want +got):\n%s", diff)
			}
			f, err := Follow([]mot.Frame{points(0, "x", tt.x...)}, []mot.Frame{points(0, "y", tt.y...)}, o)
			if err != nil {
				t.Fatal(err)
			}
			if diff := cmp.Diff(tt.pairs, f.Pairs[0].Pairs); diff != "" {
				t.Errorf("Follow pairs (-want +got):\n%s", diff)
			}
		})
	}
}

// runCost evaluates the Align cost of a given pairing directly from its
// definition, step by step, without the Δ rewriting Align uses.
func runCost(want, got []mot.Frame, pairs map[string]string, c float64) float64 {
	c2 := c * c
	at := func(fs []mot.Frame) map[int]map[string][]float64 {
		m := map[int]map[string][]float64{}
		for _, f := range fs {
			m[f.Step] = map[string][]float64{}
			for _, e := range f.Tracks {
				m[f.Step][e.Track] = e.Mean
			}
		}
		return m
	}
	W, G := at(want), at(got)
	steps := map[int]bool{}
	for k := range W {
		steps[k] = true
	}
	for k := range G {
		steps[k] = true
	}
	total := 0.0
	for k := range steps {
		covered := 0
		for tg, rf := range pairs {
			a, ok1 := W[k][rf]
			b, ok2 := G[k][tg]
			if ok1 && ok2 {
				d2 := math.Pow(a[0]-b[0], 2) + math.Pow(a[1]-b[1], 2)
				if !(d2 < c2) { // beyond the cut-off, or NaN: the documented cap
					d2 = c2
				}
				total += d2
				covered += 2
			}
		}
		total += c2 / 2 * float64(len(W[k])+len(G[k])-covered)
	}
	return total
}

// allPairings enumerates every partial one-to-one pairing of tracker names
// with reference names.
func allPairings(trk, ref []string) []map[string]string {
	if len(trk) == 0 {
		return []map[string]string{{}}
	}
	var out []map[string]string
	for _, rest := range allPairings(trk[1:], ref) {
		out = append(out, rest) // trk[0] unpaired
		used := map[string]bool{}
		for _, r := range rest {
			used[r] = true
		}
		for _, r := range ref {
			if !used[r] {
				m := map[string]string{trk[0]: r}
				for k, v := range rest {
					m[k] = v
				}
				out = append(out, m)
			}
		}
	}
	return out
}

// randomRun makes small random runs: tracks appear and vanish, positions
// drift, tracker tracks follow reference tracks with noise or wander.
func randomRun(rng *rand.Rand, nref, ntrk, steps int) (want, got []mot.Frame) {
	type walk struct {
		start, end   int
		x, y, vx, vy float64
	}
	mk := func(n int) []walk {
		w := make([]walk, n)
		for i := range w {
			s := rng.IntN(steps)
			w[i] = walk{s, s + 1 + rng.IntN(steps-s), rng.Float64() * 40, rng.Float64() * 40, rng.NormFloat64(), rng.NormFloat64()}
		}
		return w
	}
	rw, tw := mk(nref), mk(ntrk)
	for i := range tw {
		if i < nref && rng.IntN(3) > 0 { // follow a reference track
			tw[i].x, tw[i].y, tw[i].vx, tw[i].vy = rw[i].x+rng.NormFloat64(), rw[i].y+rng.NormFloat64(), rw[i].vx, rw[i].vy
		}
	}
	frames := func(ws []walk, prefix string) []mot.Frame {
		var fs []mot.Frame
		for k := 0; k < steps; k++ {
			f := mot.Frame{Step: k}
			for i, w := range ws {
				if k >= w.start && k < w.end {
					x := w.x + float64(k)*w.vx + 0.3*rng.NormFloat64()
					y := w.y + float64(k)*w.vy + 0.3*rng.NormFloat64()
					f.Tracks = append(f.Tracks, mot.Estimate{Track: fmt.Sprintf("%s%d", prefix, i), Mean: []float64{x, 0, y, 0}})
				}
			}
			fs = append(fs, f)
		}
		return fs
	}
	return frames(rw, "obj"), frames(tw, "trk")
}

// TestAlignBruteForce compares Align's optimum with exhaustive enumeration of
// all pairings, each costed from the definition.
func TestAlignBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 7))
	o := Options{Position: []int{0, 2}, Cutoff: 4}
	for trial := 0; trial < 300; trial++ {
		want, got := randomRun(rng, rng.IntN(4), rng.IntN(5), 2+rng.IntN(6))
		a, err := Align(want, got, o)
		if err != nil {
			t.Fatal(err)
		}
		names := func(fs []mot.Frame) []string {
			seen := map[string]bool{}
			var out []string
			for _, f := range fs {
				for _, e := range f.Tracks {
					if !seen[e.Track] {
						seen[e.Track] = true
						out = append(out, e.Track)
					}
				}
			}
			return out
		}
		// runCost reads positions from components 0 and 1; project them.
		proj := func(fs []mot.Frame) []mot.Frame {
			out := make([]mot.Frame, len(fs))
			for i, f := range fs {
				out[i] = mot.Frame{Step: f.Step}
				for _, e := range f.Tracks {
					out[i].Tracks = append(out[i].Tracks, mot.Estimate{Track: e.Track, Mean: []float64{e.Mean[0], e.Mean[2]}})
				}
			}
			return out
		}
		pw, pg := proj(want), proj(got)
		best := math.Inf(1)
		for _, p := range allPairings(names(got), names(want)) {
			best = math.Min(best, runCost(pw, pg, p, o.Cutoff))
		}
		if math.Abs(a.Cost-best) > 1e-9*math.Max(1, best) {
			t.Fatalf("trial %d: Align cost %v, brute force %v", trial, a.Cost, best)
		}
		if c := runCost(pw, pg, a.Names, o.Cutoff); math.Abs(c-a.Cost) > 1e-9*math.Max(1, c) {
			t.Fatalf("trial %d: Align reports cost %v but its pairing costs %v", trial, a.Cost, c)
		}
	}
}

// TestAlignRelabelPermute: renaming tracks and shuffling their order in
// every frame must give the same results under the renaming.
func TestAlignRelabelPermute(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 99))
	o := Options{Position: []int{0, 2}, Cutoff: 3}
	for trial := 0; trial < 200; trial++ {
		want, got := randomRun(rng, 1+rng.IntN(5), 1+rng.IntN(6), 3+rng.IntN(10))
		rn := map[string]string{}
		relabel := func(fs []mot.Frame, prefix string) []mot.Frame {
			out := make([]mot.Frame, len(fs))
			for i, f := range fs {
				out[i] = mot.Frame{Step: f.Step, Tracks: append([]mot.Estimate(nil), f.Tracks...)}
				for j := range out[i].Tracks {
					old := out[i].Tracks[j].Track
					if _, ok := rn[old]; !ok {
						rn[old] = fmt.Sprintf("%s-%d", prefix, rng.IntN(1000000))
					}
					out[i].Tracks[j].Track = rn[old]
				}
				rng.Shuffle(len(out[i].Tracks), func(a, b int) { out[i].Tracks[a], out[i].Tracks[b] = out[i].Tracks[b], out[i].Tracks[a] })
			}
			rng.Shuffle(len(out), func(a, b int) { out[a], out[b] = out[b], out[a] })
			return out
		}
		want2, got2 := relabel(want, "vessel"), relabel(got, "contact")
		back := map[string]string{}
		for k, v := range rn {
			back[v] = k
		}
		a1, err1 := Align(want, got, o)
		a2, err2 := Align(want2, got2, o)
		f1, err3 := Follow(want, got, o)
		f2, err4 := Follow(want2, got2, o)
		if err1 != nil || err2 != nil || err3 != nil || err4 != nil {
			t.Fatal(err1, err2, err3, err4)
		}
		mapped := map[string]string{}
		for k, v := range a2.Names {
			mapped[back[k]] = back[v]
		}
		if diff := cmp.Diff(a1.Names, mapped); diff != "" {
			t.Fatalf("trial %d: relabelled Align pairs differ (-orig +relabelled):\n%s", trial, diff)
		}
		if a1.Cost != a2.Cost {
			t.Fatalf("trial %d: cost %v vs %v after relabelling", trial, a1.Cost, a2.Cost)
		}
		// Follow: compare as sets of facts under the renaming.
		facts := func(f Following, ren func(string) string) []string {
			var out []string
			for _, sp := range f.Pairs {
				for k, v := range sp.Pairs {
					out = append(out, fmt.Sprintf("pair %d %s %s", sp.Step, ren(k), ren(v)))
				}
			}
			for _, s := range f.Switches {
				out = append(out, fmt.Sprintf("switch %d %v %s %s %s", s.Step, s.Kind, ren(s.Subject), ren(s.From), ren(s.To)))
			}
			for _, l := range f.Lone {
				out = append(out, fmt.Sprintf("lone %d %s %v", l.Step, ren(l.Track), l.Reference))
			}
			return out
		}
		id := func(s string) string { return s }
		sorted := func(s []string) []string { s = slices.Clone(s); slices.Sort(s); return s }
		if diff := cmp.Diff(sorted(facts(f1, id)), sorted(facts(f2, func(s string) string { return back[s] }))); diff != "" {
			t.Fatalf("trial %d: relabelled Follow differs (-orig +relabelled):\n%s", trial, diff)
		}
	}
}

// TestFollowSwitches: two ferries cross; the tracker's tracks swap objects
// at the crossing, and a third track is a false track for two steps.
func TestFollowSwitches(t *testing.T) {
	var want, got []mot.Frame
	for k := 0; k < 6; k++ {
		x := float64(k) * 10
		want = append(want, mot.Frame{Step: k, Tracks: []mot.Estimate{
			{Track: "ferry", Mean: []float64{x, 0}}, {Track: "launch", Mean: []float64{x, 50 - 10*float64(k)}}}})
		a, b := []float64{x + 0.5, 0}, []float64{x, 50 - 10*float64(k) + 0.5}
		if k >= 3 { // swap after the crossing at step 2.5
			a, b = b, a
		}
		f := mot.Frame{Step: k, Tracks: []mot.Estimate{{Track: "t7", Mean: a}, {Track: "t9", Mean: b}}}
		if k == 1 || k == 2 {
			f.Tracks = append(f.Tracks, mot.Estimate{Track: "t12", Mean: []float64{200, 200}})
		}
		got = append(got, f)
	}
	o := Options{Position: []int{0, 1}, Cutoff: 5}
	f, err := Follow(want, got, o)
	if err != nil {
		t.Fatal(err)
	}
	wantSw := []Switch{
		{3, TrackSwitch, "t7", "ferry", "launch"},
		{3, TrackSwitch, "t9", "launch", "ferry"},
		{3, ObjectSwitch, "ferry", "t7", "t9"},
		{3, ObjectSwitch, "launch", "t9", "t7"},
	}
	if diff := cmp.Diff(wantSw, f.Switches); diff != "" {
		t.Errorf("Switches (-want +got):\n%s", diff)
	}
	wantLone := []Lone{{1, "t12", false}, {2, "t12", false}}
	if diff := cmp.Diff(wantLone, f.Lone); diff != "" {
		t.Errorf("Lone (-want +got):\n%s", diff)
	}
	a, err := Align(want, got, o)
	if err != nil {
		t.Fatal(err)
	}
	// t7 follows ferry for steps 0–2 (3 steps) and launch for 3–5 (3
	// steps): a tie broken by canonical order, but either way both tracker
	// tracks are paired and t12 is lone.
	if len(a.Names) != 2 || a.Names["t7"] == a.Names["t9"] || strings.Join(a.LoneTracker, ",") != "t12" {
		t.Errorf("Align = %+v", a)
	}
}

func TestAlignErrors(t *testing.T) {
	ok := []mot.Frame{points(0, "x", pt{1, 1})}
	tests := []struct {
		name      string
		want, got []mot.Frame
		o         Options
		msg       string
	}{
		{"no positions", ok, ok, Options{Cutoff: 1}, "no position components"},
		{"zero cutoff", ok, ok, Options{Position: []int{0}}, "cut-off 0"},
		{"nan cutoff", ok, ok, Options{Position: []int{0}, Cutoff: math.NaN()}, "cut-off NaN"},
		{"index beyond mean", ok, ok, Options{Position: []int{0, 5}, Cutoff: 1}, `reference step 0 track "x1": position component 5 beyond a mean of length 2`},
		{"duplicate track", []mot.Frame{{Step: 0, Tracks: []mot.Estimate{{Track: "a", Mean: []float64{0, 0}}, {Track: "a", Mean: []float64{1, 1}}}}}, ok, Options{Position: []int{0, 1}, Cutoff: 1}, `reference step 0: track "a" appears twice`},
		{"duplicate step", ok, []mot.Frame{points(4, "y", pt{0, 0}), points(4, "y", pt{0, 0})}, Options{Position: []int{0, 1}, Cutoff: 1}, "tracker frame 1: step 4 appears twice"},
	}
	for _, tt := range tests {
		o := tt.o
		_, err := Align(tt.want, tt.got, o)
		if err == nil || !strings.Contains(err.Error(), tt.msg) {
			t.Errorf("%s: Align error = %v, want %q", tt.name, err, tt.msg)
		}
		_, err = Follow(tt.want, tt.got, o)
		if err == nil || !strings.Contains(err.Error(), tt.msg) {
			t.Errorf("%s: Follow error = %v, want %q", tt.name, err, tt.msg)
		}
	}
}

func TestAlignNaNPosition(t *testing.T) {
	want := []mot.Frame{points(0, "x", pt{0, 0})}
	got := []mot.Frame{points(0, "y", pt{math.NaN(), 0})}
	a, err := Align(want, got, Options{Position: []int{0, 1}, Cutoff: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Names) != 0 || a.Cost != 4 {
		t.Errorf("a NaN position must pair with nothing: %+v", a)
	}
}

func BenchmarkAlign(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 3))
	want, got := randomRun(rng, 20, 25, 200)
	o := Options{Position: []int{0, 2}, Cutoff: 5}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := Align(want, got, o); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkFollow(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 3))
	want, got := randomRun(rng, 20, 25, 200)
	o := Options{Position: []int{0, 2}, Cutoff: 5}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := Follow(want, got, o); err != nil {
			b.Fatal(err)
		}
	}
}

// TestFollowKeepsPairs checks the correspondence rule of CLEAR MOT (K.
// Bernardin, R. Stiefelhagen, "Evaluating multiple object tracking
// performance: the CLEAR MOT metrics", EURASIP J. Image and Video
// Processing, 2008, §2.1): a pair of the previous step is kept while its
// distance stays within the cut-off, and only a partner change beyond it
// is a mismatch. The runs are invented: two pilot boats passing each other
// in a channel, seen by a harbour radar.
func TestFollowKeepsPairs(t *testing.T) {
	est := func(name string, x, y float64) mot.Estimate {
		return mot.Estimate{Track: name, Mean: []float64{x, y}}
	}
	// The boats pass 1 m apart, heading opposite ways, at step 2.
	var passing []mot.Frame
	for k := 0; k < 5; k++ {
		x := float64(k)
		passing = append(passing, mot.Frame{Step: k, Tracks: []mot.Estimate{est("pilot-a", x, 0), est("pilot-b", 4-x, 1)}})
	}
	// The tracker follows each boat, but at the pass its estimates are
	// pulled towards the other boat: at step 2 r1 is 0.91 m from pilot-a
	// and 0.14 m from pilot-b, so the cheapest matching of that step on its
	// own swaps the partners (cost 0.02 + 0.02 against 0.82 + 0.82).
	var tracked []mot.Frame
	for k := 0; k < 5; k++ {
		x := float64(k)
		a, b := est("r1", x+0.1, 0.1), est("r2", 4-x-0.1, 0.9)
		if k == 2 {
			a, b = est("r1", 2.1, 0.9), est("r2", 1.9, 0.1)
		}
		tracked = append(tracked, mot.Frame{Step: k, Tracks: []mot.Estimate{a, b}})
	}
	// A real swap: the tracker's tracks trade the boats at step 3 while
	// the boats are 20 m apart, far beyond the cut-off.
	var apart, swapped []mot.Frame
	for k := 0; k < 5; k++ {
		x := float64(k)
		apart = append(apart, mot.Frame{Step: k, Tracks: []mot.Estimate{est("pilot-a", x, 0), est("pilot-b", x, 20)}})
		ya, yb := 0.2, 19.8
		if k >= 3 {
			ya, yb = yb, ya
		}
		swapped = append(swapped, mot.Frame{Step: k, Tracks: []mot.Estimate{est("r1", x, ya), est("r2", x, yb)}})
	}
	o := Options{Position: []int{0, 1}, Cutoff: 5}
	tests := []struct {
		name      string
		want, got []mot.Frame
		pairsAt2  map[string]string
		switches  []Switch
	}{
		{"pass within the cut-off", passing, tracked,
			map[string]string{"r1": "pilot-a", "r2": "pilot-b"}, nil},
		{"swap beyond the cut-off", apart, swapped,
			map[string]string{"r1": "pilot-a", "r2": "pilot-b"}, []Switch{
				{3, TrackSwitch, "r1", "pilot-a", "pilot-b"},
				{3, TrackSwitch, "r2", "pilot-b", "pilot-a"},
				{3, ObjectSwitch, "pilot-a", "r1", "r2"},
				{3, ObjectSwitch, "pilot-b", "r2", "r1"},
			}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f, err := Follow(tt.want, tt.got, o)
			if err != nil {
				t.Fatal(err)
			}
			if diff := cmp.Diff(tt.pairsAt2, f.Pairs[2].Pairs); diff != "" {
				t.Errorf("pairs at step 2 (-want +got):\n%s", diff)
			}
			if diff := cmp.Diff(tt.switches, f.Switches); diff != "" {
				t.Errorf("switches (-want +got):\n%s", diff)
			}
			if len(f.Lone) != 0 {
				t.Errorf("lone tracks %v, want none", f.Lone)
			}
		})
	}
	// Step 2 of the pass on its own (no previous step) is matched by the
	// optimal assignment, which swaps: the keeping above is what prevents
	// the switch, not the geometry.
	alone, err := Follow(passing[2:3], tracked[2:3], o)
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff(map[string]string{"r1": "pilot-b", "r2": "pilot-a"}, alone.Pairs[0].Pairs); diff != "" {
		t.Errorf("step 2 alone (-want +got):\n%s", diff)
	}
}
