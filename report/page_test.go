package report

import (
	"bytes"
	"fmt"
	"regexp"
	"strings"
	"testing"
)

func render(t *testing.T, r Run, opt Options) string {
	t.Helper()
	var buf bytes.Buffer
	if err := Write(&buf, r, opt); err != nil {
		t.Fatal(err)
	}
	return buf.String()
}

// externalRef finds any reference the page could fetch: src, href, url()
// or @import that is not a fragment or a data URI.
var externalRef = regexp.MustCompile(`(?i)(?:src|href)\s*=\s*"(?:[^"#d]|d[^a]|da[^t]|dat[^a]|data[^:])[^"]*"|url\(\s*['"]?(?:[^'")d]|d[^a])|@import|<script|<link`)

func TestPageIsSelfContained(t *testing.T) {
	// The detector itself: it must flag fetchable references and pass
	// fragments and data URIs.
	for _, bad := range []string{`<img src="https://x/y.png">`, `<a href="page.html">`, `<img src="//cdn/x">`,
		`background: url(http://x)`, `@import "x.css"`, `<script>`, `<link rel=stylesheet>`, `<img src="dot.svg">`} {
		if !externalRef.MatchString(bad) {
			t.Errorf("detector misses %q", bad)
		}
	}
	for _, good := range []string{`<a href="#c-0-1-0">`, `<img src="data:image/svg+xml;base64,AAAA">`} {
		if externalRef.MatchString(good) {
			t.Errorf("detector flags %q", good)
		}
	}
	html := render(t, exampleRun(t), Options{})
	if m := externalRef.FindString(html); m != "" {
		t.Errorf("page references something outside itself: %q", m)
	}
	for _, scheme := range []string{`src="http`, `href="http`, `src="//`, `href="//`} {
		if strings.Contains(html, scheme) {
			t.Errorf("page contains %s", scheme)
		}
	}
	if n := strings.Count(html, `src="data:image/svg&#43;xml;base64,`); n < 8 {
		t.Errorf("%d embedded figures, want at least 8 (3 chains × 3 + life cycle)", n)
	}
}

func TestPageShowsVerdictsInWords(t *testing.T) {
	r := exampleRun(t)
	html := render(t, r, Options{})
	// Three verdicts in the AR(1) job (sound, caution, unfit) and three
	// sound Rouwenhorst ages.
	for _, want := range []string{
		"4 sound", "1 use with care", "1 do not use",
		"kestrel-bay-earnings", r.ManifestHash, "5e1f0c3a9b7d2e4f60718293a4b5c6d7e8f90123456789abcdef0123456789ab",
		"Warning: Use with care", "Warning: Do not use", "fell back", "understated",
		"point 2 (rho=0.99)", "earnings-by-age", "Grid and probability mass by age",
		"@media print", "@page",
	} {
		if !strings.Contains(html, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	// Every chain has a table row with its verdict in words.
	if got := strings.Count(html, `<tr class="`); got != r.Chains() {
		t.Errorf("%d summary rows, want one per chain (%d)", got, r.Chains())
	}
}

func TestPageIsDeterministic(t *testing.T) {
	a := render(t, exampleRun(t), Options{})
	b := render(t, exampleRun(t), Options{})
	if a != b {
		t.Error("two renderings of the same run differ")
	}
}

func TestFigureCapKeepsTheWorstChains(t *testing.T) {
	html := render(t, exampleRun(t), Options{MaxFigureChains: 1})
	// Only the unfit chain (point 2) gets figures.
	if got := strings.Count(html, `<article class="chain"`); got != 1 {
		t.Fatalf("%d charted chains, want 1", got)
	}
	if !strings.Contains(html, `<article class="chain" id="c-0-2-0">`) {
		t.Error("the cap did not keep the unfit chain")
	}
	if !strings.Contains(html, "Figures for 5 more chains are not shown") {
		t.Error("the page does not say how many chains lack figures")
	}
}

func TestFailedChecksRaiseAWarning(t *testing.T) {
	r := exampleRun(t)
	r.Checks = append(r.Checks, Check{Subject: "earnings.transitions.parquet", Detail: "content hash differs from the recorded one"})
	html := render(t, r, Options{})
	if !strings.Contains(html, "1 check on the files failed") || !strings.Contains(html, "content hash differs") {
		t.Error("a failed file check is not shown as a warning")
	}
}

func TestLongGlanceListKeepsEveryTroubledChain(t *testing.T) {
	var items []glanceItem
	for i := 0; i < 100; i++ {
		l := Sound
		if i%10 == 9 {
			l = Unfit
		}
		items = append(items, glanceItem{Level: l, Anchor: fmt.Sprint(i)})
	}
	out, more := trimGlance(items)
	if len(out) != glanceLimit || more != [3]int{100 - glanceLimit, 0, 0} {
		t.Fatalf("kept %d, %v more; want %d and %d sound", len(out), more, glanceLimit, 100-glanceLimit)
	}
	unfit := 0
	for k, it := range out {
		if it.Level == Unfit {
			unfit++
		}
		if k > 0 && out[k-1].Anchor >= it.Anchor && len(out[k-1].Anchor) >= len(it.Anchor) {
			t.Errorf("order broken at %d: %s after %s", k, it.Anchor, out[k-1].Anchor)
		}
	}
	if unfit != 10 {
		t.Errorf("%d unfit chains kept, want all 10", unfit)
	}
}
