package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func TestWriteReplacesWholeOrNotAtAll(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "f.json")
	if err := WriteBytes(path, []byte("first"), 0o644); err != nil {
		t.Fatal(err)
	}
	// A failing writer leaves the old content and no temporary file.
	boom := errors.New("boom")
	err := Write(path, 0o644, func(w io.Writer) error {
		w.Write([]byte("half"))
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("error %v does not wrap the writer's", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "first" {
		t.Errorf("content %q after a failed write, want the old one", b)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("%d entries left in the folder, want 1", len(entries))
	}
	if err := WriteBytes(path, []byte("second"), 0o755); err != nil {
		t.Fatal(err)
	}
	st, _ := os.Stat(path)
	if b, _ := os.ReadFile(path); string(b) != "second" || st.Mode().Perm() != 0o755 {
		t.Errorf("content %q mode %v", b, st.Mode().Perm())
	}
}
