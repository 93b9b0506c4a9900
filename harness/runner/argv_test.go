package runner

import (
	"slices"
	"strings"
	"testing"
)

func TestSplitCommand(t *testing.T) {
	tests := []struct {
		name, line string
		want       []string
		reason     string
	}{
		{"plain", "./bin/quay --jsonl", []string{"./bin/quay", "--jsonl"}, ""},
		{"blanks", " \t a \n b  ", []string{"a", "b"}, "tabs and newlines separate words too"},
		{"single quotes", `quay 'two words' '$HOME'`, []string{"quay", "two words", "$HOME"}, "no expansion inside single quotes"},
		{"double quotes", `quay "a \"b\" \\ \$x \n"`, []string{"quay", `a "b" \ $x \n`}, `\n is not an escape inside double quotes`},
		{"glued", `a'b c'"d"e`, []string{"ab cde"}, "quotes glue to their neighbours"},
		{"empty word", `quay '' ""`, []string{"quay", "", ""}, ""},
		{"backslash", `a\ b \'c`, []string{"a b", "'c"}, ""},
		{"line join", "a\\\nb", []string{"ab"}, "a backslash-newline joins lines"},
		{"no expansion", `quay *.yaml $HOME | tee x; rm`, []string{"quay", "*.yaml", "$HOME", "|", "tee", "x;", "rm"}, "operators are plain characters"},
		{"empty", "  ", nil, ""},
		{"unicode", `'chenal nord' écluse`, []string{"chenal nord", "écluse"}, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := SplitCommand(tt.line)
			if err != nil {
				t.Fatalf("SplitCommand(%q) error %v", tt.line, err)
			}
			if !slices.Equal(got, tt.want) {
				t.Errorf("SplitCommand(%q) = %q, want %q (%s)", tt.line, got, tt.want, tt.reason)
			}
		})
	}
	for _, bad := range []struct{ line, want string }{
		{`quay 'open`, "column 6: unterminated single quote"},
		{`quay "open`, "column 6: unterminated double quote"},
		{`quay \`, "column 6: a backslash ends"},
	} {
		if _, err := SplitCommand(bad.line); err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("SplitCommand(%q) error %v, want %q", bad.line, err, bad.want)
		}
	}
}

// quote writes one word so that SplitCommand reads it back: inside single
// quotes, with each single quote written as quote, backslash, quote, quote
// (common practice in shell scripts).
func quote(w string) string { return "'" + strings.ReplaceAll(w, "'", `'\''`) + "'" }

// FuzzSplitCommand: SplitCommand never panics, and the words it returns,
// quoted and joined again, split back to the same words.
func FuzzSplitCommand(f *testing.F) {
	for _, s := range []string{"./quay --jsonl", `a'b c'"d"`, `"x\"y" \z`, "'", `"\`, "a\\\nb", "é 'ü'"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, line string) {
		words, err := SplitCommand(line)
		if err != nil {
			return
		}
		quoted := make([]string, len(words))
		for i, w := range words {
			quoted[i] = quote(w)
		}
		again, err := SplitCommand(strings.Join(quoted, " "))
		if err != nil {
			t.Fatalf("re-split of %q: %v", quoted, err)
		}
		if !slices.Equal(again, words) && !(len(again) == 0 && len(words) == 0) {
			t.Fatalf("SplitCommand(%q) = %q, but the re-quoted words split to %q", line, words, again)
		}
	})
}
