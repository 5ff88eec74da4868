// Package progress shows a run's progress on a terminal: jobs done out of
// the total, the rate, and the time left. When the output is not a
// terminal (a file, a pipe, a batch system's log) it writes nothing.
package progress

import (
	"io"
	"os"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
)

// Bar counts finished jobs. Its methods are safe for concurrent use; all
// of them do nothing on an inactive Bar (output not a terminal).
type Bar struct {
	mu  sync.Mutex
	out io.Writer
	pb  *progressbar.ProgressBar
	// pending counts jobs not yet shown; the bar is redrawn at most every
	// redraw interval (here, not in the library, so that a redraw after a
	// log line is never throttled away).
	pending   int
	lastDrawn time.Time
}

const redraw = 100 * time.Millisecond

// IsTerminal reports whether w is a terminal.
func IsTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// New returns a bar for total jobs drawn on w, with a short description
// ("solving", …) in front; the bar is active only when w is a terminal.
func New(total int, w io.Writer, description string) *Bar {
	return newBar(total, w, description, total > 0 && IsTerminal(w))
}

func newBar(total int, w io.Writer, description string, active bool) *Bar {
	b := &Bar{out: w}
	if !active {
		return b
	}
	b.pb = progressbar.NewOptions(total,
		progressbar.OptionSetWriter(w),
		progressbar.OptionSetDescription(description),
		progressbar.OptionSetItsString("jobs"),
		progressbar.OptionShowCount(), // done/total
		progressbar.OptionShowIts(),   // rate
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionSetElapsedTime(true), // [elapsed:left]
		progressbar.OptionSetWidth(30),
		progressbar.OptionUseANSICodes(true),
		progressbar.OptionSetRenderBlankState(true),
	)
	return b
}

// Active reports whether the bar is drawn.
func (b *Bar) Active() bool { return b.pb != nil }

// Done adds n finished jobs.
func (b *Bar) Done(n int) {
	if b.pb == nil {
		return
	}
	b.mu.Lock()
	defer b.mu.Unlock()
	b.pending += n
	if time.Since(b.lastDrawn) >= redraw {
		b.flush()
	}
}

// flush draws the pending jobs; b.mu is held.
func (b *Bar) flush() {
	b.pb.Add(b.pending)
	b.pending = 0
	b.lastDrawn = time.Now()
}

// Close leaves the bar's last state on its line and moves to the next
// line. Call it once, when the run ends (finished or not).
func (b *Bar) Close() {
	if b.pb == nil {
		return
	}
	b.mu.Lock()
	defer b.mu.Unlock()
	b.flush()
	b.pb.Exit()
	io.WriteString(b.out, "\n")
	b.pb = nil
}

// Writer returns a writer to the bar's output that erases the bar before
// each write and redraws it after, so that log lines printed while the
// bar runs do not run into it. Give it to the logger. On an inactive Bar
// it returns the output itself.
func (b *Bar) Writer() io.Writer {
	if b.pb == nil {
		return b.out
	}
	return lineWriter{b}
}

type lineWriter struct{ b *Bar }

func (l lineWriter) Write(p []byte) (int, error) {
	b := l.b
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.pb == nil {
		return b.out.Write(p)
	}
	b.pb.Clear()
	n, err := b.out.Write(p)
	if !b.pb.IsFinished() {
		b.pb.RenderBlank()
	}
	return n, err
}
