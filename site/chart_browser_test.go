package site

import (
	"testing"
)

// chartScript defines, in the page, specs built from the calculation API's
// compare sweeps and helpers to draw them: shape(svg) lists every element
// with its sorted attributes and text, fresh(spec) draws spec into a new
// svg and gives its shape.
const chartScript = `
	const { drawChart } = await import('./js/chart.js');
	const compare = (qb) => JSON.parse(clearkit.compare(JSON.stringify({ qb: String(qb), qd: '500', koa: '800', sweep: {} })));
	const asIs = (a) => a;
	const typed = (a) => Float64Array.from(a);
	// The compare view's chart along one axis.
	const lines = (r, axis, t = asIs) => {
		const s = r.sweeps[axis];
		return {
			x: t(s.x), xLabel: axis, yLabel: 'K (mL/min)',
			series: [
				{ values: t(s.countercurrent), className: 'series-counter', label: 'counter' },
				{ values: t(s.cocurrent), className: 'series-co', label: 'co' },
			],
			ceilings: [
				{ values: t(s.countercurrent_ceiling), label: 'counter max' },
				{ values: t(s.cocurrent_ceiling), label: 'co max' },
			],
			point: { x: r.input[axis], ys: [r.countercurrent.clearance, r.cocurrent.clearance] },
		};
	};
	// The size view's kind of chart: each series with its own x, fixed
	// axes, vertical lines (some outside the range), no end labels.
	const fixed = (r, xMax, ys, t = asIs) => {
		const s = r.sweeps.qb;
		return {
			xRange: [0, xMax], yMax: 350, xLabel: 'QB', yLabel: 'K',
			series: [
				{ x: t(s.x), values: t(s.countercurrent), className: 'series-counter', label: 'counter' },
				{ x: t(s.x), values: t(s.cocurrent), className: 'series-co', label: 'co' },
			],
			verticals: [{ x: 300, label: 'counter max 300.0' }, { x: 500, label: 'co max 500.0' }],
			point: { x: r.input.qb, ys },
			endLabels: false,
		};
	};
	const shape = (svg) => [...svg.querySelectorAll('*')].map((e) =>
		e.tagName + ' ' + [...e.attributes].map((a) => a.name + '=' + a.value).sort().join(' ') + (e.children.length ? '' : ' | ' + e.textContent)).join('\n');
	const svgNS = 'http://www.w3.org/2000/svg';
	const fresh = (spec) => {
		const svg = document.createElementNS(svgNS, 'svg');
		drawChart(svg, spec);
		return shape(svg);
	};
`

