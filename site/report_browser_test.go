package site

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/emulation"
	cdppage "github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"
)

// visible reports whether the first element matching sel is rendered: not
// display: none up its ancestors, and not inside a closed details.
func visible(p *page, sel string) bool {
	p.t.Helper()
	return eval[bool](p, `(() => { const e = document.querySelector('`+sel+`'); return !!e && e.checkVisibility(); })()`)
}

func TestReportPrint(t *testing.T) {
	p := openPage(t, "")
	p.typeInto("#compare-qb", "330")
	p.saveRecord("compare", labels{"East clinic (invented)", "HD-2231", "F-80", "annual check; line 2 refitted"})
	eval[bool](p, `(window.print = () => { window.printed = (window.printed || 0) + 1; }, true)`)
	p.openLog()
	p.do(chromedp.Click(chromedp.CSS(`[data-log-list] li button:nth-child(2)`))) // Print report
	if n := eval[int](p, `window.printed || 0`); n != 1 {
		t.Fatalf("Print report called print %d times, want 1", n)
	}
	if !visible(p, "#view-compare .record-banner") {
		t.Fatal("no record banner in the compare view after Print report")
	}
	// The banner's own button prints too.
	p.do(chromedp.Click(chromedp.CSS(`.record-banner-actions button.primary`)))
	if n := eval[int](p, `window.printed`); n != 2 {
		t.Errorf("the banner's Print report: print called %d times in all, want 2", n)
	}

	ctx, cancel := context.WithTimeout(p.ctx, 20*time.Second)
	defer cancel()
	if _, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"}); err != nil {
		t.Fatal(err)
	}
	for _, sel := range []string{".views", "#engine-status", "#offline-status", ".save-bar", ".record-banner-actions", "#compare-demo", "#view-log"} {
		if visible(p, sel) {
			t.Errorf("printed, %s shows; want it left out", sel)
		}
	}
	if n := eval[int](p, `[...document.querySelectorAll('main button')].filter(b => b.checkVisibility()).length`); n != 1 {
		t.Errorf("printed, %d buttons show; want only the chosen chart axis", n)
	}
	for _, sel := range []string{".brand-name", ".record-banner", "#compare-qb", ".cards", "#compare-chart", ".foot", `[data-axis="qb"]`} {
		if !visible(p, sel) {
			t.Errorf("printed, %s is missing", sel)
		}
	}
	text := eval[string](p, `document.body.innerText`)
	for _, want := range []string{"East clinic (invented)", "HD-2231", "F-80", "annual check; line 2 refitted", "Saved with", "not a medical device", "ClearKit version"} {
		if !strings.Contains(text, want) {
			t.Errorf("the printed report lacks %q", want)
		}
	}
	if v := eval[string](p, `document.getElementById('compare-qb').value`); v != "330" {
		t.Errorf("the report shows QB %q, want the record's 330", v)
	}
	// Printing unfolds the optional inputs, so the report shows them all.
	eval[bool](p, `(window.dispatchEvent(new Event('beforeprint')), true)`)
	if !visible(p, "#compare-cbi") || !visible(p, "#compare-cdi") {
		t.Error("printed, the inlet concentrations stay folded away")
	}
	// An A4 page is about 680 CSS px wide inside 14 mm margins.
	p.do(chromedp.EmulateViewport(680, 960))
	p.screenshot("report-print-media-a4-width")
	noSideScroll(t, p, "print, A4 width")
	p.do(chromedp.EmulateViewport(1024, 768, chromedp.EmulateLandscape))
	pdf, err := chromedp.Call(ctx, cdppage.PrintToPDF, cdppage.PrintToPDFParams{PaperWidth: 8.27, PaperHeight: 11.69}) // A4
	if err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(string(pdf.Data), "%PDF-") {
		t.Fatalf("PrintToPDF gave no PDF")
	}
	dir := filepath.Join("..", "out", "screenshots")
	if err := os.WriteFile(filepath.Join(dir, "report-a4.pdf"), pdf.Data, 0o644); err != nil {
		t.Fatal(err)
	}
	eval[bool](p, `(window.dispatchEvent(new Event('afterprint')), true)`)
	if _, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{}); err != nil {
		t.Fatal(err)
	}
	if visible(p, "#compare-cbi") {
		t.Error("after printing, the inlet concentrations stay unfolded")
	}
}

// A record saved by another build whose numbers differ: the banner says
// so and lists the saved values beside this build's.
func TestReportShowsDifferences(t *testing.T) {
	p := openPage(t, "")
	p.saveRecord("compare", labels{"Lab", "M-1", "F-60", ""})
	// Rewrite the stored record as if an older build had saved it with
	// another clearance.
	eval[bool](p, `(async () => {
		const m = await import('./js/store.js');
		const s = await m.openStore();
		const [r] = await s.all();
		r.result.countercurrent.clearance += 1.5;
		r.app_version = 'older-build';
		await s.remove([r.id]);
		await s.add(r);
		return true;
	})()`)
	p.reload()
	p.openLog()
	p.do(chromedp.Click(chromedp.CSS(`[data-log-list] li button`)))
	if state := eval[string](p, `document.querySelector('.record-check').dataset.state`); state != "differ" {
		t.Fatalf("record check %q, want differ", state)
	}
	check := eval[string](p, `document.querySelector('.record-check').textContent`)
	if !strings.Contains(check, "1 value differ") {
		t.Errorf("record check %q, want it to count 1 differing value", check)
	}
	if !eval[bool](p, `document.querySelector('.record-saved').open`) {
		t.Error("the saved values are folded away although they differ")
	}
	row := eval[string](p, `[...document.querySelectorAll('.saved-values')][0].textContent`)
	if !strings.Contains(row, "countercurrent.clearance") {
		t.Errorf("differences table %q, want countercurrent.clearance", row)
	}
	if by := eval[string](p, `document.querySelector('.record-banner').textContent`); !strings.Contains(by, "older-build") {
		t.Error("the banner does not name the build that saved the record")
	}
	p.screenshot("report-differs")
}
