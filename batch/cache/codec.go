package cache

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"reflect"
)

// The codec writes a value of a supported type as a byte string that
// decodes to an identical value:
//
//	bool                 one byte, 0 or 1
//	int, int8 … int64    zig-zag varint
//	uint, uint8 … uint64 varint
//	float32, float64     IEEE 754 bits, little-endian (NaN and -0 kept)
//	string               varint length, bytes
//	slice                varint 0 for nil, else length+1, then the elements
//	array                the elements
//	pointer              one byte: 0 for nil, 1 followed by the value
//	struct               the exported fields in declaration order
//
// Maps, interfaces, channels, functions and structs with unexported fields
// are not supported: their encoding would be lossy or non-deterministic.

// errTrailing and errShort report payloads that do not fit the type; the
// envelope's checksum makes them a sign of a type mismatch, not of damage.
var (
	errShort    = errors.New("payload ends early")
	errTrailing = errors.New("payload has trailing bytes")
)

func encodeValue(b []byte, v reflect.Value) []byte {
	switch v.Kind() {
	case reflect.Bool:
		if v.Bool() {
			return append(b, 1)
		}
		return append(b, 0)
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return binary.AppendVarint(b, v.Int())
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		return binary.AppendUvarint(b, v.Uint())
	case reflect.Float32:
		return binary.LittleEndian.AppendUint32(b, math.Float32bits(float32(v.Float())))
	case reflect.Float64:
		return binary.LittleEndian.AppendUint64(b, math.Float64bits(v.Float()))
	case reflect.String:
		b = binary.AppendUvarint(b, uint64(v.Len()))
		return append(b, v.String()...)
	case reflect.Slice:
		if v.IsNil() {
			return append(b, 0)
		}
		b = binary.AppendUvarint(b, uint64(v.Len())+1)
		switch v.Type().Elem().Kind() {
		case reflect.Uint8:
			return append(b, v.Bytes()...)
		case reflect.Float64:
			if v.Type().Elem() == float64Type {
				for _, f := range v.Interface().([]float64) {
					b = binary.LittleEndian.AppendUint64(b, math.Float64bits(f))
				}
				return b
			}
		}
		for i := 0; i < v.Len(); i++ {
			b = encodeValue(b, v.Index(i))
		}
		return b
	case reflect.Array:
		for i := 0; i < v.Len(); i++ {
			b = encodeValue(b, v.Index(i))
		}
		return b
	case reflect.Pointer:
		if v.IsNil() {
			return append(b, 0)
		}
		return encodeValue(append(b, 1), v.Elem())
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			b = encodeValue(b, v.Field(i))
		}
		return b
	}
	// describe has rejected every other kind before encoding starts.
	panic("cache: unsupported kind " + v.Kind().String())
}

var float64Type = reflect.TypeFor[float64]()

// decoder reads values back from a payload.
type decoder struct {
	b []byte
}

func (d *decoder) byte() (byte, error) {
	if len(d.b) == 0 {
		return 0, errShort
	}
	c := d.b[0]
	d.b = d.b[1:]
	return c, nil
}

func (d *decoder) uvarint() (uint64, error) {
	u, n := binary.Uvarint(d.b)
	if n <= 0 {
		return 0, errShort
	}
	d.b = d.b[n:]
	return u, nil
}

func (d *decoder) take(n int) ([]byte, error) {
	if n < 0 || n > len(d.b) {
		return nil, errShort
	}
	s := d.b[:n]
	d.b = d.b[n:]
	return s, nil
}

// length reads a slice or string length and checks it against the bytes
// left, each element taking at least minSize bytes, so that a bad length
// cannot trigger a huge allocation.
func (d *decoder) length(u uint64, minSize int) (int, error) {
	if u > uint64(len(d.b)/max(minSize, 1)) {
		return 0, errShort
	}
	return int(u), nil
}

