package cache

import (
	"crypto/sha256"
	"fmt"
	"reflect"
	"strings"
	"sync"
)

// A type's fingerprint is the SHA-256 of a description of its layout:
// kinds, field names and element types, recursively. An entry written for
// a type of another layout (an older build whose diagnostics had fewer
// fields, say) then reads as a miss instead of decoding into wrong fields.

var fingerprints sync.Map // reflect.Type → fingerprintResult

type fingerprintResult struct {
	sum [32]byte
	err error
}

// fingerprint returns the fingerprint of t, or an error naming the first
// part of t the codec cannot encode.
func fingerprint(t reflect.Type) ([32]byte, error) {
	if r, ok := fingerprints.Load(t); ok {
		r := r.(fingerprintResult)
		return r.sum, r.err
	}
	desc, err := describe(t)
	r := fingerprintResult{err: err}
	if err == nil {
		r.sum = sha256.Sum256([]byte(desc))
	}
	fingerprints.Store(t, r)
	return r.sum, r.err
}

// describe writes the layout of t, or fails for a type the codec does not
// support.
func describe(t reflect.Type) (string, error) {
	var b strings.Builder
	if err := describeInto(&b, t, map[reflect.Type]bool{}); err != nil {
		return "", err
	}
	return b.String(), nil
}

func describeInto(b *strings.Builder, t reflect.Type, open map[reflect.Type]bool) error {
	switch t.Kind() {
	case reflect.Bool, reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr,
		reflect.Float32, reflect.Float64, reflect.String:
		b.WriteString(t.Kind().String())
	case reflect.Slice:
		b.WriteString("[]")
		return describeInto(b, t.Elem(), open)
	case reflect.Array:
		fmt.Fprintf(b, "[%d]", t.Len())
		return describeInto(b, t.Elem(), open)
	case reflect.Pointer:
		if open[t] {
			return fmt.Errorf("cache: cannot store recursive type %s", t)
		}
		open[t] = true
		defer delete(open, t)
		b.WriteString("*")
		return describeInto(b, t.Elem(), open)
	case reflect.Struct:
		b.WriteString("struct{")
		for i := 0; i < t.NumField(); i++ {
			f := t.Field(i)
			if !f.IsExported() {
				return fmt.Errorf("cache: cannot store %s: field %s is unexported", t, f.Name)
			}
			b.WriteString(f.Name)
			b.WriteString(" ")
			if err := describeInto(b, f.Type, open); err != nil {
				return err
			}
			b.WriteString(";")
		}
		b.WriteString("}")
	default:
		return fmt.Errorf("cache: cannot store %s: %s values are not supported", t, t.Kind())
	}
	return nil
}
