package site

import (
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"clearkit/core"
)

// outputs reads the full values the page shows in the compare view, keyed
// by their data-out path.
func outputs(p *page) map[string]float64 {
	p.t.Helper()
	raw := eval[map[string]string](p, `Object.fromEntries([...document.querySelectorAll('#compare-results output[data-out]')].map(o => [o.dataset.out, o.dataset.value]))`)
	out := make(map[string]float64, len(raw))
	for k, v := range raw {
		f, err := strconv.ParseFloat(v, 64)
		if err != nil {
			p.t.Fatalf("output %s holds %q, not a number", k, v)
		}
		out[k] = f
	}
	return out
}

// wantOutputs checks the page against core.Compare at op. The page gets its
// numbers through the bridge from the same Go code, and float64 survives
// the JSON round trip exactly, so the values must be equal.
func wantOutputs(t *testing.T, p *page, op core.Operating) {
	t.Helper()
	c, err := core.Compare(op)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]float64{
		"countercurrent.clearance":         c.Countercurrent.Clearance,
		"countercurrent.extraction_ratio":  c.Countercurrent.ExtractionRatio,
		"countercurrent.dialysance":        c.Countercurrent.Dialysance,
		"countercurrent.cbo":               c.Countercurrent.BloodOutlet,
		"countercurrent.cdo":               c.Countercurrent.DialysateOutlet,
		"countercurrent.clearance_ceiling": c.Countercurrent.ClearanceCeiling,
		"cocurrent.clearance":              c.Cocurrent.Clearance,
		"cocurrent.extraction_ratio":       c.Cocurrent.ExtractionRatio,
		"cocurrent.dialysance":             c.Cocurrent.Dialysance,
		"cocurrent.cbo":                    c.Cocurrent.BloodOutlet,
		"cocurrent.cdo":                    c.Cocurrent.DialysateOutlet,
		"cocurrent.clearance_ceiling":      c.Cocurrent.ClearanceCeiling,
		"countercurrent_gain":              c.Gain,
		"countercurrent_gain_percent":      c.GainPercent,
		"ntu":                              c.NTU,
	}
	got := outputs(p)
	for k, w := range want {
		if g, ok := got[k]; !ok || g != w {
			t.Errorf("page %s = %v, want %v (core.Compare%+v)", k, g, w, op)
		}
	}
}

func TestCompareDemoMatchesCore(t *testing.T) {
	p := openPage(t, "")
	wantOutputs(t, p, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1})
	// The shown text is the value rounded: clearance 247.95... shows as 248.0.
	if got := eval[string](p, `document.querySelector('[data-out="countercurrent.clearance"]').textContent`); got != "248.0" {
		t.Errorf("counter-current clearance text = %q, want 248.0", got)
	}
	p.screenshot("compare-landscape-1024x768")
	noSideScroll(t, p, "landscape 1024x768")
	p.do(chromedp.EmulateViewport(768, 1024))
	p.screenshot("compare-portrait-768x1024")
	noSideScroll(t, p, "portrait 768x1024")
}

// noSideScroll fails when the page is wider than the viewport: on a tablet
// a sideways scroll hides results.
func noSideScroll(t *testing.T, p *page, viewport string) {
	t.Helper()
	if w := eval[int](p, `document.documentElement.scrollWidth - window.innerWidth`); w > 0 {
		t.Errorf("%s: page is %d px wider than the viewport", viewport, w)
	}
}

func TestCompareTypingUpdatesResults(t *testing.T) {
	p := openPage(t, "")
	p.typeInto("#compare-qb", "250")
	p.typeInto("#compare-qd", "600,5") // a decimal comma is accepted
	p.typeInto("#compare-koa", "1100")
	wantOutputs(t, p, core.Operating{QB: 250, QD: 600.5, KoA: 1100, CBi: 1})

	p.do(chromedp.Click(chromedp.CSS(`summary`)))
	p.typeInto("#compare-cbi", "80")
	p.typeInto("#compare-cdi", "4")
	wantOutputs(t, p, core.Operating{QB: 250, QD: 600.5, KoA: 1100, CBi: 80, CDi: 4})
}

func TestCompareFieldErrors(t *testing.T) {
	p := openPage(t, "")
	for _, tc := range []struct{ input, text, field, want string }{
		{"#compare-qb", "-5", "qb", "greater than 0"},
		{"#compare-qd", "0", "qd", "greater than 0"},
		{"#compare-koa", "abc", "koa", "must be a number"},
		{"#compare-koa", "", "koa", "required"},
	} {
		p.typeInto(tc.input, tc.text)
		msg := eval[string](p, `document.querySelector('[data-error-for="`+tc.field+`"]').textContent`)
		if !strings.Contains(msg, tc.want) {
			t.Errorf("%s = %q: error %q, want it to say %q", tc.field, tc.text, msg, tc.want)
		}
		if inv := eval[string](p, `document.querySelector('`+tc.input+`').getAttribute('aria-invalid') || ''`); inv != "true" {
			t.Errorf("%s = %q: aria-invalid %q, want true", tc.field, tc.text, inv)
		}
		if state := eval[string](p, `document.getElementById('compare-results').dataset.state`); state != "error" {
			t.Errorf("%s = %q: results state %q, want error (shown as stale)", tc.field, tc.text, state)
		}
		p.typeInto(tc.input, map[string]string{"qb": "300", "qd": "500", "koa": "800"}[tc.field])
	}
	if msgs := eval[string](p, `[...document.querySelectorAll('[data-error-for]')].map(e => e.textContent).join('')`); msgs != "" {
		t.Errorf("after correcting every field, errors still shown: %q", msgs)
	}
	wantOutputs(t, p, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1})
}

func TestCompareChartAxes(t *testing.T) {
	p := openPage(t, "")
	for _, tc := range []struct{ axis, caption string }{
		{"qd", "Clearance against dialysate flow"},
		{"koa", "Clearance against filter KoA"},
		{"qb", "Clearance against blood flow"},
	} {
		p.do(chromedp.Click(chromedp.CSS(`[data-axis="` + tc.axis + `"]`)))
		if got := eval[string](p, `document.getElementById('compare-chart-title').textContent`); got != tc.caption {
			t.Errorf("axis %s: caption %q, want %q", tc.axis, got, tc.caption)
		}
		n := eval[int](p, `document.querySelectorAll('#compare-chart path.series').length`)
		c := eval[int](p, `document.querySelectorAll('#compare-chart path.ceiling').length`)
		if n != 2 || c != 2 {
			t.Errorf("axis %s: %d series and %d ceilings drawn, want 2 and 2", tc.axis, n, c)
		}
	}
}

// TestTouchTargets checks every control is at least 44 px high and wide
// (WCAG 2.2 target size, enhanced level 2.5.5, is 44 x 44 CSS px).
func TestTouchTargets(t *testing.T) {
	p := openPage(t, "")
	small := eval[[]string](p, `[...document.querySelectorAll('button, input, summary, select')].filter(e => e.offsetParent !== null).filter(e => { const r = e.getBoundingClientRect(); return r.height < 44 || r.width < 44; }).map(e => e.id || e.name || e.textContent.trim())`)
	if len(small) > 0 {
		t.Errorf("controls smaller than 44 x 44 px: %v", small)
	}
}
