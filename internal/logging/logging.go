// Package logging builds the structured logger of a run (log/slog), as
// text for people or JSON lines for log collectors.
package logging

import (
	"fmt"
	"io"
	"log/slog"
)

// Formats lists the accepted --log-format values; the first is the default.
var Formats = []string{"text", "json"}

// New returns a logger writing records at level or above to w, in format
// "text" (key=value) or "json" (one object per line); "" means text.
func New(w io.Writer, format string, level slog.Level) (*slog.Logger, error) {
	opts := &slog.HandlerOptions{Level: level}
	switch format {
	case "", "text":
		return slog.New(slog.NewTextHandler(w, opts)), nil
	case "json":
		return slog.New(slog.NewJSONHandler(w, opts)), nil
	}
	return nil, fmt.Errorf("log format %q: want text or json", format)
}
