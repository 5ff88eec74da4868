package logging

import (
	"bytes"
	"encoding/json"
	"log/slog"
	"strings"
	"testing"
)

func TestJSONLinesParse(t *testing.T) {
	var out bytes.Buffer
	log, err := New(&out, "json", slog.LevelInfo)
	if err != nil {
		t.Fatal(err)
	}
	log.Info("job done", "job", 7, "spec_hash", "ab12", "cached", true)
	log.Debug("hidden")
	var rec map[string]any
	if err := json.Unmarshal(out.Bytes(), &rec); err != nil {
		t.Fatalf("not one JSON object: %q: %v", out.String(), err)
	}
	if rec["msg"] != "job done" || rec["job"] != 7.0 || rec["cached"] != true || rec["level"] != "INFO" {
		t.Fatalf("record %v", rec)
	}
}

func TestTextAndBadFormat(t *testing.T) {
	var out bytes.Buffer
	log, err := New(&out, "", slog.LevelInfo)
	if err != nil {
		t.Fatal(err)
	}
	log.Warn("fallback", "states", 3)
	if !strings.Contains(out.String(), "level=WARN msg=fallback states=3") {
		t.Fatalf("text record %q", out.String())
	}
	if _, err := New(&out, "xml", slog.LevelInfo); err == nil || !strings.Contains(err.Error(), "want text or json") {
		t.Fatalf("bad format: %v", err)
	}
}
