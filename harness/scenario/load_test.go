package scenario

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"runtime"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/mot"
	"trackgate/harness/motion"
)

var update = flag.Bool("update", false, "rewrite the expected errors of the bad-file corpus (testdata/bad/*.errors) that no longer match")

const stockGlob = "../../scenarios/*.yaml"

// checkSpec tests the invariants every loaded Spec must satisfy: the sizes
// of the model agree with each other and with every object and scripted
// scan.
func checkSpec(t *testing.T, s *Spec) {
	t.Helper()
	m := s.Model
	n, k := m.StateDim, m.MeasDim
	if n < 1 || k < 1 || k > n {
		t.Fatalf("StateDim %d, MeasDim %d", n, k)
	}
	shape := func(name string, a mot.Mat, r, c int) {
		t.Helper()
		if a.Rows != r || a.Cols != c || len(a.Data) != r*c {
			t.Errorf("%s is %d×%d (%d entries), want %d×%d", name, a.Rows, a.Cols, len(a.Data), r, c)
		}
	}
	shape("F", m.F, n, n)
	shape("Q", m.Q, n, n)
	shape("H", m.H, k, n)
	shape("R", m.R, k, k)
	if !(m.Interval > 0) || !(m.PD > 0 && m.PD <= 1) || !(m.GateProb > 0 && m.GateProb < 1) {
		t.Errorf("Interval %g, PD %g, GateProb %g out of range", m.Interval, m.PD, m.GateProb)
	}
	if m.ClutterMean < 0 || m.ClutterDensity < 0 {
		t.Errorf("negative clutter: mean %g, density %g", m.ClutterMean, m.ClutterDensity)
	}
	if m.ClutterMean > 0 && (len(m.ClutterMin) != k || len(m.ClutterMax) != k) {
		t.Errorf("clutter box has %d/%d bounds, want %d", len(m.ClutterMin), len(m.ClutterMax), k)
	}
	if s.Steps < 1 || s.Runs < 1 || len(s.Objects) == 0 {
		t.Errorf("Steps %d, Runs %d, %d objects", s.Steps, s.Runs, len(s.Objects))
	}
	ids := map[string]bool{}
	for _, o := range s.Objects {
		if ids[o.ID] {
			t.Errorf("duplicate object %q", o.ID)
		}
		ids[o.ID] = true
		if len(o.Mean) != n {
			t.Errorf("object %s: mean has %d entries, want %d", o.ID, len(o.Mean), n)
		}
		shape("object "+o.ID+" cov", o.Cov, n, n)
		if cholesky(o.Cov) >= 0 {
			t.Errorf("object %s: prior covariance not positive definite", o.ID)
		}
		if o.Appear < 0 || o.Appear >= s.Steps || (o.Disappear >= 0 && o.Disappear <= o.Appear) {
			t.Errorf("object %s: life [%d, %d) does not fit %d steps", o.ID, o.Appear, o.Disappear, s.Steps)
		}
	}
	for i, sc := range s.Scripted {
		if sc.Step < 0 || sc.Step >= s.Steps || (i > 0 && sc.Step <= s.Scripted[i-1].Step) {
			t.Errorf("scripted scan %d at step %d is out of range or order", i, sc.Step)
		}
		for _, d := range sc.Detections {
			if len(d.Z) != k {
				t.Errorf("scripted detection at step %d has %d components, want %d", sc.Step, len(d.Z), k)
			}
			if d.Object != "" && !ids[d.Object] {
				t.Errorf("scripted detection names unknown object %q", d.Object)
			}
		}
	}
}

