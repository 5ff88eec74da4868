package manifests

import (
	"bytes"
	"encoding/json"
	"sort"
)

// object is a JSON object under construction for a canonical encoding.
// Values are float64, int, string, bool, object or []any.
type object map[string]any

// encodeCanonical writes v in the canonical JSON form of docs/HASHES.md:
// no white space, object keys sorted by their UTF-8 bytes, numbers by
// formatNumber, strings as encoding/json writes them without HTML escaping.
func encodeCanonical(v any) []byte {
	var b bytes.Buffer
	writeCanonical(&b, v)
	return b.Bytes()
}

func writeCanonical(b *bytes.Buffer, v any) {
	switch x := v.(type) {
	case object:
		keys := make([]string, 0, len(x))
		for k := range x {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		b.WriteByte('{')
		for i, k := range keys {
			if i > 0 {
				b.WriteByte(',')
			}
			writeString(b, k)
			b.WriteByte(':')
			writeCanonical(b, x[k])
		}
		b.WriteByte('}')
	case []any:
		b.WriteByte('[')
		for i, e := range x {
			if i > 0 {
				b.WriteByte(',')
			}
			writeCanonical(b, e)
		}
		b.WriteByte(']')
	case float64:
		b.WriteString(formatNumber(x))
	case int:
		b.WriteString(formatNumber(float64(x)))
	case string:
		writeString(b, x)
	case bool:
		if x {
			b.WriteString("true")
		} else {
			b.WriteString("false")
		}
	default:
		panic("manifests: no canonical form for this value")
	}
}

func writeString(b *bytes.Buffer, s string) {
	if plainASCII(s) { // the usual case: names, laws, methods
		b.WriteByte('"')
		b.WriteString(s)
		b.WriteByte('"')
		return
	}
	enc := json.NewEncoder(b)
	enc.SetEscapeHTML(false)
	_ = enc.Encode(s)
	b.Truncate(b.Len() - 1) // Encode appends a newline
}

// plainASCII reports whether s needs no escaping in JSON: printable ASCII
// without quote or backslash.
func plainASCII(s string) bool {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f || c == '"' || c == '\\' {
			return false
		}
	}
	return true
}
