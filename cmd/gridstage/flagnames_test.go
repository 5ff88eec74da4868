package main

import (
	"encoding/json"
	"strings"
	"testing"

	"github.com/spf13/pflag"

	"gridstage/manifests"
)

// flagKeys maps the discretize flags whose manifest key is not the flag
// name with _ for - : the law-selecting flags stand for the law key of
// their mapping, and --component for one entry of components.
var flagKeys = map[string]string{
	"innovation":   "innovation",
	"distribution": "distribution",
	"component":    "components",
}

// flagsWithoutKey are discretize flags that describe the output, not the
// process. sensitivities adds derivatives to the JSON; they change no
// number of the chain, so the canonical spec has no key for them.
var flagsWithoutKey = map[string]bool{"help": true, "json": true, "sensitivities": true}

// schemaDescriptions collects, for every property name anywhere in the
// JSON Schema, the descriptions given to it (on the property itself or on
// the definition it refers to).
func schemaDescriptions(t *testing.T) map[string][]string {
	t.Helper()
	var doc map[string]any
	if err := json.Unmarshal(manifests.Schema(), &doc); err != nil {
		t.Fatal(err)
	}
	defs := doc["$defs"].(map[string]any)
	out := map[string][]string{}
	var walk func(v any)
	walk = func(v any) {
		switch x := v.(type) {
		case map[string]any:
			if props, ok := x["properties"].(map[string]any); ok {
				for name, p := range props {
					pm, _ := p.(map[string]any)
					desc, _ := pm["description"].(string)
					if ref, ok := pm["$ref"].(string); ok {
						if def, ok := defs[strings.TrimPrefix(ref, "#/$defs/")].(map[string]any); ok {
							d, _ := def["description"].(string)
							desc += " " + d
						}
					}
					out[name] = append(out[name], desc)
				}
			}
			for _, c := range x {
				walk(c)
			}
		case []any:
			for _, c := range x {
				walk(c)
			}
		}
	}
	walk(doc)
	return out
}

// TestFlagsAreManifestKeys checks issue 13's "one set of names": every flag
// of every discretize kind is a manifest key (with - for _), and the JSON
// Schema's description of that key names the flag, so that `gridstage
// schema` shows both spellings side by side.
func TestFlagsAreManifestKeys(t *testing.T) {
	descs := schemaDescriptions(t)
	root := newRoot()
	var discretize = root
	for _, c := range root.Commands() {
		if c.Name() == "discretize" {
			discretize = c
		}
	}
	kinds := discretize.Commands()
	if len(kinds) < 3 {
		t.Fatalf("discretize has %d kinds, want at least ar1, iid and var", len(kinds))
	}
	for _, kind := range kinds {
		kind.Flags().VisitAll(func(f *pflag.Flag) {
			if flagsWithoutKey[f.Name] {
				return
			}
			key := strings.ReplaceAll(f.Name, "-", "_")
			if k, ok := flagKeys[f.Name]; ok {
				key = k
			}
			list, ok := descs[key]
			if !ok {
				t.Errorf("discretize %s --%s: the manifest has no key %q", kind.Name(), f.Name, key)
				return
			}
			named := false
			for _, d := range list {
				named = named || strings.Contains(d, "--"+f.Name)
			}
			if !named {
				t.Errorf("discretize %s --%s: no description of key %q in the JSON Schema names the flag: %q", kind.Name(), f.Name, key, list)
			}
		})
	}
}
