package metrics

import (
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/mot"
)

// warehouse is an invented warehouse-floor run with two forklifts, state
// [x, ẋ, y, ẏ]. Forklift a lives on steps 0–5 at (k, 0) moving at 1 m/s;
// forklift b lives on steps 2–5, parked at (10, 10).
//
//	step  a                        b                     other
//	0     t1 [3,1,4,0]  (pe 25)    -                     -
//	1     t1 [1,2,0,0]  (ve 1)     -                     t9 false
//	2     t1 [2,1,0,0]             t2 [10,0,13,0] pe 9   t9 false; t2 has P = I
//	3     not covered (break)      t2 [10,0,13,0] pe 9   -
//	4     t3 [4,1,0,3]  (ve 9;     t4 exact (switch)     -
//	         switch t1→t3)
//	5     t3 exact                 t2 exact (switch)     -
func warehouse() ([]mot.Truth, []mot.Frame, []map[string]string) {
	a := func(k int) mot.TruthState { return mot.TruthState{Object: "a", X: []float64{float64(k), 1, 0, 0}} }
	b := mot.TruthState{Object: "b", X: []float64{10, 0, 10, 0}}
	est := func(id string, x ...float64) mot.Estimate {
		return mot.Estimate{Track: id, Mean: x, Detection: mot.NoDetection}
	}
	t2cov := est("t2", 10, 0, 13, 0)
	t2cov.Cov = mot.Identity(4)
	truth := []mot.Truth{
		{Step: 0, Objects: []mot.TruthState{a(0)}},
		{Step: 1, Objects: []mot.TruthState{a(1)}},
		{Step: 2, Objects: []mot.TruthState{a(2), b}},
		{Step: 3, Objects: []mot.TruthState{a(3), b}},
		{Step: 4, Objects: []mot.TruthState{a(4), b}},
		{Step: 5, Objects: []mot.TruthState{a(5), b}},
	}
	frames := []mot.Frame{
		{Step: 0, Tracks: []mot.Estimate{est("t1", 3, 1, 4, 0)}},
		{Step: 1, Tracks: []mot.Estimate{est("t1", 1, 2, 0, 0), est("t9", 50, 0, 50, 0)}},
		{Step: 2, Tracks: []mot.Estimate{est("t1", 2, 1, 0, 0), t2cov, est("t9", 51, 0, 50, 0)}},
		{Step: 3, Tracks: []mot.Estimate{est("t2", 10, 0, 13, 0)}},
		{Step: 4, Tracks: []mot.Estimate{est("t3", 4, 1, 0, 3), est("t4", 10, 0, 10, 0)}},
		{Step: 5, Tracks: []mot.Estimate{est("t3", 5, 1, 0, 0), est("t2", 10, 0, 10, 0)}},
	}
	mapping := []map[string]string{
		{"t1": "a"},
		{"t1": "a", "t9": ""},
		{"t1": "a", "t2": "b", "t9": ""},
		{"t2": "b"},
		{"t3": "a", "t4": "b"},
		{"t3": "a", "t2": "b"},
	}
	return truth, frames, mapping
}

var cv2 = Select{Position: []int{0, 2}, Velocity: []int{1, 3}}

// TestScoreRunWarehouse checks the hand-derived record of the warehouse
// run (the derivation is in the table of warehouse): a has squared
// position errors 25 over 5 covered steps (RMSE √5) and squared velocity
// errors 1 + 9 (RMSE √2); b has 9 + 9 over 4 steps (RMSE √4.5); pooled
// √(43/9) and √(10/9). The NEES of t2 at step 2 with P = I is 3² = 9.
func TestScoreRunWarehouse(t *testing.T) {
	truth, frames, mapping := warehouse()
	got, err := ScoreRun(truth, frames, mapping, cv2)
	if err != nil {
		t.Fatal(err)
	}
	want := Score{
		Objects: []ObjectScore{
			{Object: "a", Alive: 6, Covered: 5, PositionRMSE: math.Sqrt(5), VelocityRMSE: math.Sqrt(2), Switches: 1, Breaks: 1, Tracks: []string{"t1", "t3"}},
			{Object: "b", Alive: 4, Covered: 4, PositionRMSE: math.Sqrt(4.5), VelocityRMSE: 0, Switches: 2, Breaks: 0, Tracks: []string{"t2", "t4"}},
		},
		PositionRMSE: math.Sqrt(43.0 / 9),
		VelocityRMSE: math.Sqrt(10.0 / 9),
		Switches:     3, Breaks: 1, MissedSteps: 1, FalseSteps: 2, FalseTracks: 1,
		NEES: [][]float64{nil, nil, {9}, nil, nil, nil},
	}
	approx := cmp.Comparer(func(x, y float64) bool { return x == y || math.Abs(x-y) <= 1e-12*math.Max(math.Abs(x), math.Abs(y)) })
	if diff := cmp.Diff(want, got, approx); diff != "" {
		t.Errorf("ScoreRun mismatch (-want +got):\n%s", diff)
	}
	// Without velocity components the velocity RMSE is 0.
	got, err = ScoreRun(truth, frames, mapping, Select{Position: []int{0, 2}})
	if err != nil {
		t.Fatal(err)
	}
	if got.VelocityRMSE != 0 || !closeRel(got.PositionRMSE, math.Sqrt(43.0/9), 1e-12) {
		t.Errorf("position only: %g, %g; want 0 and √(43/9)", got.VelocityRMSE, got.PositionRMSE)
	}
}

