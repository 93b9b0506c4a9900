package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/result"
	"trackgate/harness/result/sample"
	"trackgate/harness/shard"
)

// writeShards writes the sample suite split into total shards and returns
// the file names.
func writeShards(t *testing.T, full *result.Suite, total int) []string {
	t.Helper()
	dir := t.TempDir()
	var files []string
	for i := 0; i < total; i++ {
		f := filepath.Join(dir, fmt.Sprintf("shard-%d.json", i))
		if err := result.Write(f, shard.Select(full, shard.Spec{Index: i, Total: total})); err != nil {
			t.Fatal(err)
		}
		files = append(files, f)
	}
	return files
}

func TestMergeCommand(t *testing.T) {
	full := sample.Suite()
	files := writeShards(t, full, 3)
	out := filepath.Join(t.TempDir(), "merged.json")
	var stdout, stderr bytes.Buffer
	args := append([]string{"merge", "-o", out, "-verify-split"}, files...)
	if code := run(args, &stdout, &stderr); code != exitTracker {
		t.Fatalf("exit %d, want %d (the sample has a tracker fault); stderr:\n%s", code, exitTracker, stderr.String())
	}
	got, err := result.Read(out)
	if err != nil {
		t.Fatal(err)
	}
	opts := []cmp.Option{cmpopts.EquateNaNs(), cmpopts.EquateEmpty(),
		cmpopts.IgnoreFields(result.Scenario{}, "Metrics", "Gates"), cmpopts.IgnoreFields(result.Suite{}, "Notes", "Rules")}
	if d := cmp.Diff(full, got, opts...); d != "" {
		t.Errorf("merged (-unsharded +merged):\n%s", d)
	}
	if !strings.Contains(stderr.String(), "3 results, 4 scenarios, 10 runs, 0 gates, status fault") {
		t.Errorf("stderr = %q", stderr.String())
	}
}

func TestMergeCommandErrors(t *testing.T) {
	full := sample.Suite()
	files := writeShards(t, full, 3)
	// A shard file claiming to be 1/2 although its runs were split for 3.
	wrong := filepath.Join(t.TempDir(), "wrong.json")
	s := shard.Select(full, shard.Spec{Index: 1, Total: 3})
	s.Shard = &result.Shard{Index: 1, Total: 2}
	if err := result.Write(wrong, s); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "merged.json")
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"gap", []string{"merge", "-o", out, files[0], files[2]}, "shards missing: index 1 of 3 (result 1 (shard 0/3) says there are 3 shards, 2 results given)"},
		{"overlap", []string{"merge", "-o", out, files[0], files[1], files[1], files[2]}, "shard 1/3 given twice"},
		{"no output", append([]string{"merge"}, files...), "-o: the merged result file is required"},
		{"no input", []string{"merge", "-o", out}, "expected at least one shard result file"},
		{"misplaced run", []string{"merge", "-verify-split", "-o", out, wrong}, "belongs to shard"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var stdout, stderr bytes.Buffer
			if code := run(tt.args, &stdout, &stderr); code != exitUsage {
				t.Errorf("exit %d, want %d", code, exitUsage)
			}
			if !strings.Contains(stderr.String(), tt.want) {
				t.Errorf("stderr = %q, want it to contain %q", stderr.String(), tt.want)
			}
		})
	}
}

