package manifests

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"
	"go.yaml.in/yaml/v3"
)

// compileSchema compiles the embedded schema with an independent JSON
// Schema implementation (santhosh-tekuri/jsonschema, draft 2020-12).
func compileSchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(Schema()))
	if err != nil {
		t.Fatalf("schema is not JSON: %v", err)
	}
	c := jsonschema.NewCompiler()
	c.DefaultDraft(jsonschema.Draft2020)
	const url = "https://gridstage.invalid/schema/manifest-1.json"
	if err := c.AddResource(url, doc); err != nil {
		t.Fatal(err)
	}
	s, err := c.Compile(url)
	if err != nil {
		t.Fatalf("schema does not compile: %v", err)
	}
	return s
}

// instance reads a YAML or JSON manifest as the JSON value a schema
// validator sees (YAML merge keys applied by the YAML library).
func instance(t *testing.T, path string) (any, error) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var v any
	if err := yaml.Unmarshal(data, &v); err != nil {
		return nil, err
	}
	js, err := json.Marshal(v)
	if err != nil {
		return nil, err
	}
	return jsonschema.UnmarshalJSON(bytes.NewReader(js))
}

func TestSchemaAcceptsGoodManifests(t *testing.T) {
	toRoot(t)
	s := compileSchema(t)
	for _, tc := range goodManifests {
		v, err := instance(t, tc.file)
		if err != nil {
			t.Fatalf("%s: %v", tc.file, err)
		}
		if err := s.Validate(v); err != nil {
			t.Errorf("%s: schema rejects a valid manifest: %v", tc.file, err)
		}
	}
}

// schemaCatches lists the malformed manifests whose fault a JSON Schema
// can express. The others (sums of weights, moments against nu, values
// inside sweeps and draw tables, repeated names, YAML syntax) only the
// tool's own checks find.
var schemaCatches = []string{
	"rho-out-of-range.yaml", "unknown-key-typo.yaml", "sigma-not-positive.yaml",
	"states-too-few.yaml", "states-fraction.yaml", "states-text.yaml", "rho-quoted.yaml",
	"moments-too-many.yaml", "moments-with-tauchen.yaml", "nodes-with-rouwenhorst.yaml",
	"floden-with-maxent.yaml", "t-nu-too-small.yaml", "mixture-bad-component.yaml",
	"unknown-kind.yaml", "unknown-method.yaml", "key-of-other-kind.yaml",
	"missing-top-level.yaml", "bad-format.yaml", "bad-names.yaml",
	"iid-with-tauchen.yaml", "iid-compare.yaml", "iid-missing-distribution.yaml",
	"iid-law-parameter.yaml", "sweep-unknown-parameter.yaml",
	"sweep-range-step-and-count.yaml", "sweep-empty.yaml", "manifest-errors.json",
	"wrong-shapes.yaml", "var-ragged-matrix.yaml", "var-settings.yaml", "ar1-volatility-log-variance.yaml",
	"lifecycle-lengths.yaml", "lifecycle-innovations.yaml", "product-components.yaml",
	"former-names.yaml",
	"adda-cooper-fat-tails.yaml",
}

func TestSchemaRejectsBadManifests(t *testing.T) {
	toRoot(t)
	s := compileSchema(t)
	for _, f := range schemaCatches {
		v, err := instance(t, filepath.Join("testdata", "manifests", "bad", f))
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		if s.Validate(v) == nil {
			t.Errorf("%s: the schema accepts it", f)
		}
	}
}
