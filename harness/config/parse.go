package config

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"path"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"time"

	"go.yaml.in/yaml/v3"

	"trackgate/harness/compare"
	"trackgate/harness/golden"
	"trackgate/harness/internal/yamlpos"
)

// walker checks the YAML tree, collecting errors.
type walker struct{ yamlpos.Collector }

// The shared path and message helpers, under the names the walker uses.
var (
	join     = yamlpos.Join
	index    = yamlpos.Index
	describe = yamlpos.DescribeText
)

// mapping returns the values of a mapping node by key, reporting unknown
// keys (with a suggestion), duplicate keys and non-string keys.
func (w *walker) mapping(n *yaml.Node, p string, known ...string) (map[string]*yaml.Node, bool) {
	if n.Kind != yaml.MappingNode {
		w.ErrAt(n, p, "expected a mapping with keys %s, got %s", strings.Join(known, ", "), describe(n))
		return nil, false
	}
	out := map[string]*yaml.Node{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if k.Kind != yaml.ScalarNode || k.ShortTag() != "!!str" {
			w.ErrAt(k, p, "expected a plain key, got %s", describe(k))
			continue
		}
		if _, dup := out[k.Value]; dup {
			w.ErrAt(k, join(p, k.Value), "key given twice")
			continue
		}
		ok := false
		for _, kn := range known {
			ok = ok || kn == k.Value
		}
		if !ok {
			msg := fmt.Sprintf("unknown key %q; expected one of %s", k.Value, strings.Join(known, ", "))
			if s := yamlpos.Suggest(k.Value, known); s != "" {
				msg = fmt.Sprintf("unknown key %q; did you mean %q?", k.Value, s)
			}
			w.ErrAt(k, p, "%s", msg)
			continue
		}
		out[k.Value] = v
	}
	return out, true
}

func (w *walker) scalar(n *yaml.Node, p, want string, tags ...string) bool {
	if n.Kind == yaml.ScalarNode {
		for _, t := range tags {
			if n.ShortTag() == t {
				return true
			}
		}
	}
	w.ErrAt(n, p, "expected %s, got %s", want, describe(n))
	return false
}

func (w *walker) str(n *yaml.Node, p, want string) (string, bool) {
	if !w.scalar(n, p, want, "!!str") {
		return "", false
	}
	return n.Value, true
}

func (w *walker) nonEmpty(n *yaml.Node, p, want string) (string, bool) {
	s, ok := w.str(n, p, want)
	if ok && s == "" {
		w.ErrAt(n, p, "expected %s, got an empty string", want)
		return "", false
	}
	return s, ok
}

func (w *walker) float(n *yaml.Node, p, want string, lo, hi float64, loOpen, hiOpen bool) (float64, bool) {
	if !w.scalar(n, p, want, "!!int", "!!float") {
		return 0, false
	}
	v, err := strconv.ParseFloat(strings.ReplaceAll(n.Value, "_", ""), 64)
	if err != nil {
		// YAML 1.1 spellings the decoder tags !!float: .inf, .nan.
		switch strings.ToLower(n.Value) {
		case ".inf", "+.inf":
			v = math.Inf(1)
		case "-.inf":
			v = math.Inf(-1)
		case ".nan":
			v = math.NaN()
		default:
			w.ErrAt(n, p, "expected %s, got %s", want, describe(n))
			return 0, false
		}
	}
	if math.IsNaN(v) || v < lo || v > hi || (loOpen && v == lo) || (hiOpen && v == hi) {
		w.ErrAt(n, p, "expected %s, got %s", want, n.Value)
		return 0, false
	}
	return v, true
}

func (w *walker) boolean(n *yaml.Node, p string) (bool, bool) {
	if !w.scalar(n, p, "true or false", "!!bool") {
		return false, false
	}
	b, err := strconv.ParseBool(strings.ToLower(n.Value))
	if err != nil {
		w.ErrAt(n, p, "expected true or false, got %s", describe(n))
		return false, false
	}
	return b, true
}

func (w *walker) duration(n *yaml.Node, p string) (time.Duration, bool) {
	const want = `a positive duration such as "2s" or "1m30s"`
	if !w.scalar(n, p, want, "!!str") {
		return 0, false
	}
	d, err := time.ParseDuration(n.Value)
	if err != nil || d <= 0 {
		w.ErrAt(n, p, "expected %s, got %s", want, describe(n))
		return 0, false
	}
	return d, true
}

func (w *walker) strList(n *yaml.Node, p, want string) ([]string, bool) {
	if n.Kind != yaml.SequenceNode {
		w.ErrAt(n, p, "expected a list of %s, got %s", want, describe(n))
		return nil, false
	}
	out := make([]string, 0, len(n.Content))
	ok := true
	for i, e := range n.Content {
		s, good := w.nonEmpty(e, index(p, i), want)
		ok = ok && good
		out = append(out, s)
	}
	return out, ok
}