func TestStockScenarios(t *testing.T) {
	files, err := filepath.Glob(stockGlob)
	if err != nil || len(files) < 10 {
		t.Fatalf("glob %s: %d files, err %v; want at least 10 stock scenarios", stockGlob, len(files), err)
	}
	categories := map[string]bool{}
	for _, f := range files {
		base := strings.TrimSuffix(filepath.Base(f), ".yaml")
		t.Run(base, func(t *testing.T) {
			s, err := Load(f)
			if err != nil {
				t.Fatalf("Load(%s):\n%v", f, err)
			}
			checkSpec(t, s)
			if s.Name != base {
				t.Errorf("name %q, want the file name %q", s.Name, base)
			}
			if s.Description == "" {
				t.Error("no description")
			}
			categories[strings.SplitN(base, "-", 2)[0]] = true
		})
	}
	for _, c := range []string{"warmup", "crossing", "convoy", "lowpd", "clutter", "turn", "lifecycle", "dropout", "scale", "tie"} {
		if !categories[c] {
			t.Errorf("no stock scenario of category %q", c)
		}
	}
}

// TestStockScenarioDetails pins properties that the stock scenarios are
// meant to exercise, so an edit that loses them fails.
func TestStockScenarioDetails(t *testing.T) {
	load := func(name string) *Spec {
		t.Helper()
		s, err := Load(filepath.Join("../../scenarios", name+".yaml"))
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	if s := load("lowpd-drifting-buoys"); s.Model.PD != 0.5 {
		t.Errorf("lowpd: PD = %g, want 0.5", s.Model.PD)
	}
	if s := load("scale-container-yard"); len(s.Objects) < 100 {
		t.Errorf("scale: %d objects, want at least 100", len(s.Objects))
	}
	if s := load("clutter-fishing-grounds"); s.Model.ClutterMean < 20 {
		t.Errorf("clutter: mean count %g, want dense clutter (≥ 20 per scan)", s.Model.ClutterMean)
	}
	s := load("dropout-quay-lidar")
	empty := 0
	for _, sc := range s.Scripted {
		if len(sc.Detections) == 0 {
			empty++
		}
	}
	if empty < 3 {
		t.Errorf("dropout: %d empty scripted scans, want several", empty)
	}
	// The exact tie: with zero process noise and starts at the prior mean,
	// both objects stay at their prior positions, so the squared distances
	// from each object to each detection of step 1 must all be equal.
	tie := load("tie-mirror-pair")
	if tie.Motion.AccelNoise != 0 {
		t.Errorf("tie: accel-noise %g, want 0", tie.Motion.AccelNoise)
	}
	var step1 []ScriptedDetection
	for _, sc := range tie.Scripted {
		if sc.Step == 1 {
			step1 = sc.Detections
		}
	}
	if len(step1) != 2 || len(tie.Objects) != 2 {
		t.Fatalf("tie: %d detections at step 1 and %d objects, want 2 and 2", len(step1), len(tie.Objects))
	}
	var d2 []float64
	for _, o := range tie.Objects {
		if o.DrawStart {
			t.Errorf("tie: object %s starts with a draw, want start: mean", o.ID)
		}
		if diff := cmp.Diff(tie.Objects[0].Cov, o.Cov); diff != "" {
			t.Errorf("tie: priors differ (-first +%s):\n%s", o.ID, diff)
		}
		for _, d := range step1 {
			dx, dy := d.Z[0]-o.Mean[0], d.Z[1]-o.Mean[2]
			d2 = append(d2, dx*dx+dy*dy)
		}
	}
	for _, v := range d2 {
		if v != d2[0] {
			t.Errorf("tie: squared distances %v are not all equal", d2)
			break
		}
	}
	// The boundary detection of step 0: with S = P + R = diag(2, 2), its
	// squared Mahalanobis distance from float-west must equal the gate
	// γ = −2 ln(1 − P_G), the χ²₂ quantile (χ² with two degrees of freedom
	// is the exponential distribution with mean 2: Johnson, Kotz &
	// Balakrishnan, "Continuous Univariate Distributions", vol. 1, 2nd ed.,
	// 1994, ch. 18 — chapter from memory), to within a few ulps.
	gamma := -2 * math.Log(1-tie.Model.GateProb)
	west := tie.Objects[0]
	s2 := west.Cov.At(0, 0) + tie.Model.R.At(0, 0)
	onBoundary := 0
	for _, sc := range tie.Scripted {
		for _, d := range sc.Detections {
			if sc.Step != 0 || d.Object != "" {
				continue
			}
			dx, dy := d.Z[0]-west.Mean[0], d.Z[1]-west.Mean[2]
			if d2 := (dx*dx + dy*dy) / s2; math.Abs(d2-gamma) <= 4e-15*gamma {
				onBoundary++
			} else {
				t.Errorf("tie: step-0 clutter detection at %v has d² = %.17g, gate %.17g", d.Z, d2, gamma)
			}
		}
	}
	if onBoundary != 1 {
		t.Errorf("tie: %d detections on the gate boundary at step 0, want 1", onBoundary)
	}
	// The turn scenario's model is the motion package's constant turn.
	turn := load("turn-coastal-aircraft")
	F, Q := motion.ConstantTurn(turn.Model.Interval, turn.Motion.TurnRate, turn.Motion.AccelNoise)
	if diff := cmp.Diff(F, turn.Model.F); diff != "" {
		t.Errorf("turn: F differs from motion.ConstantTurn (-want +got):\n%s", diff)
	}
	if diff := cmp.Diff(Q, turn.Model.Q); diff != "" {
		t.Errorf("turn: Q differs from motion.ConstantTurn (-want +got):\n%s", diff)
	}
}

const goodBase = `format: 1
name: test-case
description: A small valid scenario.
seed: 18446744073709551615
steps: 10
interval: 0.5
motion:
  kind: constant-velocity
  axes: 2
  accel-noise: 0.2
sensor:
  noise: [4, 9]
detection-probability: 0.8
objects:
  - id: tug
    prior: {mean: [0, 1, 0, 1], cov: [1, 1, 1, 1]}
`

func TestParseGood(t *testing.T) {
	tests := []struct {
		name   string
		yaml   string
		check  func(t *testing.T, s *Spec)
		reason string
	}{
		{
			name: "defaults",
			yaml: goodBase,
			check: func(t *testing.T, s *Spec) {
				if s.Runs != 1 || s.Model.GateProb != 0.999 || s.Seed != math.MaxUint64 {
					t.Errorf("Runs %d, GateProb %g, Seed %d; want 1, 0.999, 2⁶⁴−1", s.Runs, s.Model.GateProb, s.Seed)
				}
				o := s.Objects[0]
				if o.Appear != 0 || o.Disappear != -1 || !o.DrawStart {
					t.Errorf("object life [%d, %d), draw %v; want [0, −1), draw true", o.Appear, o.Disappear, o.DrawStart)
				}
				wantH := [][]float64{{1, 0, 0, 0}, {0, 0, 1, 0}}
				if diff := cmp.Diff(wantH, s.Model.H.RowsOf()); diff != "" {
					t.Errorf("H observes the positions by default (-want +got):\n%s", diff)
				}
				if diff := cmp.Diff([][]float64{{4, 0}, {0, 9}}, s.Model.R.RowsOf()); diff != "" {
					t.Errorf("a noise list is a diagonal (-want +got):\n%s", diff)
				}
				if s.Model.ClutterMean != 0 || s.Model.ClutterDensity != 0 || s.Scripted != nil {
					t.Errorf("no clutter or scripted scans expected, got %+v", s.Model)
				}
			},
		},
		{
			name: "clutter from mean count",
			yaml: goodBase + "clutter:\n  region: {min: [-50, 0], max: [50, 50]}\n  mean-count: 3\n",
			check: func(t *testing.T, s *Spec) {
				// λ = mean / V with V = 100·50 = 5000 (Bar-Shalom et al. 2001, §8.2).
				if s.Model.ClutterMean != 3 || math.Abs(s.Model.ClutterDensity-6e-4) > 1e-18 {
					t.Errorf("clutter mean %g, density %g; want 3, 6e-4", s.Model.ClutterMean, s.Model.ClutterDensity)
				}
			},
		},
		{
			name: "clutter from density",
			yaml: goodBase + "clutter:\n  region: {min: [0, 0], max: [200, 100]}\n  density: 2.5e-4\n",
			check: func(t *testing.T, s *Spec) {
				if math.Abs(s.Model.ClutterMean-5) > 1e-12 || s.Model.ClutterDensity != 2.5e-4 {
					t.Errorf("clutter mean %g, density %g; want 5 (= 2.5e-4 · 20000), 2.5e-4", s.Model.ClutterMean, s.Model.ClutterDensity)
				}
			},
		},
		{
			name: "random walk observes everything by default",
			yaml: strings.Replace(strings.Replace(goodBase, "  kind: constant-velocity\n  axes: 2\n  accel-noise: 0.2\n", "  kind: random-walk\n  axes: 3\n  covariance: [[2, 1, 0], [1, 2, 0], [0, 0, 1]]\n", 1),
				"noise: [4, 9]", "noise: [4, 9, 1]", 1),
			reason: "the objects still have 4 components, so this case must fail",
		},
		{
			name: "3-D constant velocity",
			yaml: strings.NewReplacer("axes: 2", "axes: 3", "noise: [4, 9]", "noise: [4, 9, 16]",
				"mean: [0, 1, 0, 1], cov: [1, 1, 1, 1]", "mean: [0, 1, 0, 1, 5, 0], cov: [1, 1, 1, 1, 1, 1]").Replace(goodBase),
			check: func(t *testing.T, s *Spec) {
				wantH := [][]float64{{1, 0, 0, 0, 0, 0}, {0, 0, 1, 0, 0, 0}, {0, 0, 0, 0, 1, 0}}
				if diff := cmp.Diff(wantH, s.Model.H.RowsOf()); diff != "" {
					t.Errorf("H (-want +got):\n%s", diff)
				}
				F, Q := motion.ConstantVelocity(3, 0.5, 0.2)
				if diff := cmp.Diff(F, s.Model.F); diff != "" {
					t.Errorf("F (-want +got):\n%s", diff)
				}
				if diff := cmp.Diff(Q, s.Model.Q); diff != "" {
					t.Errorf("Q (-want +got):\n%s", diff)
				}
			},
		},
		{
			name: "scripted scans sorted by step, lifetimes kept",
			yaml: strings.Replace(goodBase, "    prior: {mean: [0, 1, 0, 1], cov: [1, 1, 1, 1]}\n",
				"    prior: {mean: [0, 1, 0, 1], cov: [1, 1, 1, 1]}\n    start: mean\n    appear: 2\n    disappear: 9\n", 1) +
				"scripted:\n  - {step: 7, detections: [{at: [1, 2], from: tug}]}\n  - {step: 3, detections: []}\n",
			check: func(t *testing.T, s *Spec) {
				want := []ScriptedScan{{Step: 3, Detections: []ScriptedDetection{}}, {Step: 7, Detections: []ScriptedDetection{{Z: []float64{1, 2}, Object: "tug"}}}}
				if diff := cmp.Diff(want, s.Scripted); diff != "" {
					t.Errorf("Scripted (-want +got):\n%s", diff)
				}
				o := s.Objects[0]
				if o.Appear != 2 || o.Disappear != 9 || o.DrawStart {
					t.Errorf("object life [%d, %d), draw %v; want [2, 9), false", o.Appear, o.Disappear, o.DrawStart)
				}
			},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s, err := Parse("case.yaml", []byte(tc.yaml))
			if tc.check == nil {
				if err == nil {
					t.Fatalf("Parse succeeded; want an error (%s)", tc.reason)
				}
				return
			}
			if err != nil {
				t.Fatalf("Parse:\n%v", err)
			}
			checkSpec(t, s)
			tc.check(t, s)
		})
	}
}

