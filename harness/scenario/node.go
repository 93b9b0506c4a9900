package scenario

import (
	"fmt"
	"math"
	"strings"

	"go.yaml.in/yaml/v3"

	"trackgate/harness/internal/yamlpos"
	"trackgate/harness/mot"
)

// walker collects the errors of one file while the node tree is checked.
type walker struct {
	file string
	errs ErrorList
}

func (w *walker) errAt(n *yaml.Node, path, format string, args ...any) {
	w.errs = append(w.errs, yamlpos.At(w.file, n, path, format, args...))
}

// join, index and describe are the shared path and message helpers under
// the names the walker uses.
var (
	join     = yamlpos.Join
	index    = yamlpos.Index
	describe = yamlpos.Describe
)

// noAlias reports an alias as an error. Aliases are refused everywhere so
// that the tree is never expanded.
// The aliases themselves are reported once, by findAliases.
func (w *walker) noAlias(n *yaml.Node, path string) bool {
	return n.Kind != yaml.AliasNode
}

// reportAliases reports the first alias in the tree under root, with its
// path and the number of others. It never follows an alias, so the work is
// linear in the size of the text.
func (w *walker) reportAliases(root *yaml.Node) {
	var first *yaml.Node
	var firstPath string
	count := 0
	var walk func(n *yaml.Node, path string)
	walk = func(n *yaml.Node, path string) {
		switch n.Kind {
		case yaml.AliasNode:
			if count == 0 {
				first, firstPath = n, path
			}
			count++
		case yaml.MappingNode:
			for i := 0; i+1 < len(n.Content); i += 2 {
				k, v := n.Content[i], n.Content[i+1]
				if k.Kind != yaml.ScalarNode {
					walk(k, path)
					walk(v, path)
					continue
				}
				walk(v, join(path, k.Value))
			}
		case yaml.SequenceNode:
			for i, e := range n.Content {
				walk(e, index(path, i))
			}
		}
	}
	walk(root, "")
	switch {
	case count == 1:
		w.errAt(first, firstPath, "YAML aliases (*%s) are not supported; write the value out", first.Value)
	case count > 1:
		w.errAt(first, firstPath, "YAML aliases (*%s and %d more in this file) are not supported; write the values out", first.Value, count-1)
	}
}

// fields is a checked mapping: the value and key node of each known key.
type fields struct {
	node *yaml.Node
	path string
	val  map[string]*yaml.Node
	key  map[string]*yaml.Node
}

// mapping checks that n is a mapping whose keys are all in known and
// unique, reporting every other key.
func (w *walker) mapping(n *yaml.Node, path string, known []string) (*fields, bool) {
	if !w.noAlias(n, path) {
		return nil, false
	}
	if n.Kind != yaml.MappingNode {
		w.errAt(n, path, "expected a mapping with keys %s, found %s", strings.Join(known, ", "), describe(n))
		return nil, false
	}
	f := &fields{node: n, path: path, val: map[string]*yaml.Node{}, key: map[string]*yaml.Node{}}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if !w.noAlias(k, path) {
			continue
		}
		if k.Kind != yaml.ScalarNode || k.ShortTag() == "!!merge" {
			w.errAt(k, path, "expected a plain key (one of %s), found %s", strings.Join(known, ", "), describe(k))
			continue
		}
		kp := join(path, k.Value)
		if !contains(known, k.Value) {
			if near := yamlpos.Suggest(k.Value, known); near != "" {
				w.errAt(k, kp, "unknown key; did you mean %s? expected one of %s", near, strings.Join(known, ", "))
			} else {
				w.errAt(k, kp, "unknown key; expected one of %s", strings.Join(known, ", "))
			}
			continue
		}
		if first, dup := f.key[k.Value]; dup {
			w.errAt(k, kp, "duplicate key; first given at line %d", first.Line)
			continue
		}
		f.key[k.Value], f.val[k.Value] = k, v
	}
	return f, true
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// require returns the value of key, reporting it as missing when absent.
func (w *walker) require(f *fields, key, want string) *yaml.Node {
	if n := f.val[key]; n != nil {
		return n
	}
	w.errAt(f.node, join(f.path, key), "missing; expected %s", want)
	return nil
}

// scalar checks that n is a scalar with one of the given tags.
func (w *walker) scalar(n *yaml.Node, path, want string, tags ...string) bool {
	if !w.noAlias(n, path) {
		return false
	}
	if n.Kind != yaml.ScalarNode || !contains(tags, n.ShortTag()) {
		w.errAt(n, path, "expected %s, found %s", want, describe(n))
		return false
	}
	return true
}

func (w *walker) intVal(n *yaml.Node, path, want string) (int64, bool) {
	if !w.scalar(n, path, want, "!!int") {
		return 0, false
	}
	var v int64
	if err := n.Decode(&v); err != nil {
		w.errAt(n, path, "expected %s, found %s (out of range)", want, describe(n))
		return 0, false
	}
	return v, true
}

// intIn reads an integer in [lo, hi].
func (w *walker) intIn(n *yaml.Node, path, want string, lo, hi int64) (int, bool) {
	v, ok := w.intVal(n, path, want)
	if !ok {
		return 0, false
	}
	if v < lo || v > hi {
		w.errAt(n, path, "%d is out of range; expected %s", v, want)
		return 0, false
	}
	return int(v), true
}

func (w *walker) uintVal(n *yaml.Node, path, want string) (uint64, bool) {
	if !w.scalar(n, path, want, "!!int") {
		return 0, false
	}
	var v uint64
	if err := n.Decode(&v); err != nil {
		w.errAt(n, path, "expected %s, found %s", want, describe(n))
		return 0, false
	}
	return v, true
}

