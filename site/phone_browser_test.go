package site

import (
	"testing"

	"github.com/chromedp/chromedp"
)

// TestPhoneWidth: on a 360 px wide phone (the narrowest common phone
// width in CSS pixels; common practice, no source) no view is wider than
// the screen, so that nothing hides off to the side.
func TestPhoneWidth(t *testing.T) {
	p := openPage(t, "")
	p.do(chromedp.EmulateViewport(360, 740))
	for _, view := range []string{"compare", "size", "check", "log"} {
		p.showView(view)
		p.settle()
		p.screenshot("phone-360-" + view)
		noSideScroll(t, p, view+" at 360x740")
	}
}
