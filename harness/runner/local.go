package runner

import (
	"context"
	"fmt"
	"math"
	"runtime/debug"
	"slices"
	"strings"

	"trackgate/harness/driver"
	"trackgate/harness/mot"
	"trackgate/harness/protocol"
)

// Local is a tracker under test that runs inside the harness's own process:
// a tracker written in Go, checked from its team's go test without a
// protocol subprocess. Options.Local selects it instead of a command.
//
// Begin is called once per run with the start message a subprocess would
// get, and the StepFunc it returns answers the run's scans in step order.
// With Options.Workers > 1 several runs are under way at once, so Begin
// and the StepFuncs it returns must not share unguarded state between
// runs. The frames are copied as they are returned, so a tracker may reuse
// its own memory from one step to the next.
//
// Every frame is checked as the driver checks a subprocess's replies
// (driver.Fault classes): the step, finite numbers, a mean of length n, a
// covariance of size n×n and symmetric when Ready.Covariance says one is
// reported, detection ids that belong to the scan and are used by one track
// at most, track ids used once per frame. An error from Begin or a
// StepFunc, and a panic, end the run with a fault.
type Local struct {
	// Ready is what the tracker would answer to a start message: its name
	// and version for reports, and which optional fields it reports.
	Ready protocol.Ready
	// Begin starts one run.
	Begin func(protocol.Start) (protocol.StepFunc, error)
}

// runLocal feeds one job to the in-process tracker.
func (s *settings) runLocal(ctx context.Context, job driver.Job) (res driver.Result) {
	ready := s.Local.Ready
	ready.Protocol = protocol.Version
	res.Tracker = ready
	step := -1
	defer func() {
		if p := recover(); p != nil {
			res.Fault = &driver.Fault{Class: driver.Crashed, Step: step,
				Detail: fmt.Sprintf("the tracker panicked: %v", p), Stderr: tail(string(debug.Stack()), 20)}
		}
	}()
	start := protocol.Start{
		Run: protocol.RunInfo{Scenario: job.Scenario, Hash: job.Hash, Index: job.Run.Index,
			Seed: job.Run.Seed, Steps: len(job.Run.Scans)},
		Model: job.Model, Objects: job.Objects,
	}
	fn, err := s.Local.Begin(start)
	if err != nil {
		res.Fault = &driver.Fault{Class: driver.BadOpening, Step: -1, Detail: fmt.Sprintf("the tracker could not start the run: %v", err)}
		return res
	}
	if fn == nil {
		res.Fault = &driver.Fault{Class: driver.BadOpening, Step: -1, Detail: "the tracker started the run without a step function"}
		return res
	}
	n := job.Model.StateDim
	for k, scan := range job.Run.Scans {
		step = k
		if err := ctx.Err(); err != nil {
			res.Fault = &driver.Fault{Class: driver.Canceled, Step: k, Detail: err.Error()}
			return res
		}
		f, err := fn(cloneScan(scan))
		if err != nil {
			res.Fault = &driver.Fault{Class: driver.Exited, Step: k, Detail: fmt.Sprintf("the tracker failed on the scan: %v", err)}
			return res
		}
		f = cloneFrame(f)
		if c, msg := checkFrame(f, scan, n, ready); c != 0 {
			res.Fault = &driver.Fault{Class: c, Step: k, Detail: msg}
			return res
		}
		res.Frames = append(res.Frames, f)
	}
	return res
}

// checkFrame checks one frame of an in-process tracker (see Local); a zero
// class means a good frame.
func checkFrame(f mot.Frame, scan mot.Scan, n int, ready protocol.Ready) (driver.Class, string) {
	if f.Step != scan.Step {
		return driver.WrongStep, fmt.Sprintf("the frame is for step %d, expected %d", f.Step, scan.Step)
	}
	inScan := make(map[int]bool, len(scan.Detections))
	for _, d := range scan.Detections {
		inScan[d.ID] = true
	}
	names := make(map[string]bool, len(f.Tracks))
	used := map[int]string{}
	for i, t := range f.Tracks {
		where := fmt.Sprintf("tracks[%d] (track %q)", i, t.Track)
		if names[t.Track] {
			return driver.DuplicateTrack, fmt.Sprintf("%s: track id used twice in the frame", where)
		}
		names[t.Track] = true
		if len(t.Mean) != n {
			return driver.Dimension, fmt.Sprintf("%s: mean of length %d, expected %d", where, len(t.Mean), n)
		}
		if !allFinite(t.Mean) {
			return driver.NonFinite, fmt.Sprintf("%s: mean %v is not finite", where, t.Mean)
		}
		if ready.Covariance {
			c := t.Cov
			if c.Rows != n || c.Cols != n || len(c.Data) != n*n {
				return driver.Dimension, fmt.Sprintf("%s: covariance %d×%d, expected %d×%d", where, c.Rows, c.Cols, n, n)
			}
			if !allFinite(c.Data) {
				return driver.NonFinite, fmt.Sprintf("%s: covariance is not finite", where)
			}
			if !symmetric(c) {
				return driver.BadCovariance, fmt.Sprintf("%s: covariance is not symmetric", where)
			}
		}
		if ready.Association && t.HasDetection && t.Detection != mot.NoDetection {
			if !inScan[t.Detection] {
				return driver.UnknownDetection, fmt.Sprintf("%s: detection %d is not in the scan of step %d", where, t.Detection, scan.Step)
			}
			if other, dup := used[t.Detection]; dup {
				return driver.DuplicateDetection, fmt.Sprintf("%s: detection %d is also used by track %q", where, t.Detection, other)
			}
			used[t.Detection] = t.Track
		}
	}
	return 0, ""
}

func allFinite(xs []float64) bool {
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// symmetric applies the driver's test: |Pᵢⱼ − Pⱼᵢ| ≤ 1e-9·max|P| (common
// practice).
func symmetric(c mot.Mat) bool {
	s := 0.0
	for _, v := range c.Data {
		s = max(s, math.Abs(v))
	}
	for i := 0; i < c.Rows; i++ {
		for j := i + 1; j < c.Cols; j++ {
			if math.Abs(c.At(i, j)-c.At(j, i)) > 1e-9*s {
				return false
			}
		}
	}
	return true
}

func cloneScan(s mot.Scan) mot.Scan {
	s.Detections = slices.Clone(s.Detections)
	for i := range s.Detections {
		s.Detections[i].Z = slices.Clone(s.Detections[i].Z)
	}
	return s
}

func cloneFrame(f mot.Frame) mot.Frame {
	f.Tracks = slices.Clone(f.Tracks)
	for i := range f.Tracks {
		f.Tracks[i].Mean = slices.Clone(f.Tracks[i].Mean)
		f.Tracks[i].Cov = f.Tracks[i].Cov.Clone()
	}
	return f
}

// tail returns the last n lines of s.
func tail(s string, n int) string {
	lines := strings.Split(strings.TrimRight(s, "\n"), "\n")
	if len(lines) > n {
		lines = lines[len(lines)-n:]
	}
	return strings.Join(lines, "\n")
}
