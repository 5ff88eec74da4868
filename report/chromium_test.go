package report

import (
	"bytes"
	"context"
	"encoding/json"
	"image/color"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"gridstage/formats"
)

// chromium finds Debian's headless browser. Outside CI a missing browser
// skips the test; in CI (CI=true) it fails, because .ci/run installs it.
func chromium(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatal("chromium is missing in CI (.ci/run installs it: apt-get install -y --no-install-recommends chromium)")
	}
	t.Skip("skipping browser check: chromium not installed (apt-get install -y --no-install-recommends chromium)")
	return ""
}

// renderInBrowser loads page in a fresh headless Chromium profile, writing a
// screenshot, a PDF and a network log, and returns their paths. Host
// resolution is mapped to nothing, so even the browser's own background
// traffic cannot leave the machine.
func renderInBrowser(t *testing.T, bin, page string) (shot, pdf, netlog string) {
	t.Helper()
	dir := t.TempDir()
	shot, pdf, netlog = filepath.Join(dir, "shot.png"), filepath.Join(dir, "page.pdf"), filepath.Join(dir, "net.json")
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin,
		"--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir="+filepath.Join(dir, "profile"),
		"--host-resolver-rules=MAP * ~NOTFOUND",
		"--log-net-log="+netlog,
		"--hide-scrollbars", "--window-size=1200,3000",
		"--screenshot="+shot, "--print-to-pdf="+pdf, "--no-pdf-header-footer",
		"file://"+page)
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("chromium failed: %v\n%s", err, out)
	}
	return shot, pdf, netlog
}

// pageRequests lists the URLs a page asked the network stack for. In
// Chromium's net log every URL request starts with a URL_REQUEST_START_JOB
// event; requests made by a file:// page carry the opaque initiator "null"
// and a file:// network isolation key, while the browser's own background
// requests carry the initiator "not an origin".
func pageRequests(t *testing.T, netlog string) []string {
	t.Helper()
	raw, err := os.ReadFile(netlog)
	if err != nil {
		t.Fatal(err)
	}
	// Chromium may leave the final "]}" off a log closed at exit.
	text := strings.TrimSpace(string(raw))
	if !strings.HasSuffix(text, "}") {
		text = strings.TrimSuffix(text, ",") + "]}"
	}
	var log struct {
		Constants struct {
			EventTypes map[string]int `json:"logEventTypes"`
		} `json:"constants"`
		Events []struct {
			Type   int            `json:"type"`
			Params map[string]any `json:"params"`
		} `json:"events"`
	}
	if err := json.Unmarshal([]byte(text), &log); err != nil {
		t.Fatalf("net log is not JSON: %v", err)
	}
	start, ok := log.Constants.EventTypes["URL_REQUEST_START_JOB"]
	if !ok {
		t.Fatal("net log lacks the URL_REQUEST_START_JOB event type")
	}
	var urls []string
	for _, e := range log.Events {
		url, _ := e.Params["url"].(string)
		if e.Type != start || url == "" { // the end of a job carries no URL
			continue
		}
		initiator, _ := e.Params["initiator"].(string)
		nik, _ := e.Params["network_isolation_key"].(string)
		if initiator != "not an origin" || strings.Contains(nik, "file://") {
			urls = append(urls, url)
		}
	}
	return urls
}

