package cache

import (
	"bytes"
	"math"
	"reflect"
	"strings"
	"testing"
)

type inner struct {
	Level []float64
	Name  string
}

type everything struct {
	B      bool
	I      int
	I8     int8
	I64    int64
	U      uint
	U16    uint16
	F32    float32
	F      float64
	S      string
	Bytes  []byte
	Floats []float64
	Nil    []float64
	Empty  []float64
	Ints   []int
	Arr    [3]float64
	P      *inner
	PNil   *inner
	Inners []inner
	Nested [][]float64
}

func sample() everything {
	return everything{
		B: true, I: -123456789, I8: -7, I64: math.MinInt64, U: 42, U16: 65535,
		F32: -1.5, F: math.Copysign(0, -1), S: "ρ = 0.95",
		Bytes:  []byte{0, 1, 255},
		Floats: []float64{math.NaN(), math.Float64frombits(0x7ff8dead0000beef), math.Inf(-1), 5e-324, math.Copysign(0, -1), 1.0 / 3},
		Empty:  []float64{},
		Ints:   []int{0, -1, math.MaxInt},
		Arr:    [3]float64{1, 2, 3},
		P:      &inner{Level: []float64{0.25}, Name: "x"},
		Inners: []inner{{Name: "a"}, {Level: []float64{}, Name: ""}},
		Nested: [][]float64{nil, {}, {1}},
	}
}

// TestCodecRoundTripKeepsEveryBit checks that decoding gives back the same
// value bit for bit: NaN payloads and the sign of zero included (exact
// equality is the point here, so there is no tolerance).
func TestCodecRoundTripKeepsEveryBit(t *testing.T) {
	in := sample()
	b, err := marshal(&in)
	if err != nil {
		t.Fatal(err)
	}
	var out everything
	if err := unmarshal(b, &out); err != nil {
		t.Fatal(err)
	}
	again := encodeValue(nil, reflect.ValueOf(out))
	if !bytes.Equal(b, again) {
		t.Fatal("re-encoding the decoded value gives other bytes")
	}
	if math.Float64bits(out.F) != 1<<63 {
		t.Errorf("negative zero came back as %v", out.F)
	}
	for i, f := range in.Floats {
		if math.Float64bits(out.Floats[i]) != math.Float64bits(f) {
			t.Errorf("Floats[%d]: bits %x, want %x", i, math.Float64bits(out.Floats[i]), math.Float64bits(f))
		}
	}
	if out.Nil != nil || out.Empty == nil || len(out.Empty) != 0 {
		t.Errorf("nil and empty slices not kept apart: %v %v", out.Nil, out.Empty)
	}
	if out.PNil != nil || out.P == nil || out.P.Name != "x" || out.Nested[0] != nil || out.Nested[1] == nil {
		t.Errorf("pointers or nested slices changed: %+v", out)
	}
	if out.I64 != math.MinInt64 || out.U16 != 65535 || out.S != in.S || out.Arr != in.Arr {
		t.Errorf("scalars changed: %+v", out)
	}
}

func TestCodecRejectsShortAndLongPayloads(t *testing.T) {
	in := sample()
	b, _ := marshal(&in)
	for n := 0; n < len(b); n++ {
		var out everything
		if err := unmarshal(b[:n], &out); err == nil {
			t.Fatalf("payload cut to %d of %d bytes decoded", n, len(b))
		}
	}
	var out everything
	if err := unmarshal(append(b, 0), &out); err != errTrailing {
		t.Fatalf("trailing byte: %v", err)
	}
}

func TestCodecRejectsUnsupportedTypes(t *testing.T) {
	type withMap struct{ M map[string]float64 }
	type withHidden struct {
		A      float64
		hidden int //lint:ignore U1000 an unexported field is what the codec must refuse
	}
	type withAny struct{ V any }
	for _, v := range []any{&withMap{}, &withHidden{}, &withAny{}} {
		_, err := marshal(v)
		if err == nil || !strings.HasPrefix(err.Error(), "cache: cannot store") {
			t.Errorf("%T: error %v", v, err)
		}
	}
	if _, err := marshal(everything{}); err == nil {
		t.Error("a non-pointer was accepted")
	}
}

func TestFingerprintFollowsLayout(t *testing.T) {
	type a struct{ X, Y float64 }
	type b struct{ X, Y float64 }
	type c struct {
		X float64
		Z float64
	}
	type d struct{ X, Y, W float64 }
	fa, _ := fingerprint(reflect.TypeFor[a]())
	fb, _ := fingerprint(reflect.TypeFor[b]())
	fc, _ := fingerprint(reflect.TypeFor[c]())
	fd, _ := fingerprint(reflect.TypeFor[d]())
	if fa != fb {
		t.Error("same layout, different fingerprints")
	}
	if fa == fc || fa == fd {
		t.Error("renamed or added field kept the fingerprint")
	}
}

func FuzzDecode(f *testing.F) {
	in := sample()
	b, _ := marshal(&in)
	f.Add(b)
	f.Add([]byte{})
	f.Add([]byte{0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0x01})
	f.Fuzz(func(t *testing.T, b []byte) {
		var out everything
		_ = unmarshal(b, &out) // must not panic or allocate without bound
	})
}
