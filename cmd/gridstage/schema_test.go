package main

import (
	"encoding/json"
	"testing"
)

// TestSchemaCommand checks that gridstage schema prints the draft 2020-12
// schema as one JSON object and exits 0.
func TestSchemaCommand(t *testing.T) {
	code, out, errOut := run(t, "schema")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var s struct {
		Schema     string         `json:"$schema"`
		Properties map[string]any `json:"properties"`
	}
	if err := json.Unmarshal([]byte(out), &s); err != nil {
		t.Fatalf("output is not JSON: %v", err)
	}
	if s.Schema != "https://json-schema.org/draft/2020-12/schema" || s.Properties["processes"] == nil {
		t.Errorf("unexpected schema header %q, properties %v", s.Schema, s.Properties)
	}
	if code, _, _ := run(t, "schema", "extra"); code != 2 {
		t.Errorf("schema with an argument exits %d, want 2", code)
	}
}
