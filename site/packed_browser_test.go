package site

import (
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
)

// TestPackedSeriesInPage: in Chromium, the chart series the page gets (the
// module writes them into a buffer as float64 values, engine.js unpacks
// them) are exactly those of the JSON answer, for compare's series and for
// size's (of their own lengths, beside the axis tops kept in its sweep),
// and the compare chart drawn from them is whole: 101 points a line, no
// NaN.
func TestPackedSeriesInPage(t *testing.T) {
	p := openPage(t, "")
	for _, c := range []struct{ entry, request string }{
		{"compare", `{ qb: '320', qd: '650,5', koa: '1100', cbi: '', cdi: '', sweep: {} }`},
		// With areas, and a high top of the KoA axis, where the co-current
		// series loses points at its ceiling: 7, 7, 7, 5, 5, 5 values.
		{"size", `{ target_clearance: '250', qb: '300', qd: '500', k0: '0.05', filters: [{ area_m2: '1.6' }], sweep: { points: 7, koa_max: 10000 } }`},
		{"size", `{ target_clearance: '140', qb: '250', qd: '400', flow: 'cocurrent', sweep: {} }`},
	} {
		mismatch := eval[string](p, `(async () => {
		const { unpack } = await import('./js/engine.js');
		const request = JSON.stringify(`+c.request+`);
		const bytes = new Uint8Array(clearkit.packedBytes);
		const answer = JSON.parse(clearkit.`+c.entry+`(request, bytes));
		const lengths = answer.packed?.lengths;
		if (lengths && lengths.every((n) => n === lengths[0]) && request.includes('koa_max')) return 'series of one length: the case is lost';
		const packed = unpack(answer, bytes);
		const json = JSON.parse(clearkit.`+c.entry+`(request));
		if (!json.ok) return 'the request failed: ' + json.error.message;
		if (packed.packed) return 'packed member left in the answer';
		let arrays = 0;
		const same = (got, want, path) => {
			if (Array.isArray(want) && !Array.isArray(got)) {
				arrays++;
				if (!(got instanceof Float64Array) || got.length !== want.length) return path + ': missing, or not a Float64Array of ' + want.length;
				for (let i = 0; i < want.length; i++) {
					if (!Object.is(got[i], want[i])) return path + '[' + i + '] = ' + got[i] + ', JSON ' + want[i];
				}
				return '';
			}
			if (want !== null && typeof want === 'object') {
				if (got === null || typeof got !== 'object' || Object.keys(got).length !== Object.keys(want).length) return path + ': members differ';
				for (const k of Object.keys(want)) {
					const m = same(got[k], want[k], path + '.' + k);
					if (m) return m;
				}
				return '';
			}
			return Object.is(got, want) ? '' : path + ' = ' + got + ', JSON ' + want;
		};
		return same(packed, json, '') || (arrays < 4 ? 'only ' + arrays + ' series' : '');
	})()`)
		if mismatch != "" {
			t.Errorf("%s: packed series against the JSON answer: %s", c.entry, mismatch)
		}
	}
	// Names of one part and of three go where their paths say, beside
	// what the answer's member holds already (a hand-made answer: the
	// module's names have two parts).
	deep := eval[string](p, `(async () => {
		const { unpack } = await import('./js/engine.js');
		const bytes = new Uint8Array(new Float64Array([1, 2, 3, 4]).buffer);
		const a = unpack({ ok: true, into: { top: 9 }, packed: { into: 'into', lengths: [2, 1, 1], series: ['a.b.c', 'd', 'a.b.e'] } }, bytes);
		return JSON.stringify({ c: [...a.into.a.b.c], d: [...a.into.d], e: [...a.into.a.b.e], top: a.into.top, packed: 'packed' in a });
	})()`)
	if want := `{"c":[1,2],"d":[3],"e":[4],"top":9,"packed":false}`; deep != want {
		t.Errorf("unpack of names of one and three parts: %s, want %s", deep, want)
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
