package main

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

const tinyManifest = "run: tiny\nprocesses:\n  - {name: inc, kind: ar1, rho: 0.9, sigma: 0.1, states: 5}\n"

// Issue 16 case 10: bad output locations are bad input (exit 2) with a
// plain sentence, not a failed job with the text of a system call.
func TestBadOutputLocations(t *testing.T) {
	dir := t.TempDir()
	m := filepath.Join(dir, "m.yaml")
	os.WriteFile(m, []byte(tinyManifest), 0o644)
	file := filepath.Join(dir, "a-file")
	os.WriteFile(file, []byte("x"), 0o644)
	dangling := filepath.Join(dir, "dangling")
	os.Symlink(filepath.Join(dir, "nowhere", "deeper"), dangling)
	for _, out := range []struct{ path, want string }{
		{file, "it exists and is not a folder"},
		{dangling, "it is a link to something that does not exist"},
		{"/proc/self", "no file can be created in it"},
	} {
		code, _, errOut := run(t, "run", m, "--out", out.path, "--cache", "off")
		if code != 2 || !strings.Contains(errOut, out.want) || strings.Count(strings.TrimSpace(errOut), "\n") != 0 || strings.Contains(errOut, "mkdir") {
			t.Errorf("--out %s: exit %d, %q; want exit 2, one line with %q", out.path, code, errOut, out.want)
		}
	}
}

// A manifest that is a FIFO with no writer is refused at once instead of
// blocking forever.
func TestFIFOManifestIsRefused(t *testing.T) {
	fifo := filepath.Join(t.TempDir(), "m.yaml")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skip("no FIFOs here:", err)
	}
	done := make(chan struct{})
	var code int
	var errOut string
	go func() {
		code, _, errOut = run(t, "run", fifo, "--cache", "off")
		close(done)
	}()
	select {
	case <-done:
	case <-time.After(time.Minute):
		t.Fatal("run blocked on a FIFO manifest")
	}
	if code != 2 || !strings.Contains(errOut, "not a regular file") {
		t.Errorf("exit %d, %q", code, errOut)
	}
}

// Numbers beyond float64 are named as such, in YAML and in draw tables;
// an error never repeats a 5 MB cell whole; a draw table that is a link
// to another file does not have that file's first line echoed.
func TestNumberRangeAndEchoes(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		manifest, table, want, not string
	}{
		{strings.Replace(tinyManifest, "sigma: 0.1", "sigma: 1e400", 1), "", "1e400 is beyond the range of double-precision numbers", "text"},
		{strings.Replace(tinyManifest, "sigma: 0.1", "sigma: 9e-400", 1), "", "9e-400 is too small for double precision and would be read as 0", ""},
		{strings.Replace(tinyManifest, "states: 5}", "states: 5, sweep: {draws: {file: d.csv}}}", 1), "rho\n1e400\n", "1e400 is beyond the range", ""},
		{strings.Replace(tinyManifest, "states: 5}", "states: 5, sweep: {draws: {file: d.csv}}}", 1), "rho\n" + strings.Repeat("7", 5<<20) + "\n", "bytes in all", ""},
		{strings.Replace(tinyManifest, "states: 5}", "states: 5, sweep: {draws: {file: link.csv}}}", 1), "", "has a header that is not a parameter name (not shown", "root:"},
	}
	os.Symlink("/etc/passwd", filepath.Join(dir, "link.csv"))
	for i, tc := range cases {
		m := filepath.Join(dir, "m.yaml")
		os.WriteFile(m, []byte(tc.manifest), 0o644)
		if tc.table != "" {
			os.WriteFile(filepath.Join(dir, "d.csv"), []byte(tc.table), 0o644)
		}
		code, _, errOut := run(t, "run", m, "--out", filepath.Join(dir, "out"), "--cache", "off")
		if code != 2 || !strings.Contains(errOut, tc.want) || (tc.not != "" && strings.Contains(errOut, tc.not)) || len(errOut) > 2000 {
			t.Errorf("case %d: exit %d, %.400q; want exit 2 with %q", i, code, errOut, tc.want)
		}
	}
}
