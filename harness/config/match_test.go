package config

import (
	"fmt"
	"math/rand/v2"
	"path"
	"regexp"
	"strings"
	"testing"

	"trackgate/harness/scenario"
)

func TestShortestName(t *testing.T) {
	a64 := strings.Repeat("a", 64)
	tests := []struct {
		pattern string
		want    int // hand-derived: the shortest valid name matched, −1 for none
	}{
		{"clutter-*", 9},       // "clutter-" and one letter: a name cannot end in '-'
		{"clutter_*", -1},      // '_' is not in a name
		{"Clutter-*", -1},      // nor are capitals
		{"*", 1},               // "a"
		{"?", 1},               // "a"
		{"", -1},               // only the empty name, which is not valid
		{"-*", -1},             // a name cannot start with '-'
		{"*-", -1},             // nor end with one
		{"a--b", -1},           // nor hold two in a row
		{"a-?-b", 5},           // '?' must be a letter or digit here
		{"??*-*", 4},           // "aa-a"
		{`*[\-]*`, 3},          // "a-a"
		{`x\-y`, 3},            // an escaped '-' is a literal '-'
		{"[A-Z]*", -1},         // a class of capitals matches no name byte
		{"[^A-Z]*", 1},         // its negation matches every name byte
		{"[^a-z0-9]*", -1},     // only '-' is left, and a name cannot start with it
		{"quay-[0-9][0-9]", 7}, // "quay-00"
		{"pier/*", -1},         // no name holds '/'
		{a64, 64},              // the longest name
		{a64 + "*", 64},        // '*' may match nothing
		{a64 + "a", -1},        // one byte too long
		{a64 + "?", -1},
		{"*" + a64 + "*", 64},
	}
	for _, tt := range tests {
		if got := shortestName(tt.pattern); got != tt.want {
			t.Errorf("shortestName(%q) = %d, want %d", tt.pattern, got, tt.want)
		}
	}
}

// TestShortestNameBruteForce checks shortestName against enumeration. The
// patterns use only the bytes a, b, '-' and pattern syntax, so every other
// letter and digit behaves like c: names over {a, b, c, -} up to six bytes
// stand for all names that short. The name rule is the regular expression
// of the scenario reader, and matching is path.Match itself.
func TestShortestNameBruteForce(t *testing.T) {
	nameRE := regexp.MustCompile(`^[a-z0-9]+(-[a-z0-9]+)*$`)
	var names []string
	layer := []string{""}
	for n := 1; n <= 6; n++ {
		var next []string
		for _, p := range layer {
			for _, c := range "abc-" {
				next = append(next, p+string(c))
			}
		}
		for _, s := range next {
			if nameRE.MatchString(s) {
				names = append(names, s) // by length, shortest first
			}
		}
		layer = next
	}
	pieces := []string{"a", "b", "-", "*", "?", "[ab]", "[^a]", `[a\-]`, `\-`, `[^\-]`}
	rng := rand.New(rand.NewPCG(2026, 12))
	for range 300 {
		var b strings.Builder
		for range 1 + rng.IntN(5) {
			b.WriteString(pieces[rng.IntN(len(pieces))])
		}
		p := b.String()
		if _, err := path.Match(p, ""); err != nil {
			t.Fatalf("test pattern %q is malformed: %v", p, err)
		}
		brute := -1
		for _, s := range names {
			if ok, _ := path.Match(p, s); ok {
				brute = len(s)
				break
			}
		}
		got := shortestName(p)
		if brute >= 0 && got != brute || brute < 0 && got >= 0 && got <= 6 {
			t.Errorf("shortestName(%q) = %d, enumeration of names up to 6 bytes gives %d", p, got, brute)
		}
	}
}

// TestNameRuleAgrees checks the restated name rule against the scenario
// reader: a literal name is a pattern that matches a valid name exactly
// when the reader accepts it.
func TestNameRuleAgrees(t *testing.T) {
	const body = `format: 1
name: "%s"
description: A buoy drifting off the breakwater.
seed: 11
steps: 3
interval: 1.0
runs: 1
motion:
  kind: constant-velocity
  axes: 1
  accel-noise: 0.01
sensor:
  noise: [0.5]
detection-probability: 0.9
objects:
  - id: buoy
    prior: {mean: [5, 0.1], cov: [1, 0.01]}
`
	for _, name := range []string{"harbour-fog", "q", "pier-7", "7", strings.Repeat("b", 64), strings.Repeat("b", 65),
		"Harbour", "harbour_fog", "-pier", "pier-", "pier--7", "pier.7"} {
		_, err := scenario.Parse("buoy.yaml", fmt.Appendf(nil, body, name))
		if err != nil && !strings.Contains(err.Error(), "name:") {
			t.Fatalf("scenario %q fails for another reason: %v", name, err)
		}
		accepted := err == nil
		if ours := shortestName(name) == len(name); ours != accepted {
			t.Errorf("name %q: config's rule says %v, the scenario reader %v (%v)", name, ours, accepted, err)
		}
	}
}

func TestUnusedOverrides(t *testing.T) {
	c, err := Parse("quay.yaml", []byte(`per_scenario:
  - match: "harbour-*"
    tie_margin: 0.1
  - match: "*-night"
    tie_margin: 0.2
  - {match: "pier-[0-9]", tie_margin: 0.3}
`))
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		names []string
		want  []string
	}{
		{[]string{"harbour-calm", "breakwater-night", "pier-4"}, nil},
		{[]string{"harbour-fog-night"}, []string{
			`quay.yaml:6:13: per_scenario[2].match: pattern "pier-[0-9]" matches none of the 1 scenarios loaded; the override has no effect`}},
		{nil, []string{
			`quay.yaml:2:12: per_scenario[0].match: pattern "harbour-*" matches none of the 0 scenarios loaded; the override has no effect`,
			`quay.yaml:4:12: per_scenario[1].match: pattern "*-night" matches none of the 0 scenarios loaded; the override has no effect`,
			`quay.yaml:6:13: per_scenario[2].match: pattern "pier-[0-9]" matches none of the 0 scenarios loaded; the override has no effect`}},
		{[]string{"pier-12", "harbour"}, []string{
			`quay.yaml:2:12: per_scenario[0].match: pattern "harbour-*" matches none of the 2 scenarios loaded; the override has no effect`,
			`quay.yaml:4:12: per_scenario[1].match: pattern "*-night" matches none of the 2 scenarios loaded; the override has no effect`,
			`quay.yaml:6:13: per_scenario[2].match: pattern "pier-[0-9]" matches none of the 2 scenarios loaded; the override has no effect`}},
	}
	for _, tt := range tests {
		var got []string
		for _, e := range c.UnusedOverrides(tt.names) {
			got = append(got, e.Error())
		}
		if strings.Join(got, "\n") != strings.Join(tt.want, "\n") {
			t.Errorf("UnusedOverrides(%q) =\n%s\nwant\n%s", tt.names, strings.Join(got, "\n"), strings.Join(tt.want, "\n"))
		}
	}
	// An override built in code has no position.
	code := Config{PerScenario: []Override{{Match: "quay-*"}}}
	if u := code.UnusedOverrides([]string{"pier-1"}); len(u) != 1 || u[0].Error() != `: per_scenario[0].match: pattern "quay-*" matches none of the 1 scenarios loaded; the override has no effect` {
		t.Errorf("code-built UnusedOverrides = %v", u)
	}
}

func BenchmarkShortestName(b *testing.B) {
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if shortestName("harbour-[a-f]*-night-??") != 18 { // "harbour-a-night-aa"
			b.Fatal("wrong length")
		}
	}
}
