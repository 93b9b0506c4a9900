package sim

import (
	"fmt"
	"io"
	"path/filepath"
	"testing"

	"trackgate/harness/mot"
	"trackgate/harness/scenario"
)

// largeScene is an invented demo: a coastal surveillance radar over a busy
// fishing ground, 200 boats over 500 scans with heavy sea clutter.
func largeScene() *scenario.Spec {
	spec := quayScene()
	spec.Name = "coastal-fishing-fleet"
	spec.Scripted = nil
	spec.Steps = 500
	spec.Model.ClutterMean = 60
	spec.Model.ClutterMin = []float64{-20000, -20000}
	spec.Model.ClutterMax = []float64{20000, 20000}
	spec.Objects = nil
	for i := range 200 {
		spec.Objects = append(spec.Objects, scenario.Object{Object: mot.Object{
			ID:   fmt.Sprintf("boat%03d", i),
			Mean: []float64{float64(i*150 - 15000), 3, float64((i*37)%200*100 - 10000), -2},
			Cov:  mot.Identity(4), Appear: i % 50, Disappear: -1,
		}, DrawStart: i%2 == 1})
	}
	return spec
}

// BenchmarkRun simulates one whole run of the large scene (95,100
// truth states and 111,147 detections in run 0).
func BenchmarkRun(b *testing.B) {
	s, err := Prepare(largeScene())
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		s.Run(i)
	}
}

// BenchmarkWrite renders one run of the large scene as JSON lines.
func BenchmarkWrite(b *testing.B) {
	spec := largeScene()
	rec := Record{Scenario: spec.Name, Hash: spec.Hash, Run: Run(spec, 0)}
	b.ReportAllocs()
	for b.Loop() {
		if err := Write(io.Discard, rec); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkStockLibrary simulates every run of every stock scenario and
// writes each as JSON lines (loading the files is not timed).
func BenchmarkStockLibrary(b *testing.B) {
	files, err := filepath.Glob(filepath.Join("..", "..", "scenarios", "*.yaml"))
	if err != nil || len(files) == 0 {
		b.Fatalf("no stock scenarios (%v)", err)
	}
	var sims []*Sim
	var specs []*scenario.Spec
	for _, f := range files {
		spec, err := scenario.Load(f)
		if err != nil {
			b.Fatal(err)
		}
		s, err := Prepare(spec)
		if err != nil {
			b.Fatal(err)
		}
		sims, specs = append(sims, s), append(specs, spec)
	}
	b.ReportAllocs()
	for b.Loop() {
		for i, s := range sims {
			for r := range specs[i].Runs {
				if err := Write(io.Discard, Record{Scenario: specs[i].Name, Hash: specs[i].Hash, Run: s.Run(r)}); err != nil {
					b.Fatal(err)
				}
			}
		}
	}
}
