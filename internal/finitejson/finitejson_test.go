package finitejson

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

type inner struct {
	X float64 `json:"x"`
}

type outer struct {
	*inner
	A    float64   `json:"a"`
	List []float64 `json:"list"`
	Skip string    `json:"skip,omitempty"`
	N    *inner    `json:"n"`
}

// TestEncode checks against encoding/json itself: finite values encode
// as it would, and non-finite ones become null with a reason at their path.
func TestEncode(t *testing.T) {
	v := outer{inner: &inner{X: 1.5}, A: math.NaN(), List: []float64{1, math.Inf(1)}, N: &inner{X: math.Inf(-1)}}
	var b bytes.Buffer
	if err := Encode(&b, v); err != nil {
		t.Fatal(err)
	}
	var got map[string]any
	if err := json.Unmarshal(b.Bytes(), &got); err != nil {
		t.Fatalf("%v: %s", err, b.String())
	}
	if got["x"] != 1.5 || got["a"] != nil || got["list"].([]any)[1] != nil || got["list"].([]any)[0] != 1.0 {
		t.Errorf("values: %s", b.String())
	}
	if _, ok := got["skip"]; ok {
		t.Errorf("omitempty ignored: %s", b.String())
	}
	r := got[ReasonsKey].(map[string]any)
	for _, p := range []string{"a", "list[1]", "n.x"} {
		if s, _ := r[p].(string); !strings.Contains(s, "not a number") && !strings.Contains(s, "infinite") {
			t.Errorf("no reason for %s: %v", p, r)
		}
	}
	if len(r) != 3 {
		t.Errorf("reasons %v, want 3", r)
	}
	// Finite input: the same bytes as encoding/json's indented output.
	f := outer{inner: &inner{X: 2}, A: 3, List: []float64{4}}
	var mine, std bytes.Buffer
	if err := Encode(&mine, f); err != nil {
		t.Fatal(err)
	}
	enc := json.NewEncoder(&std)
	enc.SetIndent("", "  ")
	if err := enc.Encode(f); err != nil {
		t.Fatal(err)
	}
	if mine.String() != std.String() {
		t.Errorf("finite output differs from encoding/json:\n%s\n%s", mine.String(), std.String())
	}
}