func TestScoreRunUncovered(t *testing.T) {
	// An object never covered has zero RMSE and every step missed; a break
	// needs coverage at the step before.
	truth := []mot.Truth{
		{Step: 0, Objects: []mot.TruthState{{Object: "buoy", X: []float64{0, 0, 0, 0}}}},
		{Step: 1, Objects: []mot.TruthState{{Object: "buoy", X: []float64{0, 0, 0, 0}}}},
	}
	frames := []mot.Frame{{Step: 0}, {Step: 1}}
	got, err := ScoreRun(truth, frames, []map[string]string{{}, {}}, cv2)
	if err != nil {
		t.Fatal(err)
	}
	if len(got.Objects) != 1 || got.Objects[0].Covered != 0 || got.Objects[0].PositionRMSE != 0 || got.MissedSteps != 2 || got.Breaks != 0 {
		t.Errorf("uncovered object: %+v", got)
	}
}

func TestScoreRunErrors(t *testing.T) {
	tests := []struct {
		name   string
		modify func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string)
		want   string
	}{
		{"lengths", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			return tr, fr[:5], mp
		}, "equal counts"},
		{"step numbers", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			fr[3].Step = 7
			return tr, fr, mp
		}, "index 3: truth is step 3, frame is step 7"},
		{"unmapped track", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			delete(mp[1], "t9")
			return tr, fr, mp
		}, `step 1: track "t9" has no entry`},
		{"mapped but not reported", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			mp[0]["t7"] = "a"
			return tr, fr, mp
		}, `step 0: the mapping names track "t7"`},
		{"object not alive", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			mp[1]["t9"] = "b"
			return tr, fr, mp
		}, `step 1: track "t9" is mapped to object "b", which is not alive`},
		{"two tracks one object", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			mp[2]["t9"] = "a"
			return tr, fr, mp
		}, `step 2: object "a" is mapped from tracks "t1" and "t9"`},
		{"duplicate track", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			fr[0].Tracks = append(fr[0].Tracks, fr[0].Tracks[0])
			return tr, fr, mp
		}, `step 0: track "t1" reported twice`},
		{"short state", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			fr[0].Tracks[0].Mean = []float64{1, 2}
			return tr, fr, mp
		}, `step 0: track "t1" has a state of length 2, want at least 4`},
		{"nan state", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			fr[0].Tracks[0].Mean = []float64{math.NaN(), 1, 0, 0}
			return tr, fr, mp
		}, `step 0: track "t1" against object "a": error is not finite`},
		{"bad covariance", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			fr[0].Tracks[0].Cov = mot.NewMat(4, 4)
			return tr, fr, mp
		}, `step 0: track "t1" against object "a": NEES: covariance is not positive definite`},
		{"duplicate object", func(tr []mot.Truth, fr []mot.Frame, mp []map[string]string) ([]mot.Truth, []mot.Frame, []map[string]string) {
			tr[0].Objects = append(tr[0].Objects, tr[0].Objects[0])
			return tr, fr, mp
		}, `step 0: object "a" appears twice`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tr, fr, mp := tt.modify(warehouse())
			_, err := ScoreRun(tr, fr, mp, cv2)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("ScoreRun error = %v, want one containing %q", err, tt.want)
			}
		})
	}
}

func TestSelectValidate(t *testing.T) {
	if err := cv2.Validate(); err != nil {
		t.Errorf("valid selection: %v", err)
	}
	for _, bad := range []Select{{}, {Position: []int{0, -1}}, {Position: []int{0}, Velocity: []int{-2}}} {
		if bad.Validate() == nil {
			t.Errorf("Select%+v.Validate() = nil, want an error", bad)
		}
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("ScoreRun with Select%+v did not panic", bad)
				}
			}()
			ScoreRun(nil, nil, nil, bad)
		}()
	}
}
