package arrays

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"gridstage/internal/pyref"
)

// readBack is what the Python program below reports for each array of a
// file: the shape numpy or scipy gives it, and its elements in C order —
// floats as IEEE 754 bit patterns in hex, so that equality is exact.
type readBack struct {
	Shape []int    `json:"shape"`
	Kind  string   `json:"kind"`
	Bits  []string `json:"bits"`
	Ints  []int64  `json:"ints"`
	Text  []string `json:"text"`
}

// readWithNumpyScipy loads an .npz file with numpy.load (allow_pickle
// False: plain arrays only) and a MAT-file with scipy.io.loadmat (Debian
// python3-numpy and python3-scipy, independent readers of the two formats).
const readWithNumpyScipy = `
import struct
import scipy.io
def describe(a):
    a = np.asarray(a)
    d = {"shape": list(a.shape), "kind": a.dtype.kind, "bits": [], "ints": [], "text": []}
    flat = a.reshape(-1)
    if a.dtype.kind == "f":
        d["bits"] = ["%016x" % struct.unpack("<Q", struct.pack("<d", float(v)))[0] for v in flat]
    elif a.dtype.kind in "iu":
        d["ints"] = [int(v) for v in flat]
    else:
        d["text"] = [str(v) for v in flat]
    return d
out = {"npz": {}, "mat": {}}
with np.load(data["npz"], allow_pickle=False) as z:
    for k in z.files:
        out["npz"][k] = describe(z[k])
m = scipy.io.loadmat(data["mat"], chars_as_strings=True)
for k, v in m.items():
    if not k.startswith("__"):
        out["mat"][k] = describe(v)
out["header"] = m["__header__"].decode("ascii")
print(json.dumps(out))
`

func bitsOf(v []float64) []string {
	out := make([]string, len(v))
	for i, x := range v {
		out[i] = strconv.FormatUint(math.Float64bits(x), 16)
		for len(out[i]) < 16 {
			out[i] = "0" + out[i]
		}
	}
	return out
}

// TestEncodersAgainstNumpyScipy writes arrays of every supported type and
// rank, with awkward values (−0, subnormals, the extremes of float64 and
// int32, non-ASCII text), and requires numpy and scipy to read back the
// same shapes and bit-identical elements.
func TestEncodersAgainstNumpyScipy(t *testing.T) {
	tiny := math.SmallestNonzeroFloat64
	arrays := []Array{
		Floats("grid", []float64{-1.5, 0, 1.5, 2, 3, 4}, 3, 2),
		Floats("cube", []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11}, 2, 3, 2),
		Floats("vector", []float64{math.Copysign(0, -1), tiny, math.MaxFloat64, 0.1}, 4),
		Floats("scalar", []float64{math.Pi}),
		Floats("empty", nil, 0),
		Ints("matched", []int32{4, 2, math.MaxInt32, math.MinInt32}, 2, 2),
		Scalar("spec_hash", "9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08"),
		Texts("param_names", []string{"rho", "sigma_e", "σ"}),
		Texts("no_names", nil),
	}
	dir := t.TempDir()
	var npz, mat bytes.Buffer
	if err := WriteNpz(&npz, arrays); err != nil {
		t.Fatal(err)
	}
	if err := WriteMat(&mat, arrays); err != nil {
		t.Fatal(err)
	}
	in := map[string]string{"npz": filepath.Join(dir, "a.npz"), "mat": filepath.Join(dir, "a.mat")}
	os.WriteFile(in["npz"], npz.Bytes(), 0o644)
	os.WriteFile(in["mat"], mat.Bytes(), 0o644)
	var got struct {
		Npz, Mat map[string]readBack
		Header   string
	}
	pyref.Eval(t, in, readWithNumpyScipy, &got, "scipy.io")
	// loadmat strips the header's trailing spaces.
	if got.Header != matHeaderText {
		t.Errorf("scipy read the header text %q", got.Header)
	}
	for _, a := range arrays {
		n, ok := got.Npz[a.Name]
		if !ok {
			t.Errorf("numpy found no %s", a.Name)
			continue
		}
		m, ok := got.Mat[a.Name]
		if !ok {
			t.Errorf("scipy found no %s", a.Name)
			continue
		}
		// numpy keeps the shape; MATLAB has at least two dimensions.
		wantMat := append([]int(nil), a.Shape...)
		switch len(wantMat) {
		case 0:
			wantMat = []int{1, 1}
		case 1:
			wantMat = append(wantMat, 1)
		}
		if a.Text != nil {
			// A char matrix comes back from loadmat as one string per row.
			wantMat = []int{len(a.Text)}
			if len(a.Text) == 0 {
				wantMat = []int{0}
			}
		}
		if !equalInts(n.Shape, nonNil(a.Shape)) {
			t.Errorf("%s: numpy shape %v, want %v", a.Name, n.Shape, a.Shape)
		}
		if !equalInts(m.Shape, wantMat) {
			t.Errorf("%s: scipy shape %v, want %v", a.Name, m.Shape, wantMat)
		}
		switch {
		case a.Float != nil:
			if want := bitsOf(a.Float); !equalStrings(n.Bits, want) || !equalStrings(m.Bits, want) {
				t.Errorf("%s: numpy bits %v, scipy bits %v, want %v", a.Name, n.Bits, m.Bits, want)
			}
		case a.Int != nil:
			want := make([]int64, len(a.Int))
			for i, v := range a.Int {
				want[i] = int64(v)
			}
			if !equalInt64s(n.Ints, want) || !equalInt64s(m.Ints, want) || n.Kind != "i" || m.Kind != "i" {
				t.Errorf("%s: numpy %v (%s), scipy %v (%s), want %v", a.Name, n.Ints, n.Kind, m.Ints, m.Kind, want)
			}
		default:
			if !equalStrings(n.Text, a.Text) {
				t.Errorf("%s: numpy text %q, want %q", a.Name, n.Text, a.Text)
			}
			// loadmat returns a char matrix's rows padded to the longest.
			width := 0
			for _, s := range a.Text {
				width = max(width, len([]rune(s)))
			}
			var want []string
			for _, s := range a.Text {
				for len([]rune(s)) < width {
					s += " "
				}
				want = append(want, s)
			}
			if !equalStrings(m.Text, want) {
				t.Errorf("%s: scipy text %q, want %q", a.Name, m.Text, want)
			}
		}
	}
}

func nonNil(v []int) []int {
	if v == nil {
		return []int{}
	}
	return v
}

func equalInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func equalInt64s(a, b []int64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func equalStrings(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
