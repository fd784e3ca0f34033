package site

import (
	"fmt"
	"testing"

	"github.com/chromedp/chromedp"
)

// The four view tabs at tablet and phone widths: at 1024 x 768 and at a
// 768 x 1024 portrait tablet they share one row (at 768 px they once
// wrapped onto two), at 360 px (a small phone, common practice, no
// source) they sit two by two; at every width each tab is at least
// 44 x 44 px (WCAG 2.2, 2.5.5), shows its whole label and stays inside the
// viewport, and the top bar does not scroll sideways; at tablet widths
// the page does not either (the views themselves are laid out for
// tablets). Screenshots tabs-WIDTHxHEIGHT.
func TestViewTabsRows(t *testing.T) {
	p := openPage(t, "")
	type tab struct {
		Text                       string
		Top, Left, Right, W, H     float64
		ScrollWidth, ClientWidth   int
		ScrollHeight, ClientHeight int
	}
	for _, c := range []struct {
		w, h, rows int
	}{{1024, 768, 1}, {768, 1024, 1}, {600, 960, 1}, {360, 740, 2}} {
		p.do(chromedp.EmulateViewport(int64(c.w), int64(c.h)))
		tabs := eval[[]tab](p, `[...document.querySelectorAll('.views .view-tab')].map((b) => { const r = b.getBoundingClientRect(); return {Text: b.textContent, Top: r.top, Left: r.left, Right: r.right, W: r.width, H: r.height, ScrollWidth: b.scrollWidth, ClientWidth: b.clientWidth, ScrollHeight: b.scrollHeight, ClientHeight: b.clientHeight}; })`)
		name := fmt.Sprintf("%dx%d", c.w, c.h)
		if len(tabs) != 4 {
			t.Fatalf("%s: %d tabs, want 4", name, len(tabs))
		}
		tops := map[float64]bool{}
		for _, b := range tabs {
			tops[b.Top] = true
			if b.W < 44 || b.H < 44 {
				t.Errorf("%s: tab %q is %.0f x %.0f px, want at least 44 x 44", name, b.Text, b.W, b.H)
			}
			if b.ScrollWidth > b.ClientWidth || b.ScrollHeight > b.ClientHeight {
				t.Errorf("%s: tab %q clips its label (%d x %d in %d x %d)", name, b.Text, b.ScrollWidth, b.ScrollHeight, b.ClientWidth, b.ClientHeight)
			}
			if b.Left < 0 || b.Right > float64(c.w) {
				t.Errorf("%s: tab %q spans %.0f to %.0f px, outside the viewport", name, b.Text, b.Left, b.Right)
			}
		}
		if len(tops) != c.rows {
			t.Errorf("%s: the tabs sit on %d rows (tops %v), want %d", name, len(tops), tops, c.rows)
		}
		if w := eval[int](p, `(() => { const b = document.querySelector('.topbar'); return b.scrollWidth - b.clientWidth; })()`); w > 0 {
			t.Errorf("%s: the top bar is %d px wider than its box", name, w)
		}
		if c.w >= 600 {
			noSideScroll(t, p, name)
		}
		p.screenshot("tabs-" + name)
	}
}
