package runner

import (
	"math"
	"slices"
	"strings"
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/reference/tracker"
)

// quayFile has two clusters per scan: at step 1 an exact tie between two
// pallets and a clear choice for a forklift (worked by hand in the file).
const quayFile = "testdata/quay-pallets-and-forklift.yaml"

// quayMargin is the forklift's own margin at step 1, (3.6 − 0.016)/2, from
// the Kalman prediction and update by hand (Bar-Shalom, Li, Kirubarajan,
// "Estimation with Applications to Tracking and Navigation", 2001, §5.2)
// and the association cost of package tracker, whose terms other than
// d²/2 are equal for two detections of one object when P_D = 1
// (Blackman & Popoli 1999, §6.2).
const quayMargin = (3.6 - 0.016) / 2

// quayTracker is the reference run in process, changed at step 1: with
// flipTied it is handed every scan's detections in reverse order, which
// resolves the pallets' exact tie the other way (a harmless change); with
// takeStray the forklift's own return at (40, 0.2) is hidden from it, so
// that it takes the stray return 3 m away (a harmful change).
func quayTracker(flipTied, takeStray bool) *Local {
	return &Local{
		Ready: protocol.Ready{Name: "quay-variant", Version: "1", Covariance: true, Association: true},
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			ref := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects})
			return func(scan mot.Scan) (mot.Frame, error) {
				scan.Detections = slices.Clone(scan.Detections)
				if flipTied {
					slices.Reverse(scan.Detections)
				}
				if takeStray && scan.Step == 1 {
					scan.Detections = slices.DeleteFunc(scan.Detections, func(d mot.Detection) bool {
						return d.Z[0] == 40 && d.Z[1] == 0.2
					})
				}
				f, _, err := ref.Step(scan)
				f.Tracks = slices.Clone(f.Tracks)
				return f, err
			}, nil
		},
	}
}

func quayCheck(t *testing.T, flipTied, takeStray bool) *result.Suite {
	t.Helper()
	var o Options
	o.Scenarios = []string{quayFile}
	o.Against, o.Workers = AgainstReference, 1
	o.Getenv = func(string) string { return "" }
	o.Config.TieMargin = 0.01
	o.Local = quayTracker(flipTied, takeStray)
	return checkOf(t, o)
}

// forkliftProb is the forklift cluster's posterior of the stray return:
// its cluster has exactly two events (P_D = 1, two gated returns), so
// p = e^{−m}/(1 + e^{−m}) with m its margin.
var forkliftProb = math.Exp(-quayMargin) / (1 + math.Exp(-quayMargin))

