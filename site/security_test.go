package site

import (
	"context"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// The page's Content-Security-Policy, directive by directive.
var wantCSP = map[string][]string{
	"default-src":     {"'self'"},
	"script-src":      {"'self'", "'wasm-unsafe-eval'"}, // Go wasm needs wasm-unsafe-eval to instantiate
	"style-src":       {"'self'"},
	"img-src":         {"'self'", "data:"},
	"object-src":      {"'none'"},
	"base-uri":        {"'none'"},
	"form-action":     {"'none'"},
	"connect-src":     nil, // absent: default-src 'self' applies
	"worker-src":      nil,
	"manifest-src":    nil,
	"frame-ancestors": nil, // ignored in a meta tag; a host header would carry it
}

func TestContentSecurityPolicy(t *testing.T) {
	html, err := os.ReadFile("index.html")
	if err != nil {
		t.Fatal(err)
	}
	metas := regexp.MustCompile(`<meta http-equiv="Content-Security-Policy" content="([^"]*)">`).FindAllStringSubmatch(string(html), -1)
	if len(metas) != 1 {
		t.Fatalf("index.html has %d CSP meta tags, want 1", len(metas))
	}
	got := map[string][]string{}
	for _, d := range strings.Split(metas[0][1], ";") {
		f := strings.Fields(d)
		if len(f) > 0 {
			got[f[0]] = f[1:]
		}
	}
	for name, want := range wantCSP {
		if !slices.Equal(got[name], want) {
			t.Errorf("CSP %s = %q, want %q", name, got[name], want)
		}
	}
	for name := range got {
		if _, ok := wantCSP[name]; !ok {
			t.Errorf("CSP has an unexpected directive %s", name)
		}
	}
	// The meta tag must come before anything it governs.
	if i, j := strings.Index(string(html), "Content-Security-Policy"), strings.Index(string(html), "<script"); i > j {
		t.Error("the CSP meta tag comes after the first script")
	}
}

// TestNoInlineCodeOrHTMLSinks reads the page's sources: no inline script or
// handler, no inline style (style-src 'self' would drop it), no URL of
// another origin, and no way for text to become markup or code.
func TestNoInlineCodeOrHTMLSinks(t *testing.T) {
	html, err := os.ReadFile("index.html")
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range regexp.MustCompile(`<script([^>]*)>([^<]*)</script>`).FindAllStringSubmatch(string(html), -1) {
		if !strings.Contains(m[1], `src="`) || strings.TrimSpace(m[2]) != "" {
			t.Errorf("inline script in index.html: %s", m[0])
		}
	}
	for _, bad := range []*regexp.Regexp{
		regexp.MustCompile(`\son[a-z]+\s*=`),
		regexp.MustCompile(`\sstyle\s*=`),
		regexp.MustCompile(`(src|href|action)="(https?:)?//`),
	} {
		if m := bad.FindString(string(html)); m != "" {
			t.Errorf("index.html contains %q", m)
		}
	}
	files, err := filepath.Glob(filepath.Join("js", "*.js"))
	if err != nil {
		t.Fatal(err)
	}
	files = append(files, "sw.js")
	sinks := regexp.MustCompile(`innerHTML|outerHTML|insertAdjacentHTML|document\.write|\beval\(|new Function|setAttribute\(['"](on|style)|\.srcdoc|javascript:|createContextualFragment|DOMParser`)
	// The only absolute URL allowed is the SVG namespace name, which is
	// never fetched.
	urls := regexp.MustCompile(`(https?:)?//[a-z0-9.-]+\.[a-z]{2,}`)
	for _, f := range files {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		for i, line := range strings.Split(string(src), "\n") {
			code := line
			if c := strings.Index(code, "// "); c >= 0 && !strings.Contains(code[:c], "'") && !strings.Contains(code[:c], "`") {
				code = code[:c] // a comment, not code
			}
			if m := sinks.FindString(code); m != "" {
				t.Errorf("%s:%d uses %s", f, i+1, m)
			}
			for _, u := range urls.FindAllString(code, -1) {
				if u != "http://www.w3.org" {
					t.Errorf("%s:%d names another origin: %s", f, i+1, u)
				}
			}
		}
	}
}

// TestCSPInForce checks in Chromium that the policy applies: an inline
// script added to the page does not run and is reported as a violation.
// (eval cannot be checked from here: code the test evaluates through the
// DevTools protocol is not held to the page's policy.)
func TestCSPInForce(t *testing.T) {
	server := newTestServer(t)
	ctx, cancel := chromedp.NewContext(browserCtx)
	defer cancel()
	tctx, tcancel := context.WithTimeout(ctx, 20*time.Second)
	defer tcancel()
	if err := chromedp.Do(tctx, chromedp.Navigate(server.URL+"/")); err != nil {
		t.Fatal(err)
	}
	got, err := chromedp.Run(tctx, chromedp.Evaluate[map[string]string](`new Promise(r => {
		const out = {};
		document.addEventListener('securitypolicyviolation', (e) => { out.violated = e.violatedDirective; });
		const s = document.createElement('script');
		s.textContent = 'window.inlineRan = true';
		document.head.append(s);
		setTimeout(() => { out.inline = String(window.inlineRan === true); r(out); }, 200);
	})`, chromedp.EvalAwaitPromise))
	if err != nil {
		t.Fatal(err)
	}
	if got["inline"] != "false" {
		t.Error("an inline script ran despite the CSP")
	}
	if !strings.HasPrefix(got["violated"], "script-src") {
		t.Errorf("violated directive %q, want script-src", got["violated"])
	}
}

// Labels that would run code, load from elsewhere or become spreadsheet
// formulas if handled as anything but text.
var hostile = labels{
	Site:    `<img src="http://198.51.100.7/x.png" onerror="window.injected=1">`,
	Machine: `"><script>window.injected=2</script>`,
	Filter:  `=HYPERLINK("http://198.51.100.7/","open")`,
	Notes:   "</textarea><svg onload=\"window.injected=3\"></svg>\n{{constructor.constructor('window.injected=4')()}} javascript:window.injected=5 @SUM(1) +1-2",
}

func TestInjectionInLabelsStaysInert(t *testing.T) {
	p := openPage(t, "")
	p.saveRecord("compare", hostile)
	p.reload()
	p.openLog()
	want := map[string]string{"site": hostile.Site, "machine_id": hostile.Machine, "filter": hostile.Filter, "notes": hostile.Notes}
	shown := eval[map[string]string](p, `Object.fromEntries([...document.querySelectorAll('[data-log-list] dd[data-label]')].map(d => [d.dataset.label, d.textContent]))`)
	for k, v := range want {
		if shown[k] != v {
			t.Errorf("log shows %s as %q, want the text %q", k, shown[k], v)
		}
	}
	inert := func(where string) {
		t.Helper()
		if n := eval[int](p, `document.querySelectorAll('main img, main script, main iframe, main object, main embed, [data-log-list] svg, .record-banner svg').length`); n != 0 {
			t.Errorf("%s: %d elements made from label text", where, n)
		}
		if v := eval[string](p, `String(window.injected)`); v != "undefined" {
			t.Errorf("%s: injected code ran (window.injected = %s)", where, v)
		}
	}
	inert("log list")
	p.do(chromedp.Click(chromedp.CSS(`[data-log-list] li button`))) // Open
	banner := eval[map[string]string](p, `Object.fromEntries([...document.querySelectorAll('.record-banner dd[data-label]')].map(d => [d.dataset.label, d.textContent]))`)
	for k, name := range map[string]string{"site": "Site", "machine_id": "Machine ID", "filter": "Filter", "notes": "Notes"} {
		if banner[name] != want[k] {
			t.Errorf("banner shows %s as %q, want %q", name, banner[name], want[k])
		}
	}
	inert("record banner")
	p.openLog()
	_, csv := p.download(`[data-log="export-csv"]`)
	rows, err := readCSV(strings.TrimPrefix(string(csv), "\uFEFF"))
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	// OWASP's CSV injection advice: a cell starting with = + - @ gets a
	// leading apostrophe so spreadsheets show it as text.
	if got := rows[1][col["filter"]]; got != "'"+hostile.Filter {
		t.Errorf("CSV filter cell %q, want it prefixed with an apostrophe", got)
	}
	if got := rows[1][col["notes"]]; got != hostile.Notes {
		t.Errorf("CSV notes cell %q, want %q", got, hostile.Notes)
	}
	p.screenshot("log-injection-inert")
}