// TestHash compares Spec.Hash with the digest printed by GNU coreutils
// sha256sum 9.x for testdata/good/minimal.yaml (computed outside Go).
func TestHash(t *testing.T) {
	s, err := Load("testdata/good/minimal.yaml")
	if err != nil {
		t.Fatal(err)
	}
	const want = "b2b47286583326a0fef0fe73fa16dc403e13b19c40d55db23d1a4c97bd79bb1e"
	if s.Hash != want {
		t.Errorf("Hash = %s, want %s (sha256sum testdata/good/minimal.yaml)", s.Hash, want)
	}
	if s.File != "testdata/good/minimal.yaml" {
		t.Errorf("File = %q", s.File)
	}
}

func TestParseBad(t *testing.T) {
	// Each case names the error line that must appear (a person reading it
	// must learn where, which field and what was expected).
	tests := []struct {
		name, yaml, want string
	}{
		{"string for a number", strings.Replace(goodBase, "steps: 10", "steps: ten", 1),
			`case.yaml:5:8: steps: expected the number of scans per run, 1 to 100000, found "ten"`},
		{"negative accel noise", strings.Replace(goodBase, "accel-noise: 0.2", "accel-noise: -0.2", 1),
			"case.yaml:10:16: motion.accel-noise: -0.2 is negative; expected a variance ≥ 0"},
		{"zero variance on the diagonal", strings.Replace(goodBase, "noise: [4, 9]", "noise: [4, 0]", 1),
			"case.yaml:12:14: sensor.noise[1]: variance 0 is not positive; expected a number > 0"},
		{"ragged matrix", strings.Replace(goodBase, "noise: [4, 9]", "noise: [[4, 0], [0]]", 1),
			"case.yaml:12:19: sensor.noise[1]: row has 1 entries; expected 2 to make a square matrix"},
		{"observe twice", strings.Replace(goodBase, "sensor:\n", "sensor:\n  observe: [0, 0]\n", 1),
			"case.yaml:12:16: sensor.observe[1]: index 0 is observed twice; expected distinct indices"},
		{"scripted from a dead object", strings.Replace(goodBase, "cov: [1, 1, 1, 1]}\n", "cov: [1, 1, 1, 1]}\n    disappear: 3\n", 1) +
			"scripted:\n  - {step: 5, detections: [{at: [1, 2], from: tug}]}\n",
			`case.yaml:19:47: scripted[0].detections[0].from: object "tug" does not exist at step 5; expected an object alive at this step`},
		{"object not a mapping", strings.Replace(goodBase, "  - id: tug\n    prior: {mean: [0, 1, 0, 1], cov: [1, 1, 1, 1]}\n", "  - tug\n", 1),
			`case.yaml:15:5: objects[0]: expected a mapping with keys id, prior, start, appear, disappear, found "tug"`},
		{"huge volume", goodBase + "clutter:\n  region: {min: [-1e300, -1e300], max: [1e300, 1e300]}\n  mean-count: 1\n",
			"case.yaml:18:11: clutter.region: the box volume overflows; expected a finite region"},
		{"merge key", goodBase + "<<: {x: 1}\n",
			"case.yaml:17:1: expected a plain key (one of format, name, description, seed, steps, interval, runs, motion, sensor, detection-probability, gate-probability, clutter, objects, scripted), found a value tagged !!merge"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s, err := Parse("case.yaml", []byte(tc.yaml))
			if err == nil {
				t.Fatalf("Parse succeeded (%+v); want error %q", s.Model, tc.want)
			}
			if s != nil {
				t.Error("Parse returned a Spec together with an error")
			}
			lines := strings.Split(err.Error(), "\n")
			for _, l := range lines {
				if l == tc.want {
					return
				}
			}
			t.Errorf("Parse error:\n%s\nwant a line\n%s", err, tc.want)
		})
	}
}

