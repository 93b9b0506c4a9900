package driver

import (
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
)

// FuzzCheckFrame feeds whatever the decoder accepts to the reply checks,
// which must classify it without panicking.
func FuzzCheckFrame(f *testing.F) {
	f.Add([]byte(`{"type":"tracks","step":1,"tracks":[{"id":"a","mean":[1,2,3,4],"cov":[[1,0,0,0],[0,1,0,0],[0,0,1,0],[0,0,0,1]],"detection":2}]}`))
	f.Add([]byte(`{"type":"tracks","step":1,"tracks":[{"id":"a","mean":[1,2,3,4],"cov":[[1,2],[2,1]],"detection":3},{"id":"a","mean":[1]}]}`))
	f.Add([]byte(`{"type":"tracks","step":1,"tracks":[{"id":1,"mean":[0,0,0,0],"cov":[[0,0,0,0],[0,0,0,0],[0,0,0,0],[0,0,0,-1]]}]}`))
	job := warehouseJob(0, 2)
	scan := job.Run.Scans[1]
	f.Fuzz(func(t *testing.T, line []byte) {
		fr, err := protocol.ParseTracks(line)
		if err != nil {
			return
		}
		for _, ready := range []protocol.Ready{{}, {Covariance: true, Association: true}} {
			var c checker
			c.init(job.Model, ready)
			if fault := c.frame(&scan, &fr); fault != nil && (fault.Class == 0 || fault.Detail == "") {
				t.Fatalf("fault without class or detail: %+v", fault)
			}
		}
	})
}

// TestCheckFrame covers the checks one by one on hand-made frames.
func TestCheckFrame(t *testing.T) {
	job := warehouseJob(0, 2)
	scan := job.Run.Scans[1] // detections 2 and 3
	good := func() mot.Frame {
		return mot.Frame{Step: 1, Tracks: []mot.Estimate{
			{Track: "a", Mean: []float64{1, 0, 2, 0}, Cov: mot.Identity(4), Detection: 2, HasDetection: true},
			{Track: "b", Mean: []float64{5, 0, 6, 0}, Cov: mot.Identity(4), Detection: mot.NoDetection, HasDetection: true},
		}}
	}
	tests := []struct {
		name  string
		edit  func(*mot.Frame)
		class Class
	}{
		{"clean", func(*mot.Frame) {}, 0},
		{"wrong step", func(f *mot.Frame) { f.Step = 0 }, WrongStep},
		{"short mean", func(f *mot.Frame) { f.Tracks[1].Mean = f.Tracks[1].Mean[:2] }, Dimension},
		{"small cov", func(f *mot.Frame) { f.Tracks[0].Cov = mot.Identity(2) }, Dimension},
		{"missing cov", func(f *mot.Frame) { f.Tracks[0].Cov = mot.Mat{} }, Malformed},
		{"missing detection", func(f *mot.Frame) { f.Tracks[0].HasDetection = false }, Malformed},
		{"detection of another scan", func(f *mot.Frame) { f.Tracks[0].Detection = 0 }, UnknownDetection},
		{"detection twice", func(f *mot.Frame) { f.Tracks[1].Detection = 2 }, DuplicateDetection},
		{"track twice", func(f *mot.Frame) { f.Tracks[1].Track = "a" }, DuplicateTrack},
		{"indefinite cov", func(f *mot.Frame) { f.Tracks[1].Cov.Set(3, 3, -0.5) }, BadCovariance},
	}
	for _, tt := range tests {
		var c checker
		c.init(job.Model, protocol.Ready{Covariance: true, Association: true})
		f := good()
		tt.edit(&f)
		fault := c.frame(&scan, &f)
		switch {
		case tt.class == 0 && fault != nil:
			t.Errorf("%s: fault %v, want none", tt.name, fault)
		case tt.class != 0 && (fault == nil || fault.Class != tt.class):
			t.Errorf("%s: fault %v, want class %v", tt.name, fault, tt.class)
		}
	}
}