// reportAliases reports every alias and merge key once, without expanding
// them, so the work stays linear in the text.
func (w *walker) reportAliases(n *yaml.Node, p string) {
	switch n.Kind {
	case yaml.AliasNode:
		w.ErrAt(n, p, "YAML aliases (*%s) are not supported; write the value out", n.Value)
	case yaml.MappingNode:
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if k.Kind == yaml.ScalarNode && k.Value == "<<" && k.ShortTag() == "!!merge" {
				w.ErrAt(k, p, "YAML merge keys (<<) are not supported; write the keys out")
				continue
			}
			w.reportAliases(v, join(p, k.Value))
		}
	case yaml.SequenceNode:
		for i, e := range n.Content {
			w.reportAliases(e, index(p, i))
		}
	}
}

var lineRE = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// Parse reads a project file's content; name is used in errors and as
// Config.File. Errors are an ErrorList. Empty content gives the defaults.
func Parse(name string, data []byte) (Config, error) {
	w := &walker{yamlpos.Collector{File: name}}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	err := dec.Decode(&doc)
	if err == io.EOF {
		c := Default()
		c.File = name
		return c, nil
	}
	if err != nil {
		e := &Error{File: name, Msg: "invalid YAML: " + strings.TrimPrefix(err.Error(), "yaml: ")}
		if m := lineRE.FindStringSubmatch(err.Error()); m != nil {
			e.Line, _ = strconv.Atoi(m[1])
			e.Msg = "invalid YAML: " + m[2]
		}
		return Config{}, ErrorList{e}
	}
	var next yaml.Node
	if err := dec.Decode(&next); err != io.EOF {
		e := &Error{File: name, Line: next.Line, Col: next.Column, Msg: "a second YAML document; expected one"}
		if err != nil {
			e.Msg = "invalid YAML after the first document: " + strings.TrimPrefix(err.Error(), "yaml: ")
		}
		return Config{}, ErrorList{e}
	}
	c := Default()
	c.File = name
	if len(doc.Content) == 1 {
		root := doc.Content[0]
		if !(root.Kind == yaml.ScalarNode && root.ShortTag() == "!!null") {
			w.reportAliases(root, "")
			if len(w.Errs) == 0 {
				w.config(root, &c)
			}
		}
	}
	if len(w.Errs) > 0 {
		return Config{}, w.Errs.Sort()
	}
	return c, nil
}

func (w *walker) config(n *yaml.Node, c *Config) {
	m, ok := w.mapping(n, "", "format", "tracker", "scenarios", "golden_dir", "tolerance", "tie_margin", "per_scenario", "gates", "metrics", "golden_runs")
	if !ok {
		return
	}
	if v := m["format"]; v != nil {
		if f, ok := w.float(v, "format", "format version 1", 1, 1, false, false); ok && f != FormatVersion {
			w.ErrAt(v, "format", "expected format version 1")
		}
	}
	if v := m["tracker"]; v != nil {
		w.tracker(v, &c.Tracker)
	}
	if v := m["scenarios"]; v != nil {
		if globs, ok := w.strList(v, "scenarios", "a file glob"); ok {
			for i, g := range globs {
				if _, err := filepath.Match(g, ""); err != nil {
					w.ErrAt(v.Content[i], index("scenarios", i), "expected a file glob, got %q: %v", g, err)
				}
			}
			c.Scenarios = globs
		}
	}
	if v := m["golden_dir"]; v != nil {
		if s, ok := w.nonEmpty(v, "golden_dir", "a folder path"); ok {
			c.GoldenDir = s
		}
	}
	if v := m["tolerance"]; v != nil {
		w.tolerance(v, "tolerance", &c.Tolerance)
	}
	if v := m["tie_margin"]; v != nil {
		c.TieMargin, _ = w.float(v, "tie_margin", "a finite cost margin ≥ 0", 0, math.MaxFloat64, false, false)
	}
	if v := m["per_scenario"]; v != nil {
		c.PerScenario = w.overrides(v, "per_scenario")
	}
	if v := m["gates"]; v != nil {
		c.Gates = w.gates(v, "gates")
	}
	if v := m["metrics"]; v != nil {
		if mm, ok := w.mapping(v, "metrics", "order", "cutoff"); ok {
			if x := mm["order"]; x != nil {
				c.Scoring.Order, _ = w.float(x, "metrics.order", "a GOSPA order ≥ 1", 1, 1e6, false, false)
			}
			if x := mm["cutoff"]; x != nil {
				c.Scoring.Cutoff, _ = w.float(x, "metrics.cutoff", "a cut-off in metres > 0", 0, 1e150, true, false)
			}
		}
	}
	if v := m["golden_runs"]; v != nil {
		if n, ok := w.goldenRuns(v, "golden_runs"); ok {
			c.GoldenRuns = n
		}
	}
}

