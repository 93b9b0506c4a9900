package main

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/result"
	"trackgate/harness/result/sample"
	"trackgate/harness/runner"
)

// writeSample writes the sample suite (status fault) to a temporary file.
func writeSample(t *testing.T) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "result.json")
	if err := result.Write(path, sample.Suite()); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestReportFormats(t *testing.T) {
	in := writeSample(t)
	tests := []struct {
		format string
		check  func(t *testing.T, out []byte)
	}{
		{"terminal", func(t *testing.T, out []byte) {
			if !bytes.HasPrefix(out, []byte("PASS  crossing_harbour_ferries")) || bytes.Contains(out, []byte("\x1b[")) {
				t.Errorf("terminal output:\n%s", out)
			}
		}},
		{"json", func(t *testing.T, out []byte) {
			s, err := result.Unmarshal("out", out)
			if err != nil {
				t.Fatal(err)
			}
			if d := cmp.Diff(sample.Suite(), s, cmpopts.EquateNaNs()); d != "" {
				t.Errorf("json re-render (-want +got):\n%s", d)
			}
		}},
		{"junit", func(t *testing.T, out []byte) {
			var v struct {
				Suites []struct{} `xml:"testsuite"`
			}
			if err := xml.Unmarshal(out, &v); err != nil || len(v.Suites) != 4 {
				t.Errorf("junit: %d suites, %v", len(v.Suites), err)
			}
		}},
		{"markdown", func(t *testing.T, out []byte) {
			if !bytes.HasPrefix(out, []byte("### trackgate: FAULT")) {
				t.Errorf("markdown starts %q", out[:min(60, len(out))])
			}
		}},
		{"html", func(t *testing.T, out []byte) {
			if !bytes.HasPrefix(out, []byte("<!DOCTYPE html>")) || !bytes.Contains(out, []byte("<svg")) {
				t.Error("html output is not a page with plots")
			}
		}},
	}
	for _, tt := range tests {
		t.Run(tt.format, func(t *testing.T) {
			var stdout, stderr bytes.Buffer
			// The sample suite has a tracker fault: exit 3.
			if code := run([]string{"report", in, "-format", tt.format}, &stdout, &stderr); code != exitTracker {
				t.Fatalf("exit %d, want %d; stderr:\n%s", code, exitTracker, stderr.String())
			}
			tt.check(t, stdout.Bytes())
			// -o writes the same bytes to a file and nothing to stdout.
			outFile := filepath.Join(t.TempDir(), "out")
			var so bytes.Buffer
			run([]string{"report", "--format", tt.format, "-o", outFile, in}, &so, &stderr)
			data, err := os.ReadFile(outFile)
			if err != nil || !bytes.Equal(data, stdout.Bytes()) || so.Len() != 0 {
				t.Errorf("-o: file differs from stdout rendering (err %v, stdout %d bytes)", err, so.Len())
			}
		})
	}
}

func TestReportBadInput(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.json")
	os.WriteFile(bad, []byte("{\"version\": 1,\n \"scenarios\": [\n  {\"runs\": [{\"seed\": \"x\"}]}\n ]\n}\n"), 0o644)
	newer := filepath.Join(dir, "newer.json")
	os.WriteFile(newer, []byte(`{"version": 9}`), 0o644)
	good := writeSample(t)
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"missing file", []string{"report", filepath.Join(dir, "none.json")}, "none.json"},
		{"wrong type", []string{"report", bad}, "bad.json:3:22: scenarios[0].runs[0].seed: expected an unsigned integer"},
		{"newer version", []string{"report", newer}, "written by result version 9"},
		{"unknown format", []string{"report", good, "-format", "pdf"}, `-format: expected one of terminal, json, junit, markdown, html; got "pdf"`},
		{"two files", []string{"report", good, good}, "expected one result file, got 2"},
		{"bad colour", []string{"report", good, "-colour", "sometimes"}, "-colour"},
		{"no directory", []string{"report", good, "-o", filepath.Join(dir, "no", "out.txt")}, "-o:"},
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

func TestColourWanted(t *testing.T) {
	env := func(v string) func(string) string { return func(string) string { return v } }
	var buf bytes.Buffer
	if colourWanted(&buf, env("")) {
		t.Error("colour for a buffer")
	}
	f, err := os.Create(filepath.Join(t.TempDir(), "f"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if colourWanted(f, env("")) {
		t.Error("colour for a regular file")
	}
	if tty, err := os.OpenFile("/dev/tty", os.O_WRONLY, 0); err == nil {
		defer tty.Close()
		if !colourWanted(tty, env("")) {
			t.Error("no colour for a terminal")
		}
		if colourWanted(tty, env("1")) {
			t.Error("colour for a terminal with NO_COLOR=1")
		}
	}
}

// TestExitCodes checks the exit codes report and merge take from a
// result's status: one mapping (runner.ExitCode) for every command, and a
// tracker fault beside an error exits 3.
func TestExitCodes(t *testing.T) {
	want := map[result.Status]int{result.Pass: exitPass, result.Tie: exitPass, result.Skip: exitPass,
		result.Fail: exitFail, result.Faulted: exitTracker, result.Error: exitUsage, "odd": exitUsage}
	for s, code := range want {
		if got := runner.ExitCode(s); got != code {
			t.Errorf("runner.ExitCode(%q) = %d, want %d", s, got, code)
		}
	}
	if got := runner.ExitCode(result.Worst(result.Error, result.Faulted)); got != exitTracker {
		t.Errorf("a fault beside an error exits %d, want %d", got, exitTracker)
	}
}

// TestReportMarkdownLimitTooSmall: a -limit that cannot hold the summary's
// title line is an error (exit 2) that names the smallest limit, not an
// empty file; that limit works.
func TestReportMarkdownLimitTooSmall(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "r.json")
	if err := result.Write(in, sample.Suite()); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "r.md")
	var stdout, stderr bytes.Buffer
	code := run([]string{"report", in, "-format", "markdown", "-limit", "1", "-o", out}, &stdout, &stderr)
	if code != exitUsage || !strings.Contains(stderr.String(), "cannot hold the summary's title line") {
		t.Fatalf("exit %d, stderr %q", code, stderr.String())
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a file was written: %v", err)
	}
	var need int
	msg := stderr.String()
	if _, err := fmt.Sscanf(msg[strings.LastIndex(msg, "at least ")+len("at least "):], "%d", &need); err != nil {
		t.Fatalf("no smallest limit in %q", msg)
	}
	stderr.Reset()
	code = run([]string{"report", in, "-format", "markdown", "-limit", fmt.Sprint(need), "-o", out}, &stdout, &stderr)
	data, err := os.ReadFile(out)
	if code != runner.ExitCode(sample.Suite().Status) || err != nil || len(data) == 0 || len(data) > need {
		t.Errorf("limit %d: exit %d, %d bytes written (%v); stderr %q", need, code, len(data), err, stderr.String())
	}
}
