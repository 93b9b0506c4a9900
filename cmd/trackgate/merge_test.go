package main

import (
	"bytes"
	"fmt"
	"path/filepath"
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
		{"gap", []string{"merge", "-o", out, files[0], files[2]}, "shards missing: result 1 (shard 0/3) says there are 3 shards, 2 results given"},
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