var positioned = regexp.MustCompile(`^testdata/bad/[a-z-]+\.yaml(:[0-9]+(:[0-9]+)?)?: `)

// TestBadCorpus loads every file of testdata/bad and compares the whole
// error text with the file's .errors sidecar. Every expected line was read
// and judged by hand when it was written; -update rewrites only the
// sidecars that differ, and the new text must be reviewed the same way.
func TestBadCorpus(t *testing.T) {
	files, _ := filepath.Glob("testdata/bad/*.yaml")
	if len(files) == 0 {
		t.Fatal("no files match testdata/bad/*.yaml")
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			s, err := Load(f)
			if err == nil {
				t.Fatalf("Load(%s) succeeded (%s); every file in testdata/bad must fail", f, s.Name)
			}
			var list ErrorList
			if !errors.As(err, &list) {
				t.Fatalf("error is %T, want ErrorList", err)
			}
			got := err.Error() + "\n"
			for _, l := range strings.Split(strings.TrimSuffix(got, "\n"), "\n") {
				if !positioned.MatchString(l) {
					t.Errorf("line %q does not start with the file name and a position", l)
				}
			}
			golden := strings.TrimSuffix(f, ".yaml") + ".errors"
			want, rerr := os.ReadFile(golden)
			if string(want) == got {
				return
			}
			if *update {
				if err := writeFileAtomic(golden, []byte(got)); err != nil {
					t.Fatal(err)
				}
				t.Logf("rewrote %s", golden)
				return
			}
			if rerr != nil {
				t.Fatalf("%v (run with -update to create it)", rerr)
			}
			t.Errorf("errors differ from %s (-want +got):\n%s", golden, cmp.Diff(string(want), got))
		})
	}
}

