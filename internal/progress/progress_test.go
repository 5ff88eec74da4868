package progress

import (
	"bytes"
	"strings"
	"sync"
	"testing"
)

func TestInactiveWhenNotATerminal(t *testing.T) {
	var out bytes.Buffer
	b := New(100, &out, "solving")
	if b.Active() {
		t.Fatal("a bytes.Buffer is not a terminal")
	}
	b.Done(40)
	b.Writer().Write([]byte("a log line\n"))
	b.Close()
	if out.String() != "a log line\n" {
		t.Fatalf("inactive bar wrote %q", out.String())
	}
}

func TestBarShowsCountRateAndTimeLeft(t *testing.T) {
	var out bytes.Buffer
	b := newBar(10, &out, "solving", true)
	var wg sync.WaitGroup
	for range 10 {
		wg.Add(1)
		go func() { defer wg.Done(); b.Done(1) }()
	}
	wg.Wait()
	b.Close()
	s := out.String()
	for _, want := range []string{"solving", "10/10", "jobs/s", "100%"} {
		if !strings.Contains(s, want) {
			t.Errorf("bar output lacks %q: %q", want, s)
		}
	}
	if !strings.HasSuffix(s, "\n") {
		t.Errorf("Close did not end the line: %q", s)
	}
}

func TestWriterKeepsLogLinesApartFromTheBar(t *testing.T) {
	var out bytes.Buffer
	b := newBar(4, &out, "solving", true)
	b.Done(1)
	w := b.Writer()
	w.Write([]byte("level=WARN msg=fallback\n"))
	b.Close()
	s := out.String()
	i := strings.Index(s, "level=WARN")
	if i < 0 {
		t.Fatalf("log line lost: %q", s)
	}
	// The log line starts on a cleared line: the erase sequence precedes it.
	if !strings.HasSuffix(s[:i], "\033[2K\r") {
		t.Errorf("bar not erased before the log line: %q", s[:i])
	}
	if !strings.Contains(s[i:], "1/4") {
		t.Errorf("bar not redrawn after the log line: %q", s[i:])
	}
}
