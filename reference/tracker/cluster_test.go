package tracker

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"trackgate/harness/mot"
)

// clusterMatrix cuts the rows of cd out of the scan's dense augmented
// matrix: rows × (all detections + rows), with the rows' own miss columns.
func clusterMatrix(d *Detail, cd ClusterDetail) []float64 {
	r, nd := len(d.Objects), len(d.Costs.Detections)
	dense := d.Costs.Dense()
	nr := len(cd.Rows)
	cols := nd + nr
	out := make([]float64, nr*cols)
	for a, row := range cd.Rows {
		copy(out[a*cols:a*cols+nd], dense[row*(nd+r):row*(nd+r)+nd])
		for b := 0; b < nr; b++ {
			out[a*cols+nd+b] = math.Inf(1)
		}
		out[a*cols+nd+a] = dense[row*(nd+r)+nd+row]
	}
	return out
}

// TestPerClusterAgainstBruteForce enumerates every association event of
// each cluster of small multi-cluster scans on its own and checks the
// cluster's margin (bit for bit: both add the entries in row order), its
// ranked costs and its probabilities, that the scan margin is the smallest
// cluster margin, and that the scan's posterior is the product of the
// cluster posteriors. The product is the factorisation of the package
// documentation ("Clusters"): the augmented cost separates over clusters,
// so exp(−cost) is a product of per-cluster factors and so is its
// normaliser (Bar-Shalom, Willett, Tian 2011, clustering of tracks that
// share measurements; from memory).
func TestPerClusterAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261201, 31))
	multi := 0
	for trial := 0; trial < 500; trial++ {
		md := posModel(0, 1, 0.3+0.69*rng.Float64(), 0.001+0.1*rng.Float64(), 0.999)
		states, scan := randomScan(rng, 2+rng.IntN(5), rng.IntN(5), 4+rng.Float64()*14)
		k := 1 + rng.IntN(8)
		limit := []int{1 << 20, -1}[trial%2]
		d, err := StepFrom(md, states, scan, k, limit)
		if err != nil {
			t.Fatal(err)
		}
		if len(d.PerCluster) != d.Clusters {
			t.Fatalf("trial %d: %d cluster details for %d clusters", trial, len(d.PerCluster), d.Clusters)
		}
		if d.Clusters > 1 {
			multi++
		}
		seenRow := make([]bool, len(d.Objects))
		owner := map[int]int{} // detection id → cluster
		minMargin := math.Inf(1)
		for ci, cd := range d.PerCluster {
			for _, row := range cd.Rows {
				if seenRow[row] || d.Objects[row].Cluster != ci {
					t.Fatalf("trial %d: row %d listed twice or with cluster %d, want %d", trial, row, d.Objects[row].Cluster, ci)
				}
				seenRow[row] = true
				for _, e := range d.Costs.Gated[row] {
					id := d.Costs.Detections[e.Col]
					if o, ok := owner[id]; ok && o != ci {
						t.Fatalf("trial %d: detection %d gated in clusters %d and %d", trial, id, o, ci)
					}
					owner[id] = ci
					if !slices.Contains(cd.Detections, id) {
						t.Fatalf("trial %d: cluster %d lacks its gated detection %d", trial, ci, id)
					}
				}
			}
			all := bruteForce(clusterMatrix(&d, cd), len(cd.Rows), len(d.Costs.Detections))
			want := math.Inf(1)
			if len(all) > 1 {
				want = all[1] - all[0]
			}
			if math.Float64bits(cd.Margin) != math.Float64bits(want) {
				t.Fatalf("trial %d cluster %d: margin %.17g, brute force %.17g", trial, ci, cd.Margin, want)
			}
			minMargin = math.Min(minMargin, cd.Margin)
			if len(all) == 0 {
				if !cd.Coasting || len(cd.Hypotheses) != 0 {
					t.Fatalf("trial %d cluster %d: infeasible but not coasting", trial, ci)
				}
				continue
			}
			if n := min(k, len(all)); len(cd.Hypotheses) != n {
				t.Fatalf("trial %d cluster %d: %d hypotheses, want %d", trial, ci, len(cd.Hypotheses), n)
			}
			var z, sum float64
			for _, c := range all {
				z += math.Exp(-(c - all[0]))
			}
			for q, h := range cd.Hypotheses {
				if h.Cost != all[q] {
					t.Fatalf("trial %d cluster %d: hypothesis %d costs %.17g, brute force %.17g", trial, ci, q, h.Cost, all[q])
				}
				if len(h.Assoc) != len(cd.Rows) {
					t.Fatalf("trial %d cluster %d: %d associations for %d rows", trial, ci, len(h.Assoc), len(cd.Rows))
				}
				if cd.Exhaustive && !near(h.Prob, math.Exp(-(all[q]-all[0]))/z, 1e-12, 1e-9) {
					t.Fatalf("trial %d cluster %d: hypothesis %d probability %.15g, brute force %.15g", trial, ci, q, h.Prob, math.Exp(-(all[q]-all[0]))/z)
				}
				sum += h.Prob
			}
			if !cd.Exhaustive && !near(sum, 1, 1e-12, 0) {
				t.Fatalf("trial %d cluster %d: listed probabilities sum to %.15g, want 1", trial, ci, sum)
			}
			// The best hypothesis is the one the scan chose for these rows.
			for a, row := range cd.Rows {
				if cd.Hypotheses[0].Assoc[a] != d.Objects[row].Detection {
					t.Fatalf("trial %d cluster %d: best gives row %d detection %d, the scan %d", trial, ci, row, cd.Hypotheses[0].Assoc[a], d.Objects[row].Detection)
				}
			}
		}
		checkPerCluster(t, &d)
		if d.Margin != minMargin {
			t.Fatalf("trial %d: scan margin %.17g, smallest cluster margin %.17g", trial, d.Margin, minMargin)
		}
		if !d.Exhaustive {
			continue
		}
		for q, h := range d.Hypotheses {
			p := 1.0
			for ci, cd := range d.PerCluster {
				if cd.Coasting {
					continue
				}
				found := false
				for _, ch := range cd.Hypotheses {
					match := true
					for a, row := range cd.Rows {
						match = match && ch.Assoc[a] == h.Assoc[row]
					}
					if match {
						p *= ch.Prob
						found = true
						break
					}
				}
				if !found {
					t.Fatalf("trial %d: scan hypothesis %d's part in cluster %d is not among the cluster's %d best", trial, q, ci, len(cd.Hypotheses))
				}
			}
			if !near(h.Prob, p, 1e-15, 1e-9) {
				t.Fatalf("trial %d: scan hypothesis %d probability %.15g, product of its cluster posteriors %.15g", trial, q, h.Prob, p)
			}
		}
	}
	if multi < 100 {
		t.Fatalf("only %d scans with several clusters; the test does not exercise clustering", multi)
	}
}