func writeFileAtomic(path string, data []byte) error {
	tmp, err := os.CreateTemp(filepath.Dir(path), ".tmp-*")
	if err != nil {
		return err
	}
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		return err
	}
	if err := tmp.Close(); err != nil {
		os.Remove(tmp.Name())
		return err
	}
	return os.Rename(tmp.Name(), path)
}

func TestSizeLimit(t *testing.T) {
	big := make([]byte, MaxFileSize+1)
	for i := range big {
		big[i] = '#'
	}
	want := "big.yaml: file is larger than 4194304 bytes (4 MiB); expected a scenario file of a few kilobytes"
	if _, err := Parse("big.yaml", big); err == nil || err.Error() != want {
		t.Errorf("Parse(4 MiB + 1) error = %v, want %q", err, want)
	}
	path := filepath.Join(t.TempDir(), "big.yaml")
	if err := os.WriteFile(path, big, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Load(path); err == nil || !strings.Contains(err.Error(), "file is larger than 4194304 bytes") {
		t.Errorf("Load(4 MiB + 1) error = %v", err)
	}
}

func TestLoadMissing(t *testing.T) {
	_, err := Load("testdata/no-such-file.yaml")
	want := "testdata/no-such-file.yaml: cannot read: no such file or directory"
	if err == nil || err.Error() != want {
		t.Errorf("Load error = %v, want %q", err, want)
	}
}

// TestAliasBombIsCheap parses a billion-laughs file (9⁹ strings if
// expanded) and checks it is refused with little allocation, because the
// node tree is never expanded.
func TestAliasBombIsCheap(t *testing.T) {
	data, err := os.ReadFile("testdata/bad/alias-bomb.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	_, err = Parse("bomb.yaml", data)
	runtime.ReadMemStats(&after)
	if err == nil || !strings.Contains(err.Error(), "aliases") {
		t.Errorf("Parse(alias bomb) error = %v, want a refusal of aliases", err)
	}
	if d := after.TotalAlloc - before.TotalAlloc; d > 4<<20 {
		t.Errorf("Parse(alias bomb) allocated %d bytes, want under 4 MiB", d)
	}
}

// TestHostileInput feeds inputs meant to break a parser and checks each
// gets one clear error line rather than a panic or a runaway.
func TestHostileInput(t *testing.T) {
	tests := []struct {
		name string
		data string
		want string
	}{
		{"deep flow nesting", strings.Repeat("[", 200000), "deep.yaml: invalid YAML: exceeded max depth of 10000"},
		{"deep block nesting", "x: " + strings.Repeat("{", 200000), "deep.yaml: invalid YAML: exceeded max depth of 10000"},
		{"invalid UTF-8", "format: 1\nname: \xff\xfe\n", "deep.yaml: invalid YAML: invalid leading UTF-8 octet"},
		{"NUL byte", "format: 1\x00\n", "deep.yaml: invalid YAML: control characters are not allowed"},
		{"tab indentation", "motion:\n\tkind: random-walk\n", "deep.yaml:2: invalid YAML: found character that cannot start any token"},
		{"only a document marker", "---\n", "deep.yaml: document is empty; expected a scenario mapping starting with 'format: 1'"},
		{"unknown alias", "format: *nothing\n", "deep.yaml: invalid YAML: unknown anchor 'nothing' referenced"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("deep.yaml", []byte(tc.data))
			if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
				t.Errorf("Parse error = %v, want one starting %q", err, tc.want)
			}
		})
	}
}

