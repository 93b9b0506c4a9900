package runner

import (
	"context"
	"testing"
)

// BenchmarkCheckReference measures one check against the reference of two
// stock scenarios (the tracker is the test binary serving the reference),
// harness and tracker together.
func BenchmarkCheckReference(b *testing.B) {
	o := variantOptions("reference", scenarioFile("crossing-harbour-vessels"), scenarioFile("convoy-parallel-trucks"))
	o.Against, o.Runs = AgainstReference, 2
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Check(context.Background(), o); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkJudge measures the comparison and metrics of one run alone,
// without simulation, the reference run or the tracker.
func BenchmarkJudge(b *testing.B) {
	o := variantOptions("reference", scenarioFile("crossing-harbour-vessels"))
	o.Against, o.Runs = AgainstReference, 1
	s, err := resolve(o, true)
	if err != nil {
		b.Fatal(err)
	}
	scens := s.load()
	jobs := s.plan(scens, func(*scen, int) bool { return true })
	s.prepareJob(jobs[0])
	s.drive(context.Background(), jobs)
	b.ReportAllocs()
	for b.Loop() {
		j := *jobs[0]
		j.out = jobs[0].out
		s.judge(&j)
	}
}

// BenchmarkCheckStockLocal measures a check of the whole stock library,
// 10 runs per scenario, against the reference, with the reference run in
// process as the tracker: the harness's own cost without process and
// protocol overhead.
func BenchmarkCheckStockLocal(b *testing.B) {
	o := variantOptions("reference")
	o.Scenarios = nil
	o.Config.Scenarios = []string{stock + "*.yaml"}
	o.Against, o.Runs, o.Local = AgainstReference, 10, referenceLocal()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Check(context.Background(), o); err != nil {
			b.Fatal(err)
		}
	}
}