// quayScan is an invented two-cluster scan on a quay: two pallets, east
// and west of a crane at the origin, see two returns placed mirror-wise
// between them, so swapping them costs exactly the same; a forklift far
// down the quay sees one return close by and one near its gate's edge.
func quayScan() (mot.Model, []State, mot.Scan) {
	md := posModel(0, 0.5, 0.9, 0.001, 0.999)
	cov := mot.Mat{Rows: 2, Cols: 2, Data: []float64{0.5, 0, 0, 0.5}}
	states := []State{
		{ID: "pallet-east", Mean: []float64{1, 0}, Cov: cov, Predicted: true},
		{ID: "pallet-west", Mean: []float64{-1, 0}, Cov: cov, Predicted: true},
		{ID: "forklift", Mean: []float64{60, 0}, Cov: cov, Predicted: true},
	}
	scan := mot.Scan{Step: 4, Detections: []mot.Detection{
		{ID: 21, Z: []float64{0, 0.25}}, {ID: 22, Z: []float64{0, -0.25}},
		{ID: 23, Z: []float64{60.1, 0}}, {ID: 24, Z: []float64{63, 0}},
	}}
	return md, states, scan
}

// TestPerClusterTieAndClear: in quayScan the pallets' cluster is an exact
// tie (the swap costs the same bits, by symmetry), so the scan margin is 0,
// while the forklift's own margin is large: its two best hypotheses are
// detection 23 and a miss or detection 24, whose costs differ by at least
// ½(d²₂₄ − d²₂₃) − ln λ terms that are worked out below by hand.
func TestPerClusterTieAndClear(t *testing.T) {
	md, states, scan := quayScan()
	d, err := StepFrom(md, states, scan, 5, 0)
	if err != nil {
		t.Fatal(err)
	}
	if d.Clusters != 2 || len(d.PerCluster) != 2 {
		t.Fatalf("%d clusters, want 2", d.Clusters)
	}
	pal, fk := d.PerCluster[0], d.PerCluster[1]
	if !slices.Equal(pal.Rows, []int{0, 1}) || !slices.Equal(fk.Rows, []int{2}) || d.Objects[2].Cluster != 1 {
		t.Fatalf("cluster rows %v and %v, want [0 1] and [2]", pal.Rows, fk.Rows)
	}
	if pal.Margin != 0 || d.Margin != 0 {
		t.Fatalf("pallet margin %v, scan margin %v, want both exactly 0", pal.Margin, d.Margin)
	}
	// Forklift: S = P + R = I, so c = d²/2 + ½ ln|S| + ln 2π − ln P_D + ln λ
	// (Blackman & Popoli 1999, §6.2 score increment, negated) and the
	// miss costs −ln(1 − P_D). d²(23) = 0.01, d²(24) = 9 (inside the
	// gate χ²₂⁻¹(0.999) ≈ 13.8, from memory).
	base := math.Log(2*math.Pi) - math.Log(0.9) + math.Log(0.001)
	c23, c24, miss := 0.005+base, 4.5+base, -math.Log(0.1)
	want := math.Min(c24, miss) - c23
	if !near(fk.Margin, want, 1e-12, 1e-12) {
		t.Fatalf("forklift margin %.15g, want %.15g", fk.Margin, want)
	}
	if fk.Margin < 2 {
		t.Fatalf("forklift margin %v: the example is meant to be clear", fk.Margin)
	}
	// The tie splits the pallets' posterior evenly between the two
	// swapped hypotheses.
	if len(pal.Hypotheses) < 2 || pal.Hypotheses[0].Prob != pal.Hypotheses[1].Prob {
		t.Fatalf("pallet hypotheses %+v, want two of equal probability first", pal.Hypotheses)
	}
}

