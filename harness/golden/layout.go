package golden

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
)

// ID names one golden file in the layout
//
//	<root>/<scenario>/run-<N>.tape.jsonl             scan tape
//	<root>/<scenario>/run-<N>.reference.jsonl        reference tracker output
//	<root>/<scenario>/run-<N>.metrics.jsonl          reference tracker metrics
//	<root>/<scenario>/<tracker>/run-<N>.jsonl        tracker output
//	<root>/<scenario>/<tracker>/run-<N>.metrics.jsonl tracker metrics
//	<root>/<scenario>/<tracker>/metrics.jsonl        tracker whole-run values, every run
//
// The ID of the last (kind RunValues) has Run 0.
type ID struct {
	Scenario string
	// Tracker is "" for the scan tape and the reference tracker's files.
	Tracker string
	Run     int
	Kind    Kind
}

// ValidName reports whether s can be a scenario or tracker folder name:
// 1 to 128 characters from A–Z, a–z, 0–9, '.', '_', '-', not starting with
// '.' or '-'.
func ValidName(s string) bool {
	if len(s) == 0 || len(s) > 128 || s[0] == '.' || s[0] == '-' {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '.' || c == '_' || c == '-') {
			return false
		}
	}
	return true
}

// Path returns the file of id under root. It reports an error for a name
// that cannot be a folder, a negative run, or a kind that does not fit
// (Output needs a tracker; Tape and Reference must not have one).
func Path(root string, id ID) (string, error) {
	if !ValidName(id.Scenario) {
		return "", fmt.Errorf("golden: scenario name %q cannot name a folder", id.Scenario)
	}
	if id.Tracker != "" && !ValidName(id.Tracker) {
		return "", fmt.Errorf("golden: tracker name %q cannot name a folder", id.Tracker)
	}
	if id.Run < 0 {
		return "", fmt.Errorf("golden: run %d is negative", id.Run)
	}
	run := "run-" + strconv.Itoa(id.Run)
	switch {
	case id.Tracker == "" && (id.Kind == Tape || id.Kind == Reference || id.Kind == Metrics):
		return filepath.Join(root, id.Scenario, run+"."+string(id.Kind)+".jsonl"), nil
	case id.Tracker != "" && id.Kind == Output:
		return filepath.Join(root, id.Scenario, id.Tracker, run+".jsonl"), nil
	case id.Tracker != "" && id.Kind == Metrics:
		return filepath.Join(root, id.Scenario, id.Tracker, run+".metrics.jsonl"), nil
	case id.Tracker != "" && id.Kind == RunValues && id.Run == 0:
		return filepath.Join(root, id.Scenario, id.Tracker, "metrics.jsonl"), nil
	}
	return "", fmt.Errorf("golden: kind %q does not fit tracker %q", id.Kind, id.Tracker)
}

// parseRun parses "run-<N>" followed by suffix; N is decimal without
// leading zeros.
func parseRun(base, suffix string) (int, bool) {
	s, ok := strings.CutPrefix(base, "run-")
	if !ok {
		return 0, false
	}
	s, ok = strings.CutSuffix(s, suffix)
	if !ok || s == "" || (len(s) > 1 && s[0] == '0') {
		return 0, false
	}
	n, err := strconv.Atoi(s)
	if err != nil || n < 0 || strings.TrimLeft(s, "0123456789") != "" {
		return 0, false
	}
	return n, true
}

// ParsePath returns the ID of a path relative to root, the inverse of
// Path; ok is false for a path outside the layout.
func ParsePath(rel string) (id ID, ok bool) {
	parts := strings.Split(filepath.ToSlash(rel), "/")
	switch len(parts) {
	case 2:
		if !ValidName(parts[0]) {
			return ID{}, false
		}
		for _, k := range []Kind{Tape, Reference, Metrics} {
			if n, ok := parseRun(parts[1], "."+string(k)+".jsonl"); ok {
				return ID{Scenario: parts[0], Run: n, Kind: k}, true
			}
		}
	case 3:
		if !ValidName(parts[0]) || !ValidName(parts[1]) {
			return ID{}, false
		}
		if parts[2] == "metrics.jsonl" {
			return ID{Scenario: parts[0], Tracker: parts[1], Kind: RunValues}, true
		}
		if n, ok := parseRun(parts[2], ".metrics.jsonl"); ok {
			return ID{Scenario: parts[0], Tracker: parts[1], Run: n, Kind: Metrics}, true
		}
		if n, ok := parseRun(parts[2], ".jsonl"); ok {
			return ID{Scenario: parts[0], Tracker: parts[1], Run: n, Kind: Output}, true
		}
	}
	return ID{}, false
}

