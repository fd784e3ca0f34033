package site

import (
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
)

// TestPackedSeriesInPage: in Chromium, the chart series the page gets (the
// module writes them into a buffer as float64 values, engine.js unpacks
// them) are exactly those of the JSON answer, and the chart drawn from
// them is whole: 101 points a line, no NaN.
func TestPackedSeriesInPage(t *testing.T) {
	p := openPage(t, "")
	mismatch := eval[string](p, `(async () => {
		const { unpack } = await import('./js/engine.js');
		const request = JSON.stringify({ qb: '320', qd: '650,5', koa: '1100', cbi: '', cdi: '', sweep: {} });
		const bytes = new Uint8Array(clearkit.packedBytes);
		const packed = unpack(JSON.parse(clearkit.compare(request, bytes)), bytes);
		const json = JSON.parse(clearkit.compare(request));
		if (packed.packed) return 'packed member left in the answer';
		for (const [axis, members] of Object.entries(json.sweeps)) {
			for (const [member, values] of Object.entries(members)) {
				const got = packed.sweeps[axis]?.[member];
				if (!(got instanceof Float64Array) || got.length !== values.length) return axis + '.' + member + ': missing or wrong length';
				for (let i = 0; i < values.length; i++) {
					if (!Object.is(got[i], values[i])) return axis + '.' + member + '[' + i + '] = ' + got[i] + ', JSON ' + values[i];
				}
			}
		}
		const { sweeps: _a, ...restPacked } = packed;
		const { sweeps: _b, ...restJSON } = json;
		if (JSON.stringify(restPacked) !== JSON.stringify(restJSON)) return 'the rest of the answer differs';
		return '';
	})()`)
	if mismatch != "" {
		t.Errorf("packed series against the JSON answer: %s", mismatch)
	}
	for _, axis := range []string{"qb", "qd", "koa"} {
		p.do(chromedp.Click(chromedp.CSS(`[data-axis="` + axis + `"]`)))
		paths := eval[[]string](p, `[...document.querySelectorAll('#compare-chart path.series, #compare-chart path.ceiling')].map(e => e.getAttribute('d'))`)
		for _, d := range paths {
			if strings.Contains(d, "NaN") || strings.Count(d, "L")+strings.Count(d, "M") != 101 {
				t.Errorf("axis %s: a line of the chart is %.80q..., want 101 points and no NaN", axis, d)
			}
		}
	}
}
