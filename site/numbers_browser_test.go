package site

import (
	"fmt"
	"testing"

	"github.com/chromedp/chromedp"
)

// TestNumberBoxesFit: the results' numbers that style.css puts in boxes of
// their own (contain: size, as wide as their characters: the compare and
// size views) hold their text: no number is wider than its box, with the
// views' demos, on a landscape and a portrait tablet. Reference: the
// page's own text extents (a DOM Range around each number's text).
func TestNumberBoxesFit(t *testing.T) {
	p := openPage(t, "")
	for _, size := range [][2]int64{{1024, 768}, {768, 1024}} {
		p.do(chromedp.EmulateViewport(size[0], size[1]))
		for _, view := range []string{"compare", "size"} {
			p.showView(view)
			type box struct {
				Out, Text  string
				Box, Width float64
			}
			boxes := eval[[]box](p, fmt.Sprintf(`[...document.querySelectorAll('section.view[data-view=%q] .results output')]
				.filter((o) => o.offsetParent !== null && getComputedStyle(o).contain.includes('size'))
				.map((o) => {
					const r = document.createRange();
					r.selectNodeContents(o);
					return { Out: o.dataset.out ?? o.dataset.fit ?? '', Text: o.textContent, Box: o.getBoundingClientRect().width, Width: r.getBoundingClientRect().width };
				})`, view))
			if len(boxes) < 3 {
				t.Errorf("%dx%d, %s: %d numbers in boxes, want the view's numbers boxed", size[0], size[1], view, len(boxes))
			}
			for _, b := range boxes {
				if b.Width > b.Box+0.5 {
					t.Errorf("%dx%d, %s: %s %q is %.1f px wide in a box of %.1f px", size[0], size[1], view, b.Out, b.Text, b.Width, b.Box)
				}
			}
		}
	}
}
