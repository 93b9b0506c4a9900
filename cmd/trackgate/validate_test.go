package main

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"
)

func TestValidateStockLibrary(t *testing.T) {
	files, err := filepath.Glob("../../scenarios/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no stock scenarios (err %v)", err)
	}
	var out, errb bytes.Buffer
	code := run(append([]string{"validate"}, files...), &out, &errb)
	if code != exitPass || errb.Len() != 0 {
		t.Fatalf("validate stock library: exit %d, stderr:\n%s", code, errb.String())
	}
	if got := strings.Count(out.String(), ": ok ("); got != len(files) {
		t.Errorf("stdout reports %d valid files, want %d:\n%s", got, len(files), out.String())
	}
}

func TestValidateReportsEveryErrorOfEveryFile(t *testing.T) {
	good := "../../scenarios/warmup-rail-carts.yaml"
	bad1 := "../../harness/scenario/testdata/bad/lifetimes.yaml"
	bad2 := "../../harness/scenario/testdata/bad/probabilities.yaml"
	var out, errb bytes.Buffer
	code := run([]string{"validate", "-q", bad1, good, bad2}, &out, &errb)
	if code != exitUsage {
		t.Errorf("exit %d, want %d", code, exitUsage)
	}
	if out.Len() != 0 {
		t.Errorf("-q printed to stdout:\n%s", out.String())
	}
	// Hand-written expectations: the line, column and field of each error
	// in the two files, in file order then position order.
	want := []string{
		bad1 + ":18:16: objects[0].disappear: 4 is not after appear (4); expected a step greater than appear",
		bad1 + ":21:13: objects[1].appear: 10 is out of range; expected the first step the object exists, 0 to 9 (steps − 1)",
		bad1 + ":24:13: objects[2].appear: -1 is out of range; expected the first step the object exists, 0 to 9 (steps − 1)",
		bad1 + ":25:16: objects[2].disappear: 11 is out of range; expected the first step the object no longer exists, after appear and at most 10 (steps)",
		bad2 + ":13:24: detection-probability: 0 is outside (0, 1]; expected a probability greater than 0 and at most 1",
		bad2 + ":14:19: gate-probability: 1 is outside (0, 1); expected a probability greater than 0 and less than 1",
	}
	got := strings.Split(strings.TrimSuffix(errb.String(), "\n"), "\n")
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("stderr:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

func TestValidateUsage(t *testing.T) {
	tests := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"no files", []string{"validate"}, exitUsage, "trackgate validate: no scenario files given\n"},
		{"unknown flag", []string{"validate", "-x", "a.yaml"}, exitUsage, "flag provided but not defined: -x"},
		{"help", []string{"validate", "-h"}, exitPass, "usage: trackgate validate FILE..."},
		{"missing file", []string{"validate", "no-such.yaml"}, exitUsage, "no-such.yaml: cannot read: no such file or directory\n"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			code := run(tc.args, &out, &errb)
			if code != tc.code || !strings.Contains(errb.String(), tc.want) {
				t.Errorf("run(%q) = %d, stderr %q; want %d and stderr containing %q", tc.args, code, errb.String(), tc.code, tc.want)
			}
		})
	}
}
