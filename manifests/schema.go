package manifests

import (
	"bytes"
	_ "embed"
)

//go:embed schema.json
var schema []byte

// Schema returns the JSON Schema (draft 2020-12) of a manifest, for editors
// and other tools. The tool's own checks are stricter: the schema cannot
// express every rule between fields.
func Schema() []byte { return bytes.Clone(schema) }
