package manifests

import (
	"encoding/json"
	"math"
	"testing"
)

// TestCanonicalStrings checks the string encoding against encoding/json
// (without HTML escaping) on plain and escaped strings, and the number
// rules of docs/HASHES.md on their examples.
func TestCanonicalStrings(t *testing.T) {
	for _, s := range []string{"maxent", "tauchen-hussey", `a"b`, `back\slash`, "tab\t", "é", "<&>", "\u2028"} {
		got := string(encodeCanonical(s))
		want, _ := json.Marshal(s)
		if s == "<&>" {
			want = []byte(`"<&>"`) // no HTML escaping
		}
		if got != string(want) {
			t.Errorf("%q encodes as %s, want %s", s, got, want)
		}
	}
	nums := []struct {
		v    float64
		want string
	}{
		{0.95, "0.95"}, {2.8284271247461903, "2.8284271247461903"}, {9, "9"},
		{1e-5, "1e-05"}, {1e21, "1e+21"}, {math.Copysign(0, -1), "0"}, {100000, "100000"}, {-3, "-3"},
		{0.0001, "0.0001"}, {1e6, "1e+06"}, {1234567, "1.234567e+06"},
	}
	for _, n := range nums {
		if got := string(encodeCanonical(n.v)); got != n.want {
			t.Errorf("%v encodes as %s, want %s", n.v, got, n.want)
		}
	}
}