func TestErrorCap(t *testing.T) {
	var b strings.Builder
	b.WriteString(goodBase)
	for i := range 300 {
		fmt.Fprintf(&b, "extra-%d: 1\n", i)
	}
	_, err := Parse("many.yaml", []byte(b.String()))
	var list ErrorList
	if !errors.As(err, &list) {
		t.Fatalf("error %v is not an ErrorList", err)
	}
	if len(list) != MaxErrors+1 || list[MaxErrors].Msg != "too many errors; stopped after 100" {
		t.Errorf("got %d errors ending %q; want %d then the stop line", len(list), list[len(list)-1], MaxErrors)
	}
}

func TestErrorFormat(t *testing.T) {
	tests := []struct {
		e    Error
		want string
	}{
		{Error{File: "a.yaml", Line: 3, Col: 7, Path: "x.y", Msg: "bad"}, "a.yaml:3:7: x.y: bad"},
		{Error{File: "a.yaml", Line: 3, Msg: "invalid YAML: oops"}, "a.yaml:3: invalid YAML: oops"},
		{Error{File: "a.yaml", Msg: "file is empty"}, "a.yaml: file is empty"},
	}
	for _, tc := range tests {
		if got := tc.e.Error(); got != tc.want {
			t.Errorf("Error() = %q, want %q", got, tc.want)
		}
	}
}

