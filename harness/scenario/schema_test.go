package scenario

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/santhosh-tekuri/jsonschema/v6"
	"go.yaml.in/yaml/v3"
)

// The JSON Schema in scenarios/schema.json is checked with an independent,
// conforming draft 2020-12 validator (github.com/santhosh-tekuri/jsonschema
// v6.0.3, which passes the JSON-Schema-Test-Suite), so the schema is tested
// as editors will use it rather than by code of our own.

const schemaPath = "../../scenarios/schema.json"

func compileSchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	f, err := os.Open(schemaPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	doc, err := jsonschema.UnmarshalJSON(f)
	if err != nil {
		t.Fatalf("%s: %v", schemaPath, err)
	}
	c := jsonschema.NewCompiler()
	c.DefaultDraft(jsonschema.Draft2020)
	if err := c.AddResource("schema.json", doc); err != nil {
		t.Fatal(err)
	}
	// Compile also validates the schema against the draft 2020-12
	// metaschema.
	s, err := c.Compile("schema.json")
	if err != nil {
		t.Fatalf("compile %s: %v", schemaPath, err)
	}
	return s
}

// yamlValue converts a YAML file into the JSON data model an editor's
// schema validation sees. Non-finite floats, which JSON cannot hold, become
// strings so that a number schema rejects them.
func yamlValue(t *testing.T, path string) any {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return nodeValue(t, doc.Content[0])
}

func nodeValue(t *testing.T, n *yaml.Node) any {
	switch n.Kind {
	case yaml.MappingNode:
		m := map[string]any{}
		for i := 0; i+1 < len(n.Content); i += 2 {
			m[n.Content[i].Value] = nodeValue(t, n.Content[i+1])
		}
		return m
	case yaml.SequenceNode:
		out := make([]any, len(n.Content))
		for i, e := range n.Content {
			out[i] = nodeValue(t, e)
		}
		return out
	case yaml.AliasNode:
		return nodeValue(t, n.Alias)
	}
	switch n.ShortTag() {
	case "!!null":
		return nil
	case "!!bool":
		var b bool
		n.Decode(&b)
		return b
	case "!!int":
		var i int64
		if n.Decode(&i) == nil {
			return i
		}
		var u uint64
		if n.Decode(&u) == nil {
			return u
		}
	case "!!float":
		var f float64
		if n.Decode(&f) == nil && !math.IsNaN(f) && !math.IsInf(f, 0) {
			return f
		}
	}
	return n.Value
}

func TestSchemaAcceptsStockScenarios(t *testing.T) {
	s := compileSchema(t)
	files, _ := filepath.Glob(stockGlob)
	good, _ := filepath.Glob("testdata/good/*.yaml")
	files = append(files, good...)
	if len(files) == 0 {
		t.Fatal("no scenario files")
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			if err := s.Validate(yamlValue(t, f)); err != nil {
				t.Errorf("schema rejects %s, which the loader accepts:\n%v", f, err)
			}
		})
	}
}

// schemaVerdict classifies every bad file by what the schema can say
// about it.
var schemaVerdict = map[string]string{
	// The schema must reject these, as the loader does.
	"clutter-both":          "reject",
	"clutter-negative":      "reject",
	"clutter-neither":       "reject",
	"format-two":            "reject",
	"lifetimes":             "reject", // appear: -1; the other lifetime errors are loader-only
	"missing-keys":          "reject",
	"motion-mixed":          "reject",
	"motion-unknown":        "reject",
	"not-finite":            "reject",
	"not-positive-definite": "reject", // the zero variance on a diagonal; the rest is loader-only
	"probabilities":         "reject",
	"scripted":              "reject", // the scan without detections; the rest is loader-only
	"steps-zero":            "reject",
	"top-level-list":        "reject",
	"turn-axes":             "reject",
	"unknown-keys":          "reject",
	"wrong-types":           "reject",
	// Rules only the loader checks: the schema accepts these files.
	"covariance-rows": "loader-only: symmetry and positive definiteness",
	"clutter-box":     "loader-only: max > min compares two lists",
	"dimensions":      "loader-only: sizes depend on motion.axes and sensor.observe",
	"duplicate-ids":   "loader-only: uniqueness of one property across items",
	"duplicate-keys":  "loader-only: a JSON object cannot hold a key twice",
	"aliased-prior":   "loader-only: aliases are a YAML feature",
	// Not one YAML document, or too large to expand: nothing to validate.
	"alias-bomb":    "skip",
	"binary":        "skip",
	"comments-only": "skip",
	"empty":         "skip",
	"invalid-yaml":  "skip",
	"two-documents": "skip",
}

func TestSchemaAgreesWithLoaderOnBadFiles(t *testing.T) {
	s := compileSchema(t)
	files, _ := filepath.Glob("testdata/bad/*.yaml")
	if len(files) == 0 {
		t.Fatal("no files match testdata/bad/*.yaml")
	}
	for _, f := range files {
		name := strings.TrimSuffix(filepath.Base(f), ".yaml")
		t.Run(name, func(t *testing.T) {
			verdict, ok := schemaVerdict[name]
			if !ok {
				t.Fatalf("%s is not classified in schemaVerdict", f)
			}
			if verdict == "skip" {
				return
			}
			err := s.Validate(yamlValue(t, f))
			switch {
			case verdict == "reject" && err == nil:
				t.Errorf("schema accepts %s, which the loader rejects", f)
			case verdict != "reject" && err != nil:
				t.Errorf("schema rejects %s (%s):\n%v", f, verdict, err)
			}
		})
	}
}

// TestSchemaKeysMatchLoader checks that the schema and the loader know the
// same keys at every level, so that neither drifts when a key is added.
func TestSchemaKeysMatchLoader(t *testing.T) {
	data, err := os.ReadFile(schemaPath)
	if err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	get := func(path ...string) map[string]any {
		t.Helper()
		var cur any = doc
		for _, p := range path {
			m, ok := cur.(map[string]any)
			if !ok {
				t.Fatalf("schema: %v is not an object", path)
			}
			cur = m[p]
		}
		m, ok := cur.(map[string]any)
		if !ok {
			t.Fatalf("schema: %v is not an object", path)
		}
		return m
	}
	keys := func(m map[string]any) []string {
		out := make([]string, 0, len(m))
		for k := range m {
			out = append(out, k)
		}
		slices.Sort(out)
		return out
	}
	sorted := func(l []string) []string {
		l = slices.Clone(l)
		slices.Sort(l)
		return l
	}
	tests := []struct {
		name   string
		schema []string
		loader []string
	}{
		{"top level", []string{"properties"}, topKeys},
		{"motion", []string{"$defs", "motion", "properties"}, motionKeys},
		{"sensor", []string{"properties", "sensor", "properties"}, sensorKeys},
		{"clutter", []string{"properties", "clutter", "properties"}, clutterKeys},
		{"clutter region", []string{"properties", "clutter", "properties", "region", "properties"}, regionKeys},
		{"object", []string{"$defs", "object", "properties"}, objectKeys},
		{"prior", []string{"$defs", "object", "properties", "prior", "properties"}, priorKeys},
		{"scripted scan", []string{"properties", "scripted", "items", "properties"}, scriptKeys},
		{"scripted detection", []string{"properties", "scripted", "items", "properties", "detections", "items", "properties"}, detKeys},
	}
	for _, tc := range tests {
		if diff := cmp.Diff(sorted(tc.loader), keys(get(tc.schema...))); diff != "" {
			t.Errorf("%s: keys differ (-loader +schema):\n%s", tc.name, diff)
		}
	}
}