// checkPerCluster checks the per-cluster records of d against the rest of
// it: every row in exactly one cluster, which its Cluster names; the scan
// margin the smallest cluster margin; a coasting cluster's objects
// coasting; each cluster's best hypothesis the associations the scan
// chose; costs non-decreasing and probabilities in [0, 1] summing to at
// most one.
func checkPerCluster(t *testing.T, d *Detail) {
	t.Helper()
	if len(d.PerCluster) != d.Clusters {
		t.Fatalf("%d cluster records for %d clusters", len(d.PerCluster), d.Clusters)
	}
	seen := make([]bool, len(d.Objects))
	m := math.Inf(1)
	for ci, cd := range d.PerCluster {
		m = math.Min(m, cd.Margin)
		if !(cd.Margin >= 0) {
			t.Fatalf("cluster %d: margin %g, want ≥ 0", ci, cd.Margin)
		}
		for a, row := range cd.Rows {
			if row < 0 || row >= len(d.Objects) || seen[row] || d.Objects[row].Cluster != ci {
				t.Fatalf("cluster %d: row %d out of range, repeated or with another cluster index", ci, row)
			}
			seen[row] = true
			if d.Objects[row].Coasting != cd.Coasting {
				t.Fatalf("cluster %d: coasting %v, its object %s %v", ci, cd.Coasting, d.Objects[row].Object, d.Objects[row].Coasting)
			}
			if !cd.Coasting && cd.Hypotheses[0].Assoc[a] != d.Objects[row].Detection {
				t.Fatalf("cluster %d: best gives %s detection %d, the scan %d", ci, d.Objects[row].Object, cd.Hypotheses[0].Assoc[a], d.Objects[row].Detection)
			}
		}
		if cd.Coasting != (len(cd.Hypotheses) == 0) || cd.Coasting && !math.IsInf(cd.Margin, 1) {
			t.Fatalf("cluster %d: coasting %v with %d hypotheses and margin %g", ci, cd.Coasting, len(cd.Hypotheses), cd.Margin)
		}
		var sum float64
		for q, h := range cd.Hypotheses {
			if !(h.Prob >= 0 && h.Prob <= 1) || q > 0 && h.Cost < cd.Hypotheses[q-1].Cost || len(h.Assoc) != len(cd.Rows) {
				t.Fatalf("cluster %d hypothesis %d: cost %g, probability %g, %d associations", ci, q, h.Cost, h.Prob, len(h.Assoc))
			}
			sum += h.Prob
		}
		if sum > 1+1e-12 {
			t.Fatalf("cluster %d: probabilities sum to %.15g", ci, sum)
		}
	}
	for row, ok := range seen {
		if !ok {
			t.Fatalf("row %d in no cluster", row)
		}
	}
	if d.Margin != m {
		t.Fatalf("scan margin %g, smallest cluster margin %g", d.Margin, m)
	}
}

// TestPerClusterCoasting: with P_D = 1 an object with no detection in its
// gate forms a cluster of its own without a feasible association; its
// record coasts, with no hypotheses and an infinite margin, and the other
// cluster keeps its single hypothesis of probability 1.
func TestPerClusterCoasting(t *testing.T) {
	md := posModel(0, 1, 1, 0.01, 0.99)
	states := []State{
		{ID: "tug", Mean: []float64{0, 0}, Cov: mot.Identity(2), Predicted: true},
		{ID: "mooring", Mean: []float64{100, 0}, Cov: mot.Identity(2), Predicted: true},
	}
	scan := mot.Scan{Step: 2, Detections: []mot.Detection{{ID: 0, Z: []float64{0.5, 0}}}}
	d, err := StepFrom(md, states, scan, 5, 0)
	if err != nil {
		t.Fatal(err)
	}
	checkPerCluster(t, &d)
	tug, moor := d.PerCluster[d.Objects[0].Cluster], d.PerCluster[d.Objects[1].Cluster]
	if !moor.Coasting || len(moor.Hypotheses) != 0 || !math.IsInf(moor.Margin, 1) {
		t.Fatalf("mooring's cluster %+v, want coasting without hypotheses", moor)
	}
	if tug.Coasting || len(tug.Hypotheses) != 1 || tug.Hypotheses[0].Prob != 1 || !slices.Equal(tug.Detections, []int{0}) {
		t.Fatalf("tug's cluster %+v, want one hypothesis of probability 1 on detection 0", tug)
	}
}