// goldenRuns reads a golden run count: a whole number from 1 to 1000.
func (w *walker) goldenRuns(n *yaml.Node, p string) (int, bool) {
	const want = "a whole number of runs from 1 to 1000"
	if !w.scalar(n, p, want, "!!int") {
		return 0, false
	}
	v, err := strconv.Atoi(strings.ReplaceAll(n.Value, "_", ""))
	if err != nil || v < 1 || v > 1000 {
		w.ErrAt(n, p, "expected %s, got %s", want, n.Value)
		return 0, false
	}
	return v, true
}

func (w *walker) tracker(n *yaml.Node, t *Tracker) {
	const p = "tracker"
	m, ok := w.mapping(n, p, "name", "command", "env", "dir", "timeouts", "batch")
	if !ok {
		return
	}
	if v := m["name"]; v != nil {
		if s, ok := w.nonEmpty(v, join(p, "name"), "a tracker name"); ok {
			if !golden.ValidName(s) {
				w.ErrAt(v, join(p, "name"), "expected a name of letters, digits, '.', '_' and '-' not starting with '.' or '-' (it names a golden folder), got %q", s)
			} else {
				t.Name = s
			}
		}
	}
	if v := m["command"]; v != nil {
		if argv, ok := w.strList(v, join(p, "command"), "a command-line argument"); ok {
			if len(argv) == 0 {
				w.ErrAt(v, join(p, "command"), "expected the program and its arguments, got an empty list")
			}
			t.Command = argv
		}
	}
	if v := m["env"]; v != nil {
		if v.Kind != yaml.MappingNode {
			w.ErrAt(v, join(p, "env"), "expected a mapping of variable names to values, got %s", describe(v))
		} else {
			t.Env = map[string]string{}
			for i := 0; i+1 < len(v.Content); i += 2 {
				k, val := v.Content[i], v.Content[i+1]
				kp := join(join(p, "env"), k.Value)
				name, ok := w.str(k, join(p, "env"), "a variable name")
				if !ok {
					continue
				}
				if name == "" || strings.ContainsAny(name, "=\x00") {
					w.ErrAt(k, kp, "expected a variable name without '=', got %q", name)
					continue
				}
				if _, dup := t.Env[name]; dup {
					w.ErrAt(k, kp, "variable given twice")
					continue
				}
				// Numbers and booleans are taken as written.
				if w.scalar(val, kp, "a value", "!!str", "!!int", "!!float", "!!bool") {
					if strings.ContainsRune(val.Value, 0) {
						w.ErrAt(val, kp, "expected a value without NUL bytes")
						continue
					}
					t.Env[name] = val.Value
				}
			}
		}
	}
	if v := m["dir"]; v != nil {
		if s, ok := w.nonEmpty(v, join(p, "dir"), "a folder path"); ok {
			t.Dir = s
		}
	}
	if v := m["timeouts"]; v != nil {
		tp := join(p, "timeouts")
		if tm, ok := w.mapping(v, tp, "start", "step", "run"); ok {
			for key, dst := range map[string]*time.Duration{"start": &t.StartTimeout, "step": &t.StepTimeout, "run": &t.RunTimeout} {
				if x := tm[key]; x != nil {
					if d, ok := w.duration(x, join(tp, key)); ok {
						*dst = d
					}
				}
			}
		}
	}
	if v := m["batch"]; v != nil {
		t.Batch, _ = w.boolean(v, join(p, "batch"))
	}
}

func (w *walker) tolerance(n *yaml.Node, p string, t *Tolerance) {
	m, ok := w.mapping(n, p, "profile", "mean", "cov", "metric")
	if !ok {
		return
	}
	if v := m["profile"]; v != nil {
		if s, ok := w.str(v, join(p, "profile"), "a profile name"); ok {
			if _, found := compare.Lookup(s); !found {
				w.ErrAt(v, join(p, "profile"), "expected one of %s, got %q", strings.Join(compare.ProfileNames(), ", "), s)
			} else {
				t.Profile = s
			}
		}
	}
	for key, dst := range map[string]*RulePatch{"mean": &t.Mean, "cov": &t.Cov, "metric": &t.Metric} {
		if v := m[key]; v != nil {
			w.rule(v, join(p, key), dst)
		}
	}
}