func (d *decoder) decodeValue(v reflect.Value) error {
	switch v.Kind() {
	case reflect.Bool:
		c, err := d.byte()
		if err != nil {
			return err
		}
		if c > 1 {
			return fmt.Errorf("bad bool byte %d", c)
		}
		v.SetBool(c == 1)
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		x, n := binary.Varint(d.b)
		if n <= 0 {
			return errShort
		}
		d.b = d.b[n:]
		if v.OverflowInt(x) {
			return fmt.Errorf("integer %d overflows %s", x, v.Type())
		}
		v.SetInt(x)
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		x, err := d.uvarint()
		if err != nil {
			return err
		}
		if v.OverflowUint(x) {
			return fmt.Errorf("integer %d overflows %s", x, v.Type())
		}
		v.SetUint(x)
	case reflect.Float32:
		s, err := d.take(4)
		if err != nil {
			return err
		}
		v.SetFloat(float64(math.Float32frombits(binary.LittleEndian.Uint32(s))))
	case reflect.Float64:
		s, err := d.take(8)
		if err != nil {
			return err
		}
		v.SetFloat(math.Float64frombits(binary.LittleEndian.Uint64(s)))
	case reflect.String:
		u, err := d.uvarint()
		if err != nil {
			return err
		}
		n, err := d.length(u, 1)
		if err != nil {
			return err
		}
		s, _ := d.take(n)
		v.SetString(string(s))
	case reflect.Slice:
		u, err := d.uvarint()
		if err != nil {
			return err
		}
		if u == 0 {
			v.SetZero()
			return nil
		}
		elem := v.Type().Elem()
		n, err := d.length(u-1, minEncodedSize(elem))
		if err != nil {
			return err
		}
		s := reflect.MakeSlice(v.Type(), n, n)
		switch {
		case elem.Kind() == reflect.Uint8:
			raw, _ := d.take(n)
			reflect.Copy(s, reflect.ValueOf(raw))
		case elem == float64Type:
			fs := s.Interface().([]float64)
			for i := range fs {
				raw, _ := d.take(8)
				fs[i] = math.Float64frombits(binary.LittleEndian.Uint64(raw))
			}
		default:
			for i := 0; i < n; i++ {
				if err := d.decodeValue(s.Index(i)); err != nil {
					return err
				}
			}
		}
		v.Set(s)
	case reflect.Array:
		for i := 0; i < v.Len(); i++ {
			if err := d.decodeValue(v.Index(i)); err != nil {
				return err
			}
		}
	case reflect.Pointer:
		c, err := d.byte()
		if err != nil {
			return err
		}
		switch c {
		case 0:
			v.SetZero()
		case 1:
			p := reflect.New(v.Type().Elem())
			if err := d.decodeValue(p.Elem()); err != nil {
				return err
			}
			v.Set(p)
		default:
			return fmt.Errorf("bad pointer byte %d", c)
		}
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if err := d.decodeValue(v.Field(i)); err != nil {
				return err
			}
		}
	default:
		panic("cache: unsupported kind " + v.Kind().String())
	}
	return nil
}

// minEncodedSize is a lower bound on the encoded size of a value of type t
// (0 for types that can encode to nothing, such as empty structs).
func minEncodedSize(t reflect.Type) int {
	switch t.Kind() {
	case reflect.Float32:
		return 4
	case reflect.Float64:
		return 8
	case reflect.Array:
		return t.Len() * minEncodedSize(t.Elem())
	case reflect.Struct:
		n := 0
		for i := 0; i < t.NumField(); i++ {
			n += minEncodedSize(t.Field(i).Type)
		}
		return n
	}
	return 1
}

// marshal encodes the value v points to.
func marshal(v any) ([]byte, error) {
	rv := reflect.ValueOf(v)
	if rv.Kind() != reflect.Pointer || rv.IsNil() {
		return nil, fmt.Errorf("cache: Put needs a non-nil pointer, got %T", v)
	}
	if _, err := fingerprint(rv.Type().Elem()); err != nil {
		return nil, err
	}
	return encodeValue(nil, rv.Elem()), nil
}

// unmarshal decodes payload into the value v points to.
func unmarshal(payload []byte, v any) error {
	rv := reflect.ValueOf(v)
	if rv.Kind() != reflect.Pointer || rv.IsNil() {
		return fmt.Errorf("cache: Get needs a non-nil pointer, got %T", v)
	}
	d := decoder{b: payload}
	if err := d.decodeValue(rv.Elem()); err != nil {
		return err
	}
	if len(d.b) != 0 {
		return errTrailing
	}
	return nil
}
