package manifests

import "testing"

func TestEditDistance(t *testing.T) {
	cases := []struct {
		a, b string
		want int
	}{
		// Levenshtein's textbook example (three edits), common practice.
		{"kitten", "sitting", 3},
		{"", "abc", 3},
		{"sigma", "sigma", 0},
		{"sigam", "sigma", 1}, // one transposition
		{"rhoo", "rho", 1},
		// The optimal-string-alignment distance does not edit a substring
		// twice, so "ca" → "abc" costs 3 where unrestricted Damerau-
		// Levenshtein gives 2 (a known difference; recalled from memory and
		// checked by hand: delete c, insert b, insert c).
		{"ca", "abc", 3},
	}
	for _, tc := range cases {
		if got := editDistance(tc.a, tc.b); got != tc.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.want)
		}
		if got := editDistance(tc.b, tc.a); got != tc.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d (symmetry)", tc.b, tc.a, got, tc.want)
		}
	}
}

func TestSuggest(t *testing.T) {
	keys := []string{"name", "kind", "rho", "sigma", "mean", "states", "moments", "grid", "width", "method"}
	cases := []struct{ word, want string }{
		{"sigmma", "sigma"},
		{"Rho", "rho"},
		{"stats", "states"},
		{"momnets", "moments"},
		{"metod", "method"},
		{"widht", "width"},
		{"persistence", ""}, // nothing close: no guess
		{"xyz", ""},
	}
	for _, tc := range cases {
		if got := suggest(tc.word, keys); got != tc.want {
			t.Errorf("suggest(%q) = %q, want %q", tc.word, got, tc.want)
		}
	}
}