// TestChartRedraw: a chart redrawn over an earlier drawing (which keeps
// and changes the earlier elements) is the chart drawn afresh, for axes
// that change, element counts that grow and shrink, and a change of kind;
// series given as Float64Arrays draw the same as Arrays; a redraw of the
// same spec changes nothing in the page. Reference: the same spec drawn
// into an empty svg.
func TestChartRedraw(t *testing.T) {
	p := openPage(t, "")
	failures := eval[[]string](p, `(async () => {`+chartScript+`
		const a = compare(250), b = compare(340); // QB above 300 widens the QB axis
		const specs = {
			'qb 250': lines(a, 'qb'), 'qb 340': lines(b, 'qb'), 'qd 340': lines(b, 'qd'), 'koa 250': lines(a, 'koa'),
			'fixed 400, one vertical': fixed(a, 400, [a.countercurrent.clearance]),
			'fixed 600, two verticals': fixed(b, 600, [b.countercurrent.clearance, b.cocurrent.clearance]),
		};
		const order = ['qb 250', 'qb 340', 'qd 340', 'fixed 400, one vertical', 'fixed 600, two verticals', 'koa 250', 'fixed 400, one vertical', 'qb 250'];
		const failures = [];
		const svg = document.createElementNS(svgNS, 'svg');
		order.forEach((name, i) => {
			drawChart(svg, specs[name]);
			if (shape(svg) !== fresh(specs[name])) failures.push(name + ' drawn over ' + (order[i - 1] ?? 'nothing') + ' differs from it drawn afresh');
		});
		const typedSpecs = { 'qb 340': lines(b, 'qb', typed), 'fixed 600, two verticals': fixed(b, 600, [b.countercurrent.clearance, b.cocurrent.clearance], typed) };
		for (const [name, spec] of Object.entries(typedSpecs)) {
			if (fresh(spec) !== fresh(specs[name])) failures.push(name + ' from Float64Arrays differs from it drawn from Arrays');
		}
		// Lines changed in place (the same arrays, other numbers) are drawn
		// anew, as are lines of the same numbers on another scale.
		const inPlace = lines(compare(250), 'qd', typed);
		drawChart(svg, inPlace);
		for (const line of [inPlace.series[0].values, inPlace.ceilings[1].values]) line.forEach((v, i) => { line[i] = v * 0.9; });
		drawChart(svg, inPlace);
		if (shape(svg) !== fresh(inPlace)) failures.push('lines changed in place and drawn again differ from them drawn afresh');
		const rescaled = { ...inPlace, yMax: 900 };
		drawChart(svg, rescaled);
		if (shape(svg) !== fresh(rescaled)) failures.push('the same lines on another scale differ from them drawn afresh');
		// The page's own chart: redrawn with an equal spec, nothing changes.
		document.body.append(svg);
		drawChart(svg, specs['qb 340']);
		const seen = new MutationObserver(() => {});
		seen.observe(svg, { subtree: true, attributes: true, childList: true, characterData: true });
		drawChart(svg, lines(compare(340), 'qb'));
		const changes = seen.takeRecords();
		if (changes.length) failures.push('an equal spec redrawn made ' + changes.length + ' changes, first to ' + changes[0].target.tagName + ' ' + (changes[0].attributeName ?? changes[0].type));
		svg.remove();
		return failures;
	})()`)
	for _, f := range failures {
		t.Error(f)
	}
}

// TestCompareInputChangesOnlyWhatDiffers: typing a new QB in the compare
// view rewrites the numbers whose text differs and moves the chart's
// marker, and leaves the rest of the view (the chart's frame, lines and
// labels, the results' container) alone; the same QB written another way
// changes nothing. Reference: the texts the view showed before and after,
// read from the page.
func TestCompareInputChangesOnlyWhatDiffers(t *testing.T) {
	p := openPage(t, "")
	steps := eval[[]map[string]any](p, `(() => {`+typedJS+`
		const view = document.querySelector('#view-compare');
		const input = view.querySelector('input[name="qb"]');
		const outputs = [...view.querySelectorAll('.results output')];
		const type = (v) => {
			const before = outputs.map((o) => o.textContent);
			const records = typed(input, view.querySelector('.results'), v);
			const others = new Set(), rewritten = new Set();
			for (const r of records) {
				const node = r.target.nodeType === Node.TEXT_NODE ? r.target.parentNode : r.target;
				const out = node.closest('output');
				if (out) rewritten.add(out);
				else others.add(node.closest('svg') ? (node.closest('[data-layer]')?.dataset.layer ?? 'svg') : node.tagName);
			}
			return {
				qb: v, others: [...others].sort().join(' '),
				wrong: outputs.filter((o, i) => rewritten.has(o) !== (o.textContent !== before[i])).map((o) => o.dataset.out),
				changed: outputs.filter((o, i) => o.textContent !== before[i]).length,
			};
		};
		type('280');
		// The QB axis stays 25 to 600 mL/min up to QB 300: the lines and the frame stay.
		return [type('290'), type('290.0')];
	})()`)
	for i, want := range []struct {
		others  string
		changed bool
	}{{"point-line points", true}, {"", false}} {
		s := steps[i]
		if s["others"] != want.others {
			t.Errorf("QB %v: besides the outputs, changed %q, want %q", s["qb"], s["others"], want.others)
		}
		if w := s["wrong"].([]any); len(w) > 0 {
			t.Errorf("QB %v: outputs rewritten though their text is the same, or not though it changed: %v", s["qb"], w)
		}
		if changed := s["changed"].(float64) > 0; changed != want.changed {
			t.Errorf("QB %v: outputs changed: %v, want %v", s["qb"], changed, want.changed)
		}
	}
}