// Tree is what Scan found under a golden root.
type Tree struct {
	// Goldens maps each golden's path (under root) to its ID.
	Goldens map[string]ID
	// Temps lists leftover temporary files of killed writers.
	Temps []string
	// Strays lists other files that are not goldens (README.md at the root
	// is expected and not listed).
	Strays []string
}

// Scan walks root. A missing root is an empty tree.
func Scan(root string) (Tree, error) {
	t := Tree{Goldens: map[string]ID{}}
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			if p == root && errors.Is(err, fs.ErrNotExist) {
				return fs.SkipAll
			}
			return err
		}
		if d.IsDir() {
			return nil
		}
		rel, err := filepath.Rel(root, p)
		if err != nil {
			return err
		}
		switch id, ok := ParsePath(rel); {
		case ok:
			t.Goldens[p] = id
		case IsTemp(d.Name()):
			t.Temps = append(t.Temps, p)
		case rel == "README.md":
		default:
			t.Strays = append(t.Strays, p)
		}
		return nil
	})
	if err != nil {
		return Tree{}, fmt.Errorf("golden: %w", err)
	}
	return t, nil
}

// Inventory is what the current project uses: the number of runs of each
// scenario and the names of the configured trackers.
type Inventory struct {
	Runs map[string]int
	// Trackers lists the trackers whose goldens are kept; nil keeps every
	// tracker's goldens of a used scenario and run.
	Trackers []string
}

// Uses reports whether the inventory needs the golden id.
func (inv Inventory) Uses(id ID) bool {
	runs, ok := inv.Runs[id.Scenario]
	if !ok || id.Run >= runs {
		return false
	}
	if id.Tracker == "" || inv.Trackers == nil {
		return true
	}
	for _, t := range inv.Trackers {
		if t == id.Tracker {
			return true
		}
	}
	return false
}

// Orphans lists, sorted, the goldens of t that inv does not use: a
// scenario that no longer exists, a run beyond the scenario's run count, or
// a tracker no longer configured. Only call it after a full run: a filtered
// or sharded run knows only part of the inventory.
func (t Tree) Orphans(inv Inventory) []string {
	var out []string
	for p, id := range t.Goldens {
		if !inv.Uses(id) {
			out = append(out, p)
		}
	}
	sort.Strings(out)
	return out
}

// Remove deletes the given goldens and leftover temporary files of t, then
// any folder under root left empty. It refuses a path that t does not list
// as a golden or temporary file, so that nothing else is ever deleted.
func (t Tree) Remove(root string, paths []string) error {
	temps := map[string]bool{}
	for _, p := range t.Temps {
		temps[p] = true
	}
	for _, p := range paths {
		if _, ok := t.Goldens[p]; !ok && !temps[p] {
			return fmt.Errorf("golden: refusing to remove %s: not a golden file under %s", p, root)
		}
	}
	dirs := map[string]bool{}
	for _, p := range paths {
		if err := os.Remove(p); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("golden: %w", err)
		}
		for d := filepath.Dir(p); d != filepath.Clean(root) && d != "." && d != string(filepath.Separator); d = filepath.Dir(d) {
			dirs[d] = true
		}
	}
	list := make([]string, 0, len(dirs))
	for d := range dirs {
		list = append(list, d)
	}
	sort.Slice(list, func(i, j int) bool { return len(list[i]) > len(list[j]) }) // deepest first
	for _, d := range list {
		if ents, err := os.ReadDir(d); err == nil && len(ents) == 0 {
			os.Remove(d)
		}
	}
	return nil
}
