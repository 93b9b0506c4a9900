package yamlpos

import (
	"strconv"

	"go.yaml.in/yaml/v3"
)

// Join returns the path of key inside the mapping at path.
func Join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// Index returns the path of item i of the list at path.
func Index(path string, i int) string { return path + "[" + strconv.Itoa(i) + "]" }

// shape names a node that is not a scalar, or returns "".
func shape(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.AliasNode:
		return "an alias"
	case yaml.ScalarNode:
		return ""
	}
	return "an unexpected node"
}

// Describe names what a node holds, telling numbers, booleans, strings and
// null apart: "a mapping", "a list", "an alias", "nothing", "the number
// 3", "true", a quoted string cut to 40 characters ("..." included), or "a
// value tagged !!binary".
func Describe(n *yaml.Node) string {
	if s := shape(n); s != "" {
		return s
	}
	switch n.ShortTag() {
	case "!!null":
		return "nothing"
	case "!!int", "!!float":
		return "the number " + n.Value
	case "!!bool":
		return n.Value
	case "!!str":
		v := n.Value
		if len(v) > 40 {
			v = v[:37] + "..."
		}
		return strconv.Quote(v)
	default:
		return "a value tagged " + n.ShortTag()
	}
}

// DescribeText names what a node holds, giving any scalar as it was
// written: "a mapping", "a list", "an alias", "nothing (null)", or the
// quoted text cut to 40 bytes followed by "…".
func DescribeText(n *yaml.Node) string {
	if s := shape(n); s != "" {
		return s
	}
	if n.ShortTag() == "!!null" {
		return "nothing (null)"
	}
	v := n.Value
	if len(v) > 40 {
		v = v[:40] + "…"
	}
	return strconv.Quote(v)
}

// Suggest returns the entry of known closest to key when it is a likely
// misspelling (at most two edits away), or "". Ties go to the earlier
// entry.
func Suggest(key string, known []string) string {
	best, bestD := "", 3
	for _, k := range known {
		if d := EditDistance(key, k); d < bestD {
			best, bestD = k, d
		}
	}
	return best
}

// EditDistance is the Levenshtein distance between a and b, counted in
// bytes (keys are ASCII): the fewest single-byte insertions, deletions and
// substitutions that turn a into b (V. I. Levenshtein, "Binary codes
// capable of correcting deletions, insertions, and reversals", Soviet
// Physics Doklady 10(8), 1966), computed row by row with the dynamic
// programme of R. A. Wagner and M. J. Fischer, "The string-to-string
// correction problem", J. ACM 21(1), 1974.
func EditDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			sub := prev[j-1]
			if a[i-1] != b[j-1] {
				sub++
			}
			cur[j] = min(sub, prev[j]+1, cur[j-1]+1)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}