func (w *walker) floatVal(n *yaml.Node, path, want string) (float64, bool) {
	if !w.scalar(n, path, want, "!!int", "!!float") {
		return 0, false
	}
	var v float64
	if err := n.Decode(&v); err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		w.errAt(n, path, "expected %s, found %s (not a finite number)", want, describe(n))
		return 0, false
	}
	return v, true
}

func (w *walker) strVal(n *yaml.Node, path, want string) (string, bool) {
	if !w.scalar(n, path, want, "!!str") {
		return "", false
	}
	return n.Value, true
}

// floatList reads a list of finite numbers; length is checked by callers.
func (w *walker) floatList(n *yaml.Node, path, want string) ([]float64, bool) {
	if !w.noAlias(n, path) {
		return nil, false
	}
	if n.Kind != yaml.SequenceNode {
		w.errAt(n, path, "expected %s, found %s", want, describe(n))
		return nil, false
	}
	out := make([]float64, len(n.Content))
	ok := true
	for i, e := range n.Content {
		v, good := w.floatVal(e, index(path, i), "a number")
		out[i] = v
		ok = ok && good
	}
	return out, ok
}

// covariance reads a symmetric positive definite dim×dim matrix, given
// either as a list of rows or as a list of the diagonal. dim ≤ 0 means the
// size is not known (because another field is wrong); the shape is then
// only checked to be square.
func (w *walker) covariance(n *yaml.Node, path string, dim int) (mot.Mat, bool) {
	want := "a symmetric positive definite matrix (a list of rows) or a list of positive variances"
	if dim > 0 {
		want = fmt.Sprintf("a symmetric positive definite %d×%d matrix (a list of %d rows) or a list of %d positive variances", dim, dim, dim, dim)
	}
	if !w.noAlias(n, path) {
		return mot.Mat{}, false
	}
	if n.Kind != yaml.SequenceNode || len(n.Content) == 0 {
		w.errAt(n, path, "expected %s, found %s", want, describe(n))
		return mot.Mat{}, false
	}
	if n.Content[0].Kind != yaml.SequenceNode {
		// A diagonal.
		d, ok := w.floatList(n, path, want)
		if !ok {
			return mot.Mat{}, false
		}
		if dim > 0 && len(d) != dim {
			w.errAt(n, path, "has %d variances; expected %d (the dimension)", len(d), dim)
			return mot.Mat{}, false
		}
		m := mot.NewMat(len(d), len(d))
		for i, v := range d {
			if v <= 0 {
				w.errAt(n.Content[i], index(path, i), "variance %g is not positive; expected a number > 0", v)
				ok = false
			}
			m.Set(i, i, v)
		}
		return m, ok
	}
	rows := make([][]float64, len(n.Content))
	ok := true
	for i, r := range n.Content {
		rp := index(path, i)
		if !w.noAlias(r, rp) {
			ok = false
			continue
		}
		if r.Kind != yaml.SequenceNode {
			w.errAt(r, rp, "expected a row (a list of numbers), found %s; rows and a diagonal cannot be mixed", describe(r))
			ok = false
			continue
		}
		row, good := w.floatList(r, rp, "a row (a list of numbers)")
		ok = ok && good
		if good && len(row) != len(n.Content) {
			w.errAt(r, rp, "row has %d entries; expected %d to make a square matrix", len(row), len(n.Content))
			ok = false
		}
		rows[i] = row
	}
	if !ok {
		return mot.Mat{}, false
	}
	if dim > 0 && len(rows) != dim {
		w.errAt(n, path, "is %d×%d; expected %d×%d (the dimension)", len(rows), len(rows), dim, dim)
		return mot.Mat{}, false
	}
	m, _ := mot.MatFromRows(rows)
	for i := range m.Rows {
		for j := 0; j < i; j++ {
			a, b := m.At(i, j), m.At(j, i)
			if math.Abs(a-b) > 1e-9*math.Max(math.Abs(a), math.Abs(b)) {
				w.errAt(n.Content[i].Content[j], fmt.Sprintf("%s[%d][%d]", path, i, j),
					"%g differs from the mirror entry [%d][%d] = %g; expected a symmetric matrix", a, j, i, b)
				ok = false
			}
		}
	}
	if !ok {
		return mot.Mat{}, false
	}
	if row := cholesky(m); row >= 0 {
		w.errAt(n, path, "not positive definite (Cholesky factorisation fails at row %d); expected %s", row, want)
		return mot.Mat{}, false
	}
	return m, true
}

// cholesky attempts the factorisation A = LLᵀ of a symmetric matrix
// (Golub & Van Loan, "Matrix Computations", 4th ed., 2013, Alg. 4.2.2) and
// returns the row where a pivot is not positive, or −1 when A is positive
// definite. Only the lower triangle is read.
func cholesky(a mot.Mat) int {
	n := a.Rows
	l := make([]float64, n*n)
	for j := range n {
		d := a.At(j, j)
		for k := range j {
			d -= float64(l[j*n+k] * l[j*n+k])
		}
		if !(d > 0) || math.IsInf(d, 0) {
			return j
		}
		ljj := math.Sqrt(d)
		l[j*n+j] = ljj
		for i := j + 1; i < n; i++ {
			s := a.At(i, j)
			for k := range j {
				s -= float64(l[i*n+k] * l[j*n+k])
			}
			l[i*n+j] = s / ljj
		}
	}
	return -1
}
