package driver

import (
	"context"
	"slices"
	"syscall"
	"testing"
	"time"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
)

// benchJob is a run of n scans whose messages are about 500 bytes each
// way, the size of the bare JSON-lines ping-pong in
// /work/shared/PERF-ANCHORS.md §2: eight detections per scan, and a reply
// of six tracks with 4-element means and associations.
func benchJob(n int) Job {
	job := warehouseJob(0, 1)
	job.Run.Scans = make([]mot.Scan, n)
	id := 0
	for k := range job.Run.Scans {
		s := mot.Scan{Step: k, Time: float64(k) * 0.5, Detections: make([]mot.Detection, 8)}
		for i := range s.Detections {
			s.Detections[i] = mot.Detection{ID: id, Z: []float64{-812.3456789012345 + float64(i)*1.0625, 120.98765432101234 - float64(k)*0.03125}}
			id++
		}
		job.Run.Scans[k] = s
	}
	return job
}

// BenchmarkRoundTrip measures the harness's cost per scan in conversation
// with a Go tracker: encode and send the scan, read, decode and check the
// reply, record both on the tape. One op is one scan; the tracker is
// started once per benchmark run, so use a fixed large count
// (-benchtime 20000x) to make its start-up negligible.
func BenchmarkRoundTrip(b *testing.B) {
	job := benchJob(b.N)
	cfg := fakeConfig("bench")
	cfg.ReplyTimeout = time.Minute
	cfg.RunTimeout = time.Hour
	line, _ := protocol.AppendScan(nil, job.Run.Scans[0])
	b.ReportAllocs()
	var self0, kids0 syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &self0)
	syscall.Getrusage(syscall.RUSAGE_CHILDREN, &kids0)
	// Per-scan latencies from the time between consecutive checked
	// replies; their median is robust to the bursts of a shared machine.
	stamps := make([]time.Time, 0, b.N)
	onReply = func() { stamps = append(stamps, time.Now()) }
	defer func() { onReply = nil }()
	b.ResetTimer()
	res := Run(context.Background(), cfg, job)
	b.StopTimer()
	if len(stamps) > 1 {
		lat := make([]float64, len(stamps)-1)
		for i := range lat {
			lat[i] = float64(stamps[i+1].Sub(stamps[i]).Nanoseconds()) / 1e3
		}
		slices.Sort(lat)
		b.ReportMetric(lat[len(lat)/2], "p50-µs")
		b.ReportMetric(lat[len(lat)*99/100], "p99-µs")
	}
	var self1, kids1 syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &self1)
	syscall.Getrusage(syscall.RUSAGE_CHILDREN, &kids1)
	cpu := func(a, b syscall.Rusage) float64 {
		return float64(b.Utime.Nano()+b.Stime.Nano()-a.Utime.Nano()-a.Stime.Nano()) / 1e3
	}
	// CPU per scan of this process (harness) and of the tracker (reaped
	// children), in µs: steadier than wall time on a loaded machine.
	b.ReportMetric(cpu(self0, self1)/float64(b.N), "harness-cpu-µs/op")
	b.ReportMetric(cpu(kids0, kids1)/float64(b.N), "tracker-cpu-µs/op")
	if res.Fault != nil {
		b.Fatal(res.Fault)
	}
	b.ReportMetric(float64(len(line)), "scan-bytes")
	b.ReportMetric(float64(len(res.Tape[3].Raw)), "reply-bytes")
}