// TestClusterMarginJudgesChange: a changed association is judged by the
// margin of the cluster it happens in, not by the scan's smallest margin.
// Flipping the pallets' exact tie passes (a tie); taking the forklift's
// stray return at the same step is a regression that names the forklift
// alone and its own margin, although the scan's margin (the pallets') is 0;
// doing both is a regression for the forklift and a tie for the pallets.
func TestClusterMarginJudgesChange(t *testing.T) {
	for _, tt := range []struct {
		name                string
		flipTied, takeStray bool
	}{
		{"flip-tied", true, false},
		{"take-stray", false, true},
		{"both", true, true},
	} {
		t.Run(tt.name, func(t *testing.T) {
			s := quayCheck(t, tt.flipTied, tt.takeStray)
			for _, check := range []string{"reference", "conformance"} {
				c := findCheck(t, s, 0, 0, check)
				var tie *result.Divergence
				for i := range c.Ties {
					if c.Ties[i].Step == 1 && c.Ties[i].Kind == "association" {
						tie = &c.Ties[i]
						break
					}
				}
				if tt.flipTied {
					// The pallets' cluster posterior of the flipped
					// hypothesis is exactly ½; the scan-level probability
					// would be ½ times the forklift's best, about 0.43.
					if tie == nil || !slices.Equal(tie.Objects, []string{"pallet-west", "pallet-east"}) ||
						tie.Margin == nil || *tie.Margin != 0 || tie.Probability == nil || *tie.Probability != 0.5 {
						t.Fatalf("%s: pallets' tie at step 1 = %+v, want both pallets, margin 0, probability ½ (ties %+v)", check, tie, c.Ties)
					}
				} else if tie != nil {
					t.Fatalf("%s: unexpected tie %+v", check, *tie)
				}
				if !tt.takeStray {
					if c.Status != result.Tie || c.First != nil {
						t.Fatalf("%s: status %s, first %+v, want a tie: %s", check, c.Status, c.First, c.Message)
					}
					continue
				}
				f := c.First
				if c.Status != result.Fail || f == nil {
					t.Fatalf("%s: status %s, want a regression: %s", check, c.Status, c.Message)
				}
				t.Logf("%s: %s", check, f.Message)
				if f.Step != 1 || f.Kind != "association" || !slices.Equal(f.Objects, []string{"forklift"}) {
					t.Fatalf("%s: first divergence %+v, want step 1, association, the forklift alone", check, *f)
				}
				if f.Margin == nil || math.Abs(*f.Margin-quayMargin) > 1e-9 {
					t.Fatalf("%s: margin %v, want the forklift cluster's %v", check, f.Margin, quayMargin)
				}
				if !strings.Contains(f.Message, "1.792 in the cluster of forklift") {
					t.Fatalf("%s: message %q does not give the forklift cluster's margin", check, f.Message)
				}
				if f.Probability == nil || math.Abs(*f.Probability-forkliftProb) > 1e-12 {
					t.Fatalf("%s: probability %v, want the forklift cluster's posterior %v", check, f.Probability, forkliftProb)
				}
			}
			want := result.Tie
			if tt.takeStray {
				want = result.Fail
			}
			if s.Status != want {
				t.Fatalf("suite status %s, want %s", s.Status, want)
			}
		})
	}
}

// quayDetail is a hand-built step with three clusters: a pair whose two
// best hypotheses swap its detections at equal cost (rows 0–1), a single
// object with a clear choice (row 2), and a pair (rows 3–4) whose second
// best, at equal cost, gives row 4 a miss and whose third, 0.005 dearer,
// gives row 3 a miss.
func quayDetail(withClusters bool) *tracker.Detail {
	d := &tracker.Detail{Step: 1, Margin: 0}
	for _, o := range []struct {
		name string
		det  int
	}{{"a", 1}, {"b", 2}, {"c", 3}, {"d", 4}, {"e", 5}} {
		d.Objects = append(d.Objects, tracker.ObjectDetail{Object: o.name, Detection: o.det})
	}
	// The scan's two best differ in the first tied cluster only.
	d.Hypotheses = []tracker.Hypothesis{
		{Cost: 1, Assoc: []int{1, 2, 3, 4, 5}},
		{Cost: 1, Assoc: []int{2, 1, 3, 4, 5}},
		{Cost: 1, Assoc: []int{1, 2, 3, 5, 4}},
	}
	if !withClusters {
		return d
	}
	d.PerCluster = []tracker.ClusterDetail{
		{Rows: []int{0, 1}, Margin: 0, Hypotheses: []tracker.Hypothesis{
			{Cost: 0.5, Prob: 0.5, Assoc: []int{1, 2}}, {Cost: 0.5, Prob: 0.5, Assoc: []int{2, 1}}}},
		{Rows: []int{2}, Margin: 3, Hypotheses: []tracker.Hypothesis{
			{Cost: 0, Prob: 0.95, Assoc: []int{3}}, {Cost: 3, Prob: 0.05, Assoc: []int{mot.NoDetection}}}},
		{Rows: []int{3, 4}, Margin: 0, Hypotheses: []tracker.Hypothesis{
			{Cost: 0.5, Prob: 0.45, Assoc: []int{4, 5}}, {Cost: 0.5, Prob: 0.45, Assoc: []int{4, mot.NoDetection}},
			{Cost: 0.505, Prob: 0.1, Assoc: []int{mot.NoDetection, 5}}}},
	}
	for c, cd := range d.PerCluster {
		for _, row := range cd.Rows {
			d.Objects[row].Cluster = c
		}
	}
	return d
}

