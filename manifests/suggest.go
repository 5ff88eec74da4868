package manifests

import (
	"strconv"
	"strings"
)

// suggest returns the candidate closest to word by edit distance, or "" if
// none is close enough to be a plausible typo: at most one edit for words
// of up to four letters, two for longer ones. Case is ignored.
func suggest(word string, candidates []string) string {
	w := strings.ToLower(word)
	limit := 1
	if len([]rune(w)) > 4 {
		limit = 2
	}
	best, bestD := "", limit+1
	for _, c := range candidates {
		if d := editDistance(w, strings.ToLower(c)); d < bestD {
			best, bestD = c, d
		}
	}
	return best
}

// editDistance is the optimal-string-alignment distance: insertions,
// deletions, substitutions and transpositions of adjacent letters each
// cost one (Damerau 1964), so "sigam" is one edit from "sigma".
func editDistance(a, b string) int {
	s, t := []rune(a), []rune(b)
	prev2 := make([]int, len(t)+1)
	prev := make([]int, len(t)+1)
	cur := make([]int, len(t)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(s); i++ {
		cur[0] = i
		for j := 1; j <= len(t); j++ {
			cost := 1
			if s[i-1] == t[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && s[i-1] == t[j-2] && s[i-2] == t[j-1] {
				cur[j] = min(cur[j], prev2[j-2]+1)
			}
		}
		prev2, prev, cur = prev, cur, prev2
	}
	return prev[len(t)]
}

// renamed maps keys and values that earlier versions of the manifest
// format accepted to their current spelling, so that an error about an old
// name gives the new one.
var renamed = map[string]string{
	"grid":      "nodes",          // the key that chooses the node rule
	"grid_axes": "axes",           // a VAR's grid orientation
	"even":      "lattice",        // node rule
	"quantile":  "equal-mass",     // node rule
	"sv":        "ar1-volatility", // process kind
}

// hint phrases the "did you mean" or "want one of" tail of an error about an
// unknown word.
func hint(word string, candidates []string) string {
	if s, ok := renamed[word]; ok && contains(candidates, s) {
		return "did you mean " + strconv.Quote(s) + "? (" + strconv.Quote(word) + " is the former name)"
	}
	if s := suggest(word, candidates); s != "" {
		return "did you mean " + strconv.Quote(s) + "?"
	}
	return "want one of " + strings.Join(candidates, ", ")
}