// TestMergeJudgesRecordedGates: shards checked with a gate that fails
// (mean GOSPA at most 0 m, which any noisy run exceeds) exit 1 each, and
// their merge, made where there is no project file, judges the gate the
// shards recorded and exits 1 too; shards checked with different gates do
// not merge; --config replaces the recorded gates, with a note.
func TestMergeJudgesRecordedGates(t *testing.T) {
	t.Setenv("CI", "")
	cfg, _ := gateProject(t, "warmup-rail-carts", "crossing-harbour-vessels") // one per shard
	gated := filepath.Join(t.TempDir(), "gated.yaml")
	base, err := os.ReadFile(cfg)
	if err != nil {
		t.Fatal(err)
	}
	gate := "gates:\n  - metric: mean_gospa\n    limit: 0\n"
	if err := os.WriteFile(gated, append(base, gate...), 0o644); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	var shards []string
	for k := 0; k < 2; k++ {
		f := filepath.Join(dir, fmt.Sprintf("shard-%d.json", k))
		code, out, errOut := runCmd("check", "--config", gated, "--against", "reference", "--runs", "4",
			"--shard", fmt.Sprintf("%d/2:scenarios", k), "--shard-base", "0", "--quiet", "--json", f)
		if code != exitFail {
			t.Fatalf("shard %d: exit %d, want %d (the gate fails)\n%s%s", k, code, exitFail, out, errOut)
		}
		shards = append(shards, f)
	}
	s, err := result.Read(shards[0])
	if err != nil {
		t.Fatal(err)
	}
	if s.Rules == nil || len(s.Rules.Gates) != 1 || s.Rules.Gates[0].Metric != "mean_gospa" ||
		s.Rules.Gates[0].Limit == nil || *s.Rules.Gates[0].Limit != 0 {
		t.Fatalf("shard records the gates %v, want mean_gospa limit 0", s.Rules)
	}
	merged := filepath.Join(dir, "merged.json")
	code, _, errOut := runCmd(append([]string{"merge", "-o", merged}, shards...)...)
	if code != exitFail {
		t.Fatalf("merge without a project file: exit %d, want %d\n%s", code, exitFail, errOut)
	}
	m, err := result.Read(merged)
	if err != nil {
		t.Fatal(err)
	}
	failed := 0
	for _, sc := range m.Scenarios {
		for _, g := range sc.Gates {
			if g.Status == result.Fail {
				failed++
			}
		}
	}
	if failed != 2 || !m.Rules.Equal(s.Rules) {
		t.Errorf("merged: %d failed gates (want one per scenario), rules %v", failed, m.Rules)
	}

	// A shard checked without the gate does not merge with a gated one.
	plain := filepath.Join(dir, "plain-1.json")
	if code, out, errOut := runCmd("check", "--config", cfg, "--against", "reference", "--runs", "4",
		"--shard", "1/2:scenarios", "--shard-base", "0", "--quiet", "--json", plain); code != exitPass {
		t.Fatalf("ungated shard: exit %d\n%s%s", code, out, errOut)
	}
	code, _, errOut = runCmd("merge", "-o", merged, shards[0], plain)
	if code != exitUsage || !strings.Contains(errOut, "judged with the gates no gates, the first result with mean_gospa (worse higher) limit 0") {
		t.Errorf("merge of shards with different gates: exit %d, want %d\n%s", code, exitUsage, errOut)
	}

	// An explicit project file without gates replaces the recorded ones.
	code, _, errOut = runCmd(append([]string{"merge", "-o", merged, "--config", cfg}, shards...)...)
	if code != exitPass || !strings.Contains(errOut, "replaces the gates the shards were judged with (mean_gospa (worse higher) limit 0) by no gates") {
		t.Errorf("merge with --config: exit %d, want %d\n%s", code, exitPass, errOut)
	}
}

// FuzzMergeCommand feeds merge two shard results, the second one mutated:
// whatever the bytes, merge returns an exit code (no panic) and does not
// allocate without bound (a shard total or a run count read from the file
// must not size anything before it is checked).
func FuzzMergeCommand(f *testing.F) {
	full := sample.Suite()
	dir := f.TempDir()
	first := filepath.Join(dir, "shard-0.json")
	if err := result.Write(first, shard.Select(full, shard.Spec{Index: 0, Total: 2})); err != nil {
		f.Fatal(err)
	}
	second, err := result.Marshal(shard.Select(full, shard.Spec{Index: 1, Total: 2}))
	if err != nil {
		f.Fatal(err)
	}
	f.Add(second)
	text := string(second)
	for _, m := range [][2]string{
		{`"total": 2`, `"total": 4611686018427387904`},
		{`"total": 2`, `"total": 1000000000`},
		{`"state_dim": 4`, `"state_dim": 0`},
		{`"runs_planned": `, `"runs_planned": 99999`},
		{`"index": 1`, `"index": -1`},
		{`"position": [`, `"position": [9, `},
	} {
		f.Add([]byte(strings.Replace(text, m[0], m[1], 1)))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		tmp := t.TempDir()
		mutated := filepath.Join(tmp, "shard-1.json")
		if err := os.WriteFile(mutated, data, 0o644); err != nil {
			t.Fatal(err)
		}
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		var stdout, stderr bytes.Buffer
		code := run([]string{"merge", "-o", filepath.Join(tmp, "merged.json"), first, mutated}, &stdout, &stderr)
		runtime.ReadMemStats(&after)
		if code < 0 || code > 3 {
			t.Fatalf("exit %d", code)
		}
		// A result the size of the input, a few times over, is fine; a
		// slice sized by a number in the file is not.
		if grew := after.TotalAlloc - before.TotalAlloc; grew > 64<<20+uint64(200*len(data)) {
			t.Fatalf("merge allocated %d bytes for a %d-byte input", grew, len(data))
		}
	})
}
