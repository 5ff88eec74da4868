// Package finitejson encodes values as JSON with every non-finite number
// (NaN, ±Inf, which encoding/json refuses) written as null, and says why:
// the root object gains a "null_reasons" member mapping the JSON path of
// each such null to its reason. Field order, tags and omitempty follow
// encoding/json.
package finitejson

import (
	"bytes"
	"encoding"
	"encoding/json"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"
)

// ReasonsKey names the member that lists the nulls' reasons.
const ReasonsKey = "null_reasons"

// Encode writes v to w as indented JSON followed by a newline.
func Encode(w io.Writer, v any) error {
	reasons := map[string]string{}
	tree := walk(reflect.ValueOf(v), "", reasons)
	if len(reasons) > 0 {
		if obj, ok := tree.(*object); ok {
			obj.add(ReasonsKey, reasons)
		}
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	if err := enc.Encode(tree); err != nil {
		return err
	}
	_, err := w.Write(buf.Bytes())
	return err
}

// Reason describes a non-finite value.
func Reason(x float64) string {
	if math.IsNaN(x) {
		return "not a number: undefined (0/0), e.g. a skewness or kurtosis of a row with all its mass on one point"
	}
	return "infinite: overflow or division by zero"
}

// object is a JSON object that keeps its members in order.
type object struct {
	keys []string
	vals []any
}

func (o *object) add(k string, v any) {
	o.keys = append(o.keys, k)
	o.vals = append(o.vals, v)
}

func (o *object) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, k := range o.keys {
		if i > 0 {
			b.WriteByte(',')
		}
		kb, _ := json.Marshal(k)
		b.Write(kb)
		b.WriteByte(':')
		vb, err := json.Marshal(o.vals[i])
		if err != nil {
			return nil, err
		}
		b.Write(vb)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

var (
	marshalerType     = reflect.TypeFor[json.Marshaler]()
	textMarshalerType = reflect.TypeFor[encoding.TextMarshaler]()
)

func walk(v reflect.Value, path string, reasons map[string]string) any {
	if !v.IsValid() {
		return nil
	}
	if v.Type().Implements(marshalerType) || v.Type().Implements(textMarshalerType) {
		if (v.Kind() == reflect.Pointer || v.Kind() == reflect.Interface) && v.IsNil() {
			return nil
		}
		return v.Interface()
	}
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		x := v.Float()
		if math.IsNaN(x) || math.IsInf(x, 0) {
			reasons[path] = Reason(x)
			return nil
		}
		return x
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return nil
		}
		return walk(v.Elem(), path, reasons)
	case reflect.Slice:
		if v.IsNil() {
			return nil
		}
		fallthrough
	case reflect.Array:
		out := make([]any, v.Len())
		for i := range out {
			out[i] = walk(v.Index(i), path+"["+strconv.Itoa(i)+"]", reasons)
		}
		return out
	case reflect.Map:
		if v.IsNil() {
			return nil
		}
		out := make(map[string]any, v.Len())
		it := v.MapRange()
		for it.Next() {
			k := it.Key().String()
			if it.Key().Kind() != reflect.String {
				k = strings.Trim(string(mustJSON(it.Key().Interface())), `"`)
			}
			out[k] = walk(it.Value(), join(path, k), reasons)
		}
		return out
	case reflect.Struct:
		obj := &object{}
		fields(v, path, obj, reasons)
		return obj
	}
	return v.Interface()
}

// fields adds the exported fields of the struct v to obj, inlining
// untagged embedded structs as encoding/json does.
func fields(v reflect.Value, path string, obj *object, reasons map[string]string) {
	t := v.Type()
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		tag := f.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		fv := v.Field(i)
		if f.Anonymous && name == "" {
			for fv.Kind() == reflect.Pointer {
				if fv.IsNil() {
					break
				}
				fv = fv.Elem()
			}
			if fv.Kind() == reflect.Struct {
				fields(fv, path, obj, reasons)
			}
			continue
		}
		if !f.IsExported() {
			continue
		}
		if name == "" {
			name = f.Name
		}
		if strings.Contains(","+opts+",", ",omitempty,") && isEmpty(fv) {
			continue
		}
		obj.add(name, walk(fv, join(path, name), reasons))
	}
}

func isEmpty(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Slice, reflect.Map, reflect.String, reflect.Array:
		return v.Len() == 0
	case reflect.Pointer, reflect.Interface:
		return v.IsNil()
	}
	return v.IsZero()
}

func join(path, k string) string {
	if path == "" {
		return k
	}
	return path + "." + k
}

func mustJSON(v any) []byte {
	b, _ := json.Marshal(v)
	return b
}