func FuzzParse(f *testing.F) {
	for _, glob := range []string{stockGlob, "testdata/bad/*.yaml", "testdata/good/*.yaml"} {
		files, _ := filepath.Glob(glob)
		for _, p := range files {
			if data, err := os.ReadFile(p); err == nil {
				f.Add(data)
			}
		}
	}
	f.Add([]byte(goodBase))
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := Parse("fuzz.yaml", data)
		if err != nil {
			var list ErrorList
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("error %v is not a non-empty ErrorList", err)
			}
			for _, e := range list {
				if e.File != "fuzz.yaml" || e.Msg == "" {
					t.Fatalf("badly formed error %+v", e)
				}
			}
			if s != nil {
				t.Fatal("Spec returned together with an error")
			}
			return
		}
		checkSpec(t, s)
		again, err := Parse("fuzz.yaml", data)
		if err != nil {
			t.Fatal(err)
		}
		if diff := cmp.Diff(s, again); diff != "" {
			t.Fatalf("two parses differ:\n%s", diff)
		}
	})
}

func BenchmarkParseScale(b *testing.B) {
	data, err := os.ReadFile("../../scenarios/scale-container-yard.yaml")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if _, err := Parse("scale.yaml", data); err != nil {
			b.Fatal(err)
		}
	}
}

// TestLineEndingsAndBOM checks a file saved with a UTF-8 byte order mark
// and CRLF line ends loads to the same Spec as the plain file, apart from
// the content hash.
func TestLineEndingsAndBOM(t *testing.T) {
	data, err := os.ReadFile("../../scenarios/warmup-rail-carts.yaml")
	if err != nil {
		t.Fatal(err)
	}
	plain, err := Parse("a.yaml", data)
	if err != nil {
		t.Fatal(err)
	}
	crlf := append([]byte("\ufeff"), strings.ReplaceAll(string(data), "\n", "\r\n")...)
	other, err := Parse("a.yaml", crlf)
	if err != nil {
		t.Fatalf("Parse(BOM + CRLF):\n%v", err)
	}
	if plain.Hash == other.Hash {
		t.Error("different bytes gave the same hash")
	}
	other.Hash = plain.Hash
	if diff := cmp.Diff(plain, other); diff != "" {
		t.Errorf("BOM + CRLF changed the Spec (-plain +crlf):\n%s", diff)
	}
}
