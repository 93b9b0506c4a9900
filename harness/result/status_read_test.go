package result_test

import (
	"os"
	"strings"
	"testing"

	"trackgate/harness/result"
)

// withStatus returns testdata/small.json with the n-th (from 0)
// `"status": "fail"` member replaced by the status st.
func withStatus(t *testing.T, n int, st string) []byte {
	t.Helper()
	data, err := os.ReadFile("testdata/small.json")
	if err != nil {
		t.Fatal(err)
	}
	parts := strings.SplitN(string(data), `"status": "fail"`, n+2)
	if len(parts) < n+2 {
		t.Fatalf("testdata/small.json has fewer than %d fail statuses", n+1)
	}
	head := strings.Join(parts[:n+1], `"status": "fail"`)
	return []byte(head + `"status": "` + st + `"` + parts[n+1])
}

// TestReadRejectsUnknownStatus: a status outside the six known ones, at
// any level, is rejected as the file is read, naming the file, line,
// column and member; otherwise it would rank as "error" and a merged
// suite would carry the misspelt word as its status.
func TestReadRejectsUnknownStatus(t *testing.T) {
	const known = `expected one of "pass", "tie", "skip", "fail", "error", "fault", got `
	tests := []struct {
		name  string
		level int
		st    string
		want  string
	}{
		{"suite", 0, "passs", `f.json:12:13: status: ` + known + `"passs"`},
		{"scenario", 1, "Pass", `f.json:22:17: scenarios[0].status: ` + known + `"Pass"`},
		{"run", 2, "fail ", `f.json:27:21: scenarios[0].runs[0].status: ` + known + `"fail "`},
		{"check", 3, "faulted", `f.json:31:25: scenarios[0].runs[0].checks[0].status: ` + known + `"faulted"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := result.Unmarshal("f.json", withStatus(t, tt.level, tt.st))
			if err == nil || err.Error() != tt.want {
				t.Errorf("error = %v\nwant    %s", err, tt.want)
			}
		})
	}
}

// TestReadRejectsUnknownGateStatus covers the status of a scenario's gate.
func TestReadRejectsUnknownGateStatus(t *testing.T) {
	data, err := os.ReadFile("testdata/small.json")
	if err != nil {
		t.Fatal(err)
	}
	gate := `"gates": [{"name": "gospa limit", "status": "pass", "estimate": 1, "low": 1, "high": 1, "threshold": 2, "message": "m"},
        {"name": "gospa paired", "status": "ok", "estimate": 1, "low": 0.5, "high": "Infinity", "threshold": 0, "message": "m"}],
      "runs": [`
	bad := strings.Replace(string(data), `"runs": [`, gate, 1)
	_, err = result.Unmarshal("f.json", []byte(bad))
	want := `f.json:24:44: scenarios[0].gates[1].status: expected one of "pass", "tie", "skip", "fail", "error", "fault", got "ok"`
	if err == nil || err.Error() != want {
		t.Errorf("error = %v\nwant    %s", err, want)
	}
	good := strings.Replace(bad, `"status": "ok"`, `"status": "fail"`, 1)
	s, err := result.Unmarshal("f.json", []byte(good))
	if err != nil {
		t.Fatal(err)
	}
	if g := s.Scenarios[0].Gates; len(g) != 2 || g[1].Status != result.Fail {
		t.Errorf("gates = %+v", g)
	}
}

// TestReadAcceptsKnownStatuses: each of the six statuses reads back at
// every level.
func TestReadAcceptsKnownStatuses(t *testing.T) {
	for _, st := range []result.Status{result.Pass, result.Tie, result.Skip, result.Fail, result.Error, result.Faulted} {
		for level := range 4 {
			s, err := result.Unmarshal("f.json", withStatus(t, level, string(st)))
			if err != nil {
				t.Fatalf("status %q at level %d: %v", st, level, err)
			}
			got := []result.Status{s.Status, s.Scenarios[0].Status, s.Scenarios[0].Runs[0].Status, s.Scenarios[0].Runs[0].Checks[0].Status}
			if got[level] != st {
				t.Errorf("status %q at level %d read as %q", st, level, got[level])
			}
		}
	}
}
