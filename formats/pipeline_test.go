package formats

import (
	"errors"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// TestEndPoint: the chain hash EndPoint returns is the one ChainHash
// computes from the same records and the one written in the points table;
// a finished point takes no more ages.
func TestEndPoint(t *testing.T) {
	set := sweepSet(t, 3, 2, 5)
	dir := t.TempDir()
	w, err := Create(dir, set.Header, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for p := 0; p < 3; p++ {
		recs := set.Records[2*p : 2*p+2]
		for _, r := range recs {
			if err := w.Append(r); err != nil {
				t.Fatal(err)
			}
		}
		h, err := w.EndPoint()
		if err != nil {
			t.Fatal(err)
		}
		if want := ChainHash(recs); h != want {
			t.Errorf("point %d: EndPoint gives %s, ChainHash %s", p, h, want)
		}
		got = append(got, h)
		if p == 0 {
			late := set.Records[1]
			late.Age = 5
			var re *RecordError
			if err := w.Append(late); !errors.As(err, &re) {
				t.Errorf("an age appended after EndPoint: got %v, want a *RecordError", err)
			}
		}
	}
	res, err := w.Close()
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range res.Points {
		if p.ChainHash != got[i] {
			t.Errorf("point %d: the points table says %s, EndPoint said %s", i, p.ChainHash, got[i])
		}
	}
	// The same set written without EndPoint has the same bytes.
	other := t.TempDir()
	if _, err := Write(other, set, Options{}); err != nil {
		t.Fatal(err)
	}
	for _, f := range res.Files {
		a, b := readFile(t, f.Path), readFile(t, filepath.Join(other, filepath.Base(f.Path)))
		if string(a) != string(b) {
			t.Errorf("%s differs when written without EndPoint", filepath.Base(f.Path))
		}
	}
}

// failingSink fails every write after the first n.
type failingSink struct {
	n       int
	written int
}

var errDiskFull = errors.New("no space left on device (simulated)")

func (s *failingSink) write(arrow.RecordBatch) error {
	if s.written >= s.n {
		return errDiskFull
	}
	s.written++
	return nil
}
func (s *failingSink) finish(map[string]string) error { return nil }
func (s *failingSink) commit() error                  { return nil }
func (s *failingSink) discard()                       {}
func (s *failingSink) digest() string                 { return "" }

// TestEncoderError: a write that fails on a table's encoder goroutine is
// reported by a later flush or by finish, and the batches after it are
// released without being written (the checked allocator ends at zero).
func TestEncoderError(t *testing.T) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	schema := schemaFor(TableTransitions, 1, nil)
	sink := &failingSink{n: 1}
	tw := newTableWriter(TableTransitions, schema, sink, mem, 4, make(chan struct{}, 1))
	var flushErr error
	for row := 0; row < 40 && flushErr == nil; row++ {
		tw.i32(0).Append(0)
		tw.i32(1).Append(0)
		tw.i32(2).Append(int32(row))
		tw.i32(3).Append(0)
		tw.f64(4).Append(0.5)
		flushErr = tw.endRow()
	}
	finishErr := tw.finish()
	tw.release()
	if !errors.Is(flushErr, errDiskFull) && !errors.Is(finishErr, errDiskFull) {
		t.Fatalf("flush gave %v and finish %v; want the sink's error", flushErr, finishErr)
	}
	if !errors.Is(finishErr, errDiskFull) {
		t.Errorf("finish gave %v after a failed write; want the sink's error", finishErr)
	}
	if sink.written != 1 {
		t.Errorf("%d batches written, want 1 before the failure", sink.written)
	}
}

// TestAbortStopsEncoders: Abort while batches are being encoded leaves no
// file behind.
func TestAbortStopsEncoders(t *testing.T) {
	set := sweepSet(t, 40, 1, 9)
	dir := t.TempDir()
	w, err := Create(dir, set.Header, Options{BatchRows: 64})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range set.Records {
		if err := w.Append(r); err != nil {
			t.Fatal(err)
		}
	}
	w.Abort()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		t.Errorf("%s left behind after Abort", e.Name())
	}
}

// TestNoPointList: without the point list a set's files are the same
// bytes and Result.Points is nil.
func TestNoPointList(t *testing.T) {
	set := sweepSet(t, 4, 1, 5)
	a, b := t.TempDir(), t.TempDir()
	ra, err := Write(a, set, Options{})
	if err != nil {
		t.Fatal(err)
	}
	rb, err := Write(b, set, Options{NoPointList: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(ra.Points) != 4 || rb.Points != nil {
		t.Fatalf("point lists of %d and %d entries, want 4 and none", len(ra.Points), len(rb.Points))
	}
	for _, f := range ra.Files {
		if string(readFile(t, f.Path)) != string(readFile(t, filepath.Join(b, filepath.Base(f.Path)))) {
			t.Errorf("%s differs without the point list", filepath.Base(f.Path))
		}
	}
}