// The report for an example run renders in a real browser to a screenshot
// and a PDF, fetches nothing, and is visibly not blank: it shows the three
// verdict colours.
func TestReportRendersInChromium(t *testing.T) {
	if testing.Short() {
		t.Skip("browser check skipped in -short mode")
	}
	bin := chromium(t)
	dir := t.TempDir()

	// Control: a page with two external references must show up in the
	// net log, or the absence of requests below would prove nothing.
	control := filepath.Join(dir, "control.html")
	os.WriteFile(control, []byte(`<!DOCTYPE html><p>probe</p><img src="http://gridstage.invalid/probe.png"><link rel="stylesheet" href="https://gridstage.invalid/x.css">`), 0o644)
	_, _, netlog := renderInBrowser(t, bin, control)
	if got := pageRequests(t, netlog); len(got) != 2 {
		t.Fatalf("control page: detector saw %q, want its two external requests", got)
	}

	// The example run: the test manifest solved and written as gridstage
	// run writes it, read back through the formats reader.
	run, err := Load(writeRun(t, exampleManifest, formats.Parquet))
	if err != nil {
		t.Fatal(err)
	}
	page := filepath.Join(dir, "report.html")
	var buf bytes.Buffer
	if err := Write(&buf, run, Options{}); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(page, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	shot, pdf, netlog := renderInBrowser(t, bin, page)
	if got := pageRequests(t, netlog); len(got) != 0 {
		t.Errorf("the report made network requests: %q", got)
	}
	checkScreenshot(t, shot)
	checkPDF(t, pdf)
}

// checkScreenshot decodes the PNG and requires real content: many colours,
// a good share of non-background pixels, and each verdict colour (Okabe-Ito
// green, orange, vermillion) on screen.
func checkScreenshot(t *testing.T, path string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	b := img.Bounds()
	distinct := map[color.RGBA]bool{}
	var ink int
	verdicts := map[string]color.RGBA{"sound": {0x00, 0x9e, 0x73, 0xff}, "caution": {0xe6, 0x9f, 0x00, 0xff}, "unfit": {0xd5, 0x5e, 0x00, 0xff}}
	hits := map[string]int{}
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			c := color.RGBAModel.Convert(img.At(x, y)).(color.RGBA)
			distinct[c] = true
			if !near(c, color.RGBA{0xff, 0xff, 0xff, 0xff}, 12) && !near(c, color.RGBA{0xfb, 0xfa, 0xf7, 0xff}, 12) {
				ink++
			}
			for name, v := range verdicts {
				if near(c, v, 20) {
					hits[name]++
				}
			}
		}
	}
	total := b.Dx() * b.Dy()
	t.Logf("screenshot: %d distinct colours, %.1f%% ink, verdict-colour pixels %v", len(distinct), 100*float64(ink)/float64(total), hits)
	// Thresholds: a blank or error page has a handful of colours and about
	// 1% ink; the example report's first 3000 pixel rows were measured at
	// about 3800 colours and 16% ink, so 500 colours and 5% ink leave room
	// for font differences while still catching an empty page.
	if len(distinct) < 500 {
		t.Errorf("screenshot has only %d distinct colours: blank or broken page", len(distinct))
	}
	if frac := float64(ink) / float64(total); frac < 0.05 {
		t.Errorf("only %.1f%% of the screenshot differs from the background", 100*frac)
	}
	for name := range verdicts {
		if hits[name] < 50 {
			t.Errorf("verdict colour %q barely on screen (%d pixels)", name, hits[name])
		}
	}
}

func near(a, b color.RGBA, tol int) bool {
	d := func(x, y uint8) int {
		if x > y {
			return int(x - y)
		}
		return int(y - x)
	}
	return d(a.R, b.R) <= tol && d(a.G, b.G) <= tol && d(a.B, b.B) <= tol
}

var pdfPage = regexp.MustCompile(`/Type\s*/Page[^s]`)

// checkPDF requires a PDF with several pages (the print style breaks before
// each chain).
func checkPDF(t *testing.T, path string) {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(raw, []byte("%PDF-")) {
		t.Fatalf("print output is not a PDF (starts %q)", raw[:min(8, len(raw))])
	}
	if n := len(pdfPage.FindAll(raw, -1)); n < 4 {
		t.Errorf("PDF has %d pages, want at least 4 (summary plus one per charted chain)", n)
	}
}

// The page of a 50,000-point run renders in the browser as well: it
// fetches nothing and shows its maps in the three verdict colours (the
// map's legend carries the one no chain of that run earns).
func TestLargeReportRendersInChromium(t *testing.T) {
	if testing.Short() {
		t.Skip("browser check skipped in -short mode")
	}
	bin := chromium(t)
	page := filepath.Join(t.TempDir(), "report.html")
	if err := os.WriteFile(page, largeReport(t), 0o644); err != nil {
		t.Fatal(err)
	}
	shot, pdf, netlog := renderInBrowser(t, bin, page)
	if got := pageRequests(t, netlog); len(got) != 0 {
		t.Errorf("the report made network requests: %q", got)
	}
	checkScreenshot(t, shot)
	checkPDF(t, pdf)
}