// TestAmbiguousRowsPerCluster: for a tracker that does not report
// associations, every cluster whose own margin is within the threshold
// stops the objects that a hypothesis within the threshold of its best
// moves; the scan's two best alone name only one such cluster.
func TestAmbiguousRowsPerCluster(t *testing.T) {
	for _, tt := range []struct {
		name      string
		clusters  bool
		threshold float64
		want      []int
	}{
		{"per-cluster", true, 0.01, []int{0, 1, 3, 4}},
		{"per-cluster-exact", true, 0, []int{0, 1, 4}},
		{"clear-cluster-too", true, 3, []int{0, 1, 2, 3, 4}},
		{"scan-level-fallback", false, 0.01, []int{0, 1}},
	} {
		t.Run(tt.name, func(t *testing.T) {
			if got := ambiguous(quayDetail(tt.clusters), tt.threshold); !slices.Equal(got, tt.want) {
				t.Fatalf("ambiguous rows %v, want %v", got, tt.want)
			}
		})
	}
}

// TestClusterPartsAndProb: the changed objects are split by cluster, a
// change spanning a tied and a clear cluster is a tie in the one and a
// regression in the other, and the probability of the tracker's choice is
// the product of its clusters' posteriors.
func TestClusterPartsAndProb(t *testing.T) {
	d := quayDetail(true)
	parts := clusterParts(d, []string{"c", "a", "b"})
	if len(parts) != 2 || parts[0].cluster != 1 || parts[1].cluster != 0 ||
		!slices.Equal(parts[0].objects, []string{"c"}) || !slices.Equal(parts[1].objects, []string{"a", "b"}) {
		t.Fatalf("parts %+v, want cluster 1 {c} then cluster 0 {a b}", parts)
	}
	tied, clear := splitTied(parts, 0.01)
	if len(tied) != 1 || tied[0].cluster != 0 || len(clear) != 1 || clear[0].cluster != 1 {
		t.Fatalf("tied %+v clear %+v, want cluster 0 tied and cluster 1 clear", tied, clear)
	}
	if partsTied(d, []string{"a", "c"}, 0.01) || !partsTied(d, []string{"a", "e"}, 0.01) {
		t.Fatal("partsTied: a change is a tie only when every cluster it touches is")
	}
	// The tracker swapped a and b, gave c a miss, said nothing of d, and
	// gave e a miss: 0.5 · 0.05 · 0.45 (the most probable listed hypothesis
	// of the last cluster with e missed is d → 4, e missed).
	assoc := []int{2, 1, mot.NoDetection, -2, mot.NoDetection}
	all := clusterParts(d, []string{"a", "b", "c", "e"})
	if p := clusterProb(d, all, assoc); p == nil || math.Abs(*p-0.01125) > 1e-15 {
		t.Fatalf("probability %v, want 0.01125", p)
	}
	// A choice no listed cluster hypothesis holds has no probability.
	if p := clusterProb(d, clusterParts(d, []string{"c"}), []int{1, 2, 9, 4, 5}); p != nil {
		t.Fatalf("probability %v of an unlisted choice, want none", *p)
	}
	// Without per-cluster structure: one part with the scan's margin and
	// the scan-level probability.
	flat := quayDetail(false)
	flat.Hypotheses[1].Prob = 0.25
	fp := clusterParts(flat, []string{"a", "b"})
	if len(fp) != 1 || fp[0].cluster != -1 || fp[0].margin != 0 {
		t.Fatalf("parts without structure %+v, want one scan-wide part", fp)
	}
	if p := clusterProb(flat, fp, []int{2, 1, 3, 4, 5}); p == nil || *p != 0.25 {
		t.Fatalf("scan-level probability %v, want 0.25", p)
	}
}