func (w *walker) rule(n *yaml.Node, p string, r *RulePatch) {
	m, ok := w.mapping(n, p, "abs", "rel", "ulps")
	if !ok {
		return
	}
	for key, dst := range map[string]**float64{"abs": &r.Abs, "rel": &r.Rel} {
		if v := m[key]; v != nil {
			if f, ok := w.float(v, join(p, key), "a finite tolerance ≥ 0", 0, math.MaxFloat64, false, false); ok {
				*dst = &f
			}
		}
	}
	if v := m["ulps"]; v != nil {
		if w.scalar(v, join(p, "ulps"), "a whole number of ULPs ≥ 0", "!!int") {
			u, err := strconv.ParseUint(strings.ReplaceAll(v.Value, "_", ""), 0, 64)
			if err != nil {
				w.ErrAt(v, join(p, "ulps"), "expected a whole number of ULPs ≥ 0, got %s", describe(v))
			} else {
				r.ULPs = &u
			}
		}
	}
}

func (w *walker) overrides(n *yaml.Node, p string) []Override {
	if n.Kind != yaml.SequenceNode {
		w.ErrAt(n, p, "expected a list of overrides, got %s", describe(n))
		return nil
	}
	var out []Override
	for i, e := range n.Content {
		ip := index(p, i)
		m, ok := w.mapping(e, ip, "match", "tolerance", "tie_margin", "golden_runs")
		if !ok {
			continue
		}
		var o Override
		if v := m["match"]; v == nil {
			w.ErrAt(e, ip, `missing key "match" (a pattern on scenario names)`)
		} else if s, ok := w.nonEmpty(v, join(ip, "match"), "a pattern on scenario names"); ok {
			if _, err := path.Match(s, ""); err != nil {
				w.ErrAt(v, join(ip, "match"), "expected a pattern on scenario names, got %q: %v", s, err)
			} else if shortestName(s) < 0 {
				w.ErrAt(v, join(ip, "match"), "pattern %q can never match a scenario name (%s); expected a pattern such as \"clutter-*\"", s, nameRule)
			}
			o.Match, o.Line, o.Col = s, v.Line, v.Column
		}
		if v := m["tolerance"]; v != nil {
			o.Tolerance = &Tolerance{}
			w.tolerance(v, join(ip, "tolerance"), o.Tolerance)
		}
		if v := m["tie_margin"]; v != nil {
			if f, ok := w.float(v, join(ip, "tie_margin"), "a finite cost margin ≥ 0", 0, math.MaxFloat64, false, false); ok {
				o.TieMargin = &f
			}
		}
		if v := m["golden_runs"]; v != nil {
			if n, ok := w.goldenRuns(v, join(ip, "golden_runs")); ok {
				o.GoldenRuns = &n
			}
		}
		if m["tolerance"] == nil && m["tie_margin"] == nil && m["golden_runs"] == nil {
			w.ErrAt(e, ip, `an override needs "tolerance", "tie_margin" or "golden_runs"`)
		}
		out = append(out, o)
	}
	return out
}

func (w *walker) gates(n *yaml.Node, p string) []Gate {
	if n.Kind != yaml.SequenceNode {
		w.ErrAt(n, p, "expected a list of gates, got %s", describe(n))
		return nil
	}
	var out []Gate
	for i, e := range n.Content {
		ip := index(p, i)
		m, ok := w.mapping(e, ip, "metric", "worse", "limit", "paired")
		if !ok {
			continue
		}
		var g Gate
		if v := m["metric"]; v == nil {
			w.ErrAt(e, ip, `missing key "metric" (a metric name)`)
		} else if s, ok := w.nonEmpty(v, join(ip, "metric"), "a metric name"); ok {
			g.Metric = s
		}
		if v := m["worse"]; v != nil {
			if s, ok := w.str(v, join(ip, "worse"), `"higher" or "lower"`); ok {
				switch s {
				case "higher":
				case "lower":
					g.LowerIsWorse = true
				default:
					w.ErrAt(v, join(ip, "worse"), `expected "higher" or "lower", got %q`, s)
				}
			}
		}
		if v := m["limit"]; v != nil {
			if f, ok := w.float(v, join(ip, "limit"), "a finite limit", -math.MaxFloat64, math.MaxFloat64, false, false); ok {
				g.Limit = &f
			}
		}
		if v := m["paired"]; v != nil {
			pp := join(ip, "paired")
			if pm, ok := w.mapping(v, pp, "confidence", "min_effect"); ok {
				var pr Paired
				if c := pm["confidence"]; c == nil {
					w.ErrAt(v, pp, `missing key "confidence" (a level in (0, 1))`)
				} else {
					pr.Confidence, _ = w.float(c, join(pp, "confidence"), "a confidence level in (0, 1)", 0, 1, true, true)
				}
				if me := pm["min_effect"]; me != nil {
					pr.MinEffect, _ = w.float(me, join(pp, "min_effect"), "a finite effect size ≥ 0", 0, math.MaxFloat64, false, false)
				}
				g.Paired = &pr
			}
		}
		if m["limit"] == nil && m["paired"] == nil {
			w.ErrAt(e, ip, `a gate needs "limit", "paired" or both`)
		}
		out = append(out, g)
	}
	return out
}
