package yamlpos

import (
	"errors"
	"fmt"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// node parses src and returns its first value node.
func node(t *testing.T, src string) *yaml.Node {
	t.Helper()
	var doc yaml.Node
	if err := yaml.Unmarshal([]byte(src), &doc); err != nil {
		t.Fatalf("yaml %q: %v", src, err)
	}
	return doc.Content[0]
}

func TestErrorFormat(t *testing.T) {
	tests := []struct {
		e    Error
		want string
	}{
		{Error{File: "quay.yaml", Line: 4, Col: 7, Path: "objects[1].prior", Msg: "expected a mapping"}, "quay.yaml:4:7: objects[1].prior: expected a mapping"},
		{Error{File: "quay.yaml", Line: 4, Path: "objects", Msg: "bad"}, "quay.yaml:4: objects: bad"},
		{Error{File: "quay.yaml", Col: 9, Msg: "bad"}, "quay.yaml: bad"},
		{Error{File: "quay.yaml", Msg: "file is empty"}, "quay.yaml: file is empty"},
	}
	for _, tt := range tests {
		if got := tt.e.Error(); got != tt.want {
			t.Errorf("Error() = %q, want %q", got, tt.want)
		}
	}
}

func TestAt(t *testing.T) {
	n := node(t, "sensor:\n  rate: fast\n")
	v := n.Content[1].Content[1]
	e := At("pier.yaml", v, "sensor.rate", "expected %s, got %q", "a number", v.Value)
	if want := `pier.yaml:2:9: sensor.rate: expected a number, got "fast"`; e.Error() != want {
		t.Errorf("At = %q, want %q", e.Error(), want)
	}
	if e := At("pier.yaml", nil, "", "no document"); e.Line != 0 || e.Col != 0 || e.Error() != "pier.yaml: no document" {
		t.Errorf("At(nil) = %+v", e)
	}
}

func TestListSortCompact(t *testing.T) {
	a := &Error{File: "f", Line: 3, Col: 2, Msg: "a"}
	b := &Error{File: "f", Line: 1, Col: 5, Msg: "b"}
	c := &Error{File: "f", Line: 3, Col: 2, Msg: "c"}
	d := &Error{File: "f", Line: 1, Col: 1, Msg: "d"}
	dup := *a
	l := ErrorList{a, b, c, &dup, d}.Sort()
	var msgs []string
	for _, e := range l {
		msgs = append(msgs, e.Msg)
	}
	// Stable: a, c, a-copy keep their order at 3:2.
	if got, want := strings.Join(msgs, ""), "dbaca"; got != want {
		t.Errorf("Sort order %q, want %q", got, want)
	}
	if got := len(l.Compact()); got != 5 {
		t.Errorf("Compact dropped a non-adjacent duplicate: %d left, want 5", got)
	}
	l2 := ErrorList{a, &dup, c}.Sort().Compact()
	if len(l2) != 2 || l2[0] != a || l2[1] != c {
		t.Errorf("Compact = %v, want [a c]", l2)
	}
	if got, want := l2.Error(), "f:3:2: a\nf:3:2: c"; got != want {
		t.Errorf("ErrorList.Error() = %q, want %q", got, want)
	}
	var target ErrorList
	if err := fmt.Errorf("loading: %w", l2); !errors.As(err, &target) || len(target) != 2 {
		t.Errorf("errors.As did not find the list")
	}
}

func TestPaths(t *testing.T) {
	if got := Join("", "tracker"); got != "tracker" {
		t.Errorf("Join = %q", got)
	}
	if got := Index(Join(Join("", "gates"), "x"), 12); got != "gates.x[12]" {
		t.Errorf("Index = %q", got)
	}
}

func TestDescribe(t *testing.T) {
	long := strings.Repeat("harbour", 7) // 49 bytes
	tests := []struct {
		src, rich, text string
	}{
		{"{a: 1}", "a mapping", "a mapping"},
		{"[1, 2]", "a list", "a list"},
		{"~", "nothing", "nothing (null)"},
		{"3", "the number 3", `"3"`},
		{"-2.5e3", "the number -2.5e3", `"-2.5e3"`},
		{"true", "true", `"true"`},
		{"quay", `"quay"`, `"quay"`},
		{long, `"` + long[:37] + `..."`, `"` + long[:40] + `…"`},
		{"!!binary aGFyYm91cg==", "a value tagged !!binary", `"aGFyYm91cg=="`},
	}
	for _, tt := range tests {
		n := node(t, tt.src)
		if got := Describe(n); got != tt.rich {
			t.Errorf("Describe(%s) = %q, want %q", tt.src, got, tt.rich)
		}
		if got := DescribeText(n); got != tt.text {
			t.Errorf("DescribeText(%s) = %q, want %q", tt.src, got, tt.text)
		}
	}
	alias := node(t, "[&x 1, *x]").Content[1]
	if Describe(alias) != "an alias" || DescribeText(alias) != "an alias" {
		t.Errorf("alias described as %q / %q", Describe(alias), DescribeText(alias))
	}
}

// levenshtein is the distance by its recursive definition (Levenshtein
// 1966; the recurrence d(i,j) = min(d(i−1,j)+1, d(i,j−1)+1, d(i−1,j−1)+[aᵢ≠bⱼ])
// of Wagner and Fischer, "The string-to-string correction problem", J. ACM
// 21(1), 1974, §2), memoised, independent of the row-by-row code.
func levenshtein(a, b string) int {
	memo := map[[2]int]int{}
	var d func(i, j int) int
	d = func(i, j int) int {
		if i == 0 {
			return j
		}
		if j == 0 {
			return i
		}
		k := [2]int{i, j}
		if v, ok := memo[k]; ok {
			return v
		}
		sub := d(i-1, j-1)
		if a[i-1] != b[j-1] {
			sub++
		}
		v := min(d(i-1, j)+1, d(i, j-1)+1, sub)
		memo[k] = v
		return v
	}
	return d(len(a), len(b))
}

func TestEditDistance(t *testing.T) {
	tests := []struct {
		a, b string
		want int
	}{
		// Hand-counted: insert l; s→l and o→u; u→a and delete o.
		{"breakwater", "breakwalter", 1},
		{"sonar", "lunar", 2},
		{"buoy", "bay", 2},
		{"", "", 0},
		{"", "gates", 5},
		{"golden_dr", "golden_dir", 1},
		{"stpe", "step", 2}, // a transposition is two edits in Levenshtein's distance
		{"tracker", "tracker", 0},
	}
	for _, tt := range tests {
		if got := EditDistance(tt.a, tt.b); got != tt.want {
			t.Errorf("EditDistance(%q, %q) = %d, want %d", tt.a, tt.b, got, tt.want)
		}
		if got := levenshtein(tt.a, tt.b); got != tt.want {
			t.Errorf("levenshtein(%q, %q) = %d, want %d", tt.a, tt.b, got, tt.want)
		}
	}
}

func FuzzEditDistance(f *testing.F) {
	f.Add("tolerance", "tolerence")
	f.Add("per_scenario", "")
	f.Fuzz(func(t *testing.T, a, b string) {
		if len(a) > 40 || len(b) > 40 {
			t.Skip()
		}
		d := EditDistance(a, b)
		if want := levenshtein(a, b); d != want {
			t.Fatalf("EditDistance(%q, %q) = %d, recursive definition %d", a, b, d, want)
		}
		if d != EditDistance(b, a) {
			t.Fatalf("not symmetric for %q, %q", a, b)
		}
	})
}

func TestSuggest(t *testing.T) {
	known := []string{"format", "tracker", "scenarios", "golden_dir", "tolerance"}
	tests := []struct{ key, want string }{
		{"golden_dr", "golden_dir"},
		{"trakcer", "tracker"},
		{"tolerence", "tolerance"},
		{"colour", ""}, // nothing within two edits
		{"formats", "format"},
		{"fromat", "format"},
	}
	for _, tt := range tests {
		if got := Suggest(tt.key, known); got != tt.want {
			t.Errorf("Suggest(%q) = %q, want %q", tt.key, got, tt.want)
		}
	}
	// Ties go to the earlier entry.
	if got := Suggest("ab", []string{"ax", "xb"}); got != "ax" {
		t.Errorf("tie went to %q, want ax", got)
	}
}

func BenchmarkSuggest(b *testing.B) {
	known := []string{"format", "tracker", "scenarios", "golden_dir", "tolerance", "tie_margin", "per_scenario", "gates"}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if Suggest("tolerence", known) != "tolerance" {
			b.Fatal("wrong suggestion")
		}
	}
}

func TestCollector(t *testing.T) {
	n := node(t, "golden_dir: [blessed]\n")
	c := Collector{File: "quay.yaml"}
	c.ErrAt(n.Content[1], "golden_dir", "expected a folder path, got %s", DescribeText(n.Content[1]))
	c.ErrAt(nil, "", "too many errors")
	want := "quay.yaml:1:13: golden_dir: expected a folder path, got a list\nquay.yaml: too many errors"
	if got := c.Errs.Error(); got != want {
		t.Errorf("Errs = %q, want %q", got, want)
	}
}
