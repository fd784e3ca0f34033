package site

import (
	"fmt"
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"clearkit/core"
)

// The sizing view against core.Size. The page gets its numbers through
// the bridge from the same Go code, and float64 survives the JSON round
// trip exactly, so every value shown must equal core's.

const sizeView = `section.view[data-view="size"]`

// openSize opens the page on the sizing view.
func openSize(t *testing.T) *page {
	t.Helper()
	p := openPage(t, "")
	p.showView("size")
	return p
}

// sizeDemo is the view's demo (size-view.js DEMO) as core sees it.
func sizeDemo() core.SizeSpec {
	return core.SizeSpec{
		Target: 250, QB: 300, QD: 500, Flow: core.Countercurrent, K0: 0.05, MarginPercent: 10,
		Filters: []core.Filter{{Label: "Shelf A", AreaM2: 1.4}, {Label: "Shelf B", AreaM2: 1.8}, {Label: "Shelf C", AreaM2: 2.1}},
		Current: &core.Filter{KoA: 700}, QDRange: &core.Range{Min: 300, Max: 800}, QBRange: &core.Range{Min: 150, Max: 450},
		Sweep: &core.SizeSweepSpec{},
	}
}

// sizeOutputs reads the full values of the view's outputs by their
// data-out path ("" for an output showing no number).
func sizeOutputs(p *page) map[string]string {
	p.t.Helper()
	return eval[map[string]string](p, `Object.fromEntries([...document.querySelectorAll('#size-results output[data-out]')].map(o => [o.dataset.out, o.dataset.value]))`)
}

// num formats an expected value as the page stores it (JavaScript's
// String(number) and Go's shortest 'g' agree on the digits; the exponent
// forms differ, which the values here never reach).
func num(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// ptr reads an optional value: "" for nil.
func ptr(v *float64) string {
	if v == nil {
		return ""
	}
	return num(*v)
}

// wantSize checks the view's outputs and filter rows against core.Size(spec).
func wantSize(t *testing.T, p *page, spec core.SizeSpec) core.Sizing {
	t.Helper()
	s, err := core.Size(spec)
	if err != nil {
		t.Fatalf("core.Size(%+v): %v", spec, err)
	}
	want := map[string]string{
		"countercurrent.koa":               ptr(s.Countercurrent.KoA),
		"countercurrent.area_m2":           ptr(s.Countercurrent.AreaM2),
		"countercurrent.ntu":               ptr(s.Countercurrent.NTU),
		"countercurrent.clearance_ceiling": num(s.Countercurrent.ClearanceCeiling),
		"cocurrent.koa":                    ptr(s.Cocurrent.KoA),
		"cocurrent.area_m2":                ptr(s.Cocurrent.AreaM2),
		"cocurrent.ntu":                    ptr(s.Cocurrent.NTU),
		"cocurrent.clearance_ceiling":      num(s.Cocurrent.ClearanceCeiling),
	}
	if s.Choice != nil {
		want["choice.needed_koa"] = num(s.Choice.NeededKoA)
		want["choice.needed_area_m2"] = ptr(s.Choice.NeededAreaM2)
	}
	if c := s.Current; c != nil {
		want["current_filter.clearance"] = num(c.Clearance)
		want["current_filter.clearance_gap"] = num(c.ClearanceGap)
		want["current_filter.qd.flow"] = ptr(c.QD.Flow)
		want["current_filter.qb.flow"] = ptr(c.QB.Flow)
	}
	got := sizeOutputs(p)
	for k, w := range want {
		if g := got[k]; g != w {
			t.Errorf("page %s = %q, want %q (core.Size)", k, g, w)
		}
	}
	if s.Choice != nil {
		rows := eval[[]map[string]string](p, `[...document.querySelectorAll('#size-filters .filter-row')].map(r => ({fit: r.dataset.fit, clearance: r.querySelector('[data-fit="clearance"]').dataset.value, gap: r.querySelector('[data-fit="clearance_gap"]').dataset.value}))`)
		k := 0
		for i, row := range rows {
			if row["clearance"] == "" {
				continue // a row with nothing typed is not sent
			}
			f := s.Choice.Filters[k]
			verdict := "short"
			switch {
			case s.Choice.Chosen != nil && *s.Choice.Chosen == k:
				verdict = "chosen"
			case f.Meets:
				verdict = "meets"
			case f.ClearanceGap >= 0:
				verdict = "margin" // reaches the target, not the margin on KoA
			}
			if row["clearance"] != num(f.Clearance) || row["gap"] != num(f.ClearanceGap) || row["fit"] != verdict {
				t.Errorf("filter row %d = %v, want clearance %s, gap %s, %s (core.Size filter %d)", i, row, num(f.Clearance), num(f.ClearanceGap), verdict, k)
			}
			k++
		}
		if k != len(s.Choice.Filters) {
			t.Errorf("page shows %d filter results, want %d", k, len(s.Choice.Filters))
		}
	}
	return s
}

func TestSizeDemoMatchesCore(t *testing.T) {
	p := openSize(t)
	s := wantSize(t, p, sizeDemo())
	// Rounded for reading: KoA 823.96 shows as 824, the area 1.648 as 1.65.
	for sel, want := range map[string]string{
		`[data-out="countercurrent.koa"]`:     "824",
		`[data-out="countercurrent.area_m2"]`: "1.65",
		`[data-out="cocurrent.koa"]`:          "–", // 250 is above the co-current ceiling 187.5
	} {
		if got := eval[string](p, `document.querySelector('`+sizeView+` `+sel+`').textContent`); got != want {
			t.Errorf("%s text = %q, want %q", sel, got, want)
		}
	}
	if msg := eval[string](p, `document.querySelector('`+sizeView+` [data-message-for="cocurrent"]').textContent`); !strings.Contains(msg, "ceiling of 187.5") {
		t.Errorf("co-current card says %q, want the ceiling it cannot pass", msg)
	}
	// Shelf C (2.1 m², KoA 1050 at K0 0.05) is the smallest above the 906
	// mL/min needed with a 10 % margin.
	if s.Choice.Chosen == nil || *s.Choice.Chosen != 2 {
		t.Fatalf("core chose %v, want filter 2", s.Choice.Chosen)
	}
	if v := eval[string](p, `document.querySelector('[data-choice-verdict]').textContent`); !strings.Contains(v, "Shelf C") {
		t.Errorf("choice verdict %q, want Shelf C", v)
	}
	p.screenshot("size-landscape-1024x768")
	noSideScroll(t, p, "size, landscape 1024x768")
	p.do(chromedp.EmulateViewport(768, 1024))
	p.screenshot("size-portrait-768x1024")
	noSideScroll(t, p, "size, portrait 768x1024")
}

// filterRow returns the selector of row i's input for part.
func filterRow(i int, part string) string {
	return fmt.Sprintf(`#size-filters input[name="filters[%d].%s"]`, i, part)
}

// Typing changes the answer; the arrangement buttons switch the filter
// choice and the flow solves to co-current.
func TestSizeTypingAndArrangement(t *testing.T) {
	p := openSize(t)
	spec := sizeDemo()
	p.typeInto("#size-target", "150,5") // a decimal comma is accepted
	spec.Target = 150.5
	wantSize(t, p, spec)

	p.do(chromedp.Click(chromedp.CSS(sizeView + ` [data-flow="cocurrent"]`)))
	spec.Flow = core.Cocurrent
	s := wantSize(t, p, spec)
	if !s.Cocurrent.Reachable {
		t.Fatal("core: 150.5 mL/min should be reachable co-current at 300/500 (ceiling 187.5)")
	}
	if got := eval[string](p, `document.querySelector('`+sizeView+` input[name="flow"]').value`); got != "cocurrent" {
		t.Errorf("flow input %q after pressing Co-current, want cocurrent", got)
	}
	hidden := eval[[]bool](p, `[...document.querySelectorAll('`+sizeView+` [data-used]')].map(b => b.hidden)`)
	if len(hidden) != 2 || !hidden[0] || hidden[1] {
		t.Errorf("'used below' badges hidden = %v, want only the co-current one shown", hidden)
	}

	// Without K0 there are no areas: KoA only, on the chart too.
	p.typeInto("#size-k0", "")
	spec.K0 = 0
	spec.Filters = nil // the demo's filters are given by area and now need K0: refused
	if state := eval[string](p, `document.getElementById('size-results').dataset.state`); state != "error" {
		t.Errorf("filters by area without K0: results state %q, want error", state)
	}
	if msg := eval[string](p, `document.querySelector('[data-error-for="filters[0].area_m2"]').textContent`); !strings.Contains(msg, "needs K0") {
		t.Errorf("filter row 0 error %q, want it to say the area needs K0", msg)
	}
	for i := 2; i >= 0; i-- {
		p.do(chromedp.Click(chromedp.CSS(fmt.Sprintf(`#size-filters .filter-row:nth-child(%d) [data-remove]`, i+1))))
	}
	s = wantSize(t, p, spec)
	if s.AreaM2 != nil {
		t.Fatal("core gave an area without K0")
	}
	if got := eval[string](p, `document.getElementById('size-chart-title').textContent`); !strings.Contains(got, "KoA needed") {
		t.Errorf("chart caption %q without K0, want the KoA chart", got)
	}
}

// Every field error appears beside its field, the field is marked
// invalid and the results go stale; the valid value clears it.
func TestSizeFieldErrors(t *testing.T) {
	p := openSize(t)
	for _, tc := range []struct {
		input, text, slot, want, valid string
	}{
		{"#size-target", "0", "target_clearance", "greater than 0", "250"},
		{"#size-target", "abc", "target_clearance", "must be a number", "250"},
		{"#size-target", "300", "target_clearance", "ceiling of 300", "250"}, // min(QB, QD): by hand
		{"#size-qb", "-5", "qb", "greater than 0", "300"},
		{"#size-qd", "", "qd", "required", "500"},
		{"#size-k0", "50", "k0", "outside any membrane", "0.05"},
		{"#size-margin", "-1", "margin_percent", "from 0 to 1000", "10"},
		{"#size-cur-koa", "-700", "current_filter.koa", "must not be negative", "700"},
		{"#size-qd-min", "900", "qd_range", "below maximum", "300"}, // 900 > 800
		{filterRow(1, "area_m2"), "x", "filters[1].area_m2", "must be a number", "1.8"},
		{filterRow(2, "label"), strings.Repeat("z", 81), "filters[2].label", "at most 80", "Shelf C"},
	} {
		p.reveal(tc.input)
		p.typeInto(tc.input, tc.text)
		slot := `[data-error-for="` + tc.slot + `"]`
		if msg := eval[string](p, `document.querySelector('`+sizeView+` `+slot+`').textContent`); !strings.Contains(msg, tc.want) {
			t.Errorf("%s = %q: beside it %q, want %q", tc.input, tc.text, msg, tc.want)
		}
		// The slot is next to the input: in the same field, pair, details or row.
		if !eval[bool](p, `(() => { const i = document.querySelector('`+tc.input+`'), s = document.querySelector('`+sizeView+` `+slot+`'); const box = i.closest('.filter-row, details, .field'); return box.contains(s) || i.closest('details, .filter-row, fieldset').contains(s); })()`) {
			t.Errorf("%s: error slot %s is not beside the input", tc.input, tc.slot)
		}
		if inv := eval[string](p, `document.querySelector('`+tc.input+`').getAttribute('aria-invalid') || ''`); inv != "true" {
			t.Errorf("%s = %q: aria-invalid %q, want true", tc.input, tc.text, inv)
		}
		if state := eval[string](p, `document.getElementById('size-results').dataset.state`); state != "error" {
			t.Errorf("%s = %q: results state %q, want error", tc.input, tc.text, state)
		}
		if shown := eval[bool](p, `getComputedStyle(document.querySelector('#size-results .stale-note')).display !== 'none'`); !shown {
			t.Errorf("%s = %q: the note that the results are stale is not shown", tc.input, tc.text)
		}
		p.typeInto(tc.input, tc.valid)
	}
	// The reference filter: its area is required once its KoA is typed,
	// and it cannot stand beside K0.
	p.reveal("#size-ref-koa")
	p.typeInto("#size-ref-koa", "800")
	refError := func(slot, want, invalid string) {
		t.Helper()
		if msg := eval[string](p, `document.querySelector('`+sizeView+` [data-error-for="`+slot+`"]').textContent`); !strings.Contains(msg, want) {
			t.Errorf("reference: beside %s %q, want %q", slot, msg, want)
		}
		if inv := eval[string](p, `document.querySelector('`+invalid+`').getAttribute('aria-invalid') || ''`); inv != "true" {
			t.Errorf("reference: %s aria-invalid %q, want true", invalid, inv)
		}
	}
	refError("reference.area_m2", "is required", "#size-ref-area")
	p.typeInto("#size-ref-area", "1.6")
	refError("reference", "not both", "#size-ref-koa") // K0 0.05 is given too
	refError("reference", "not both", "#size-ref-area")
	p.typeInto("#size-k0", "")
	spec := sizeDemo()
	spec.K0, spec.Reference = 0, &core.Filter{KoA: 800, AreaM2: 1.6}
	wantSize(t, p, spec) // 800/16000 cm^2 = 0.05 cm/min: the demo's K0 (by hand)
	p.typeInto("#size-ref-koa", "")
	p.typeInto("#size-ref-area", "")
	p.typeInto("#size-k0", "0.05")

	if msgs := eval[string](p, `[...document.querySelectorAll('`+sizeView+` [data-error-for]')].map(e => e.textContent).join('')`); msgs != "" {
		t.Errorf("after correcting every field, errors still shown: %q", msgs)
	}
	wantSize(t, p, sizeDemo())
	p.typeInto("#size-target", "400")
	p.screenshot("size-error-landscape-1024x768")
}

// Rows are added and removed with buttons at least 44 px square, keep
// their names in order, and a row left empty is not sent (so an error on
// a later row still lands beside that row).
func TestSizeFilterRows(t *testing.T) {
	p := openSize(t)
	p.do(chromedp.Click(chromedp.CSS(`#size-add-filter`)))
	if n := eval[int](p, `document.querySelectorAll('#size-filters .filter-row').length`); n != 4 {
		t.Fatalf("%d rows after Add, want 4", n)
	}
	if focused := eval[string](p, `document.activeElement.name`); focused != "filters[3].label" {
		t.Errorf("focus after Add on %q, want the new row's label", focused)
	}
	wantSize(t, p, sizeDemo()) // an empty row changes nothing
	p.do(chromedp.Click(chromedp.CSS(`#size-add-filter`)))
	p.typeInto(filterRow(4, "label"), "Spare")
	p.typeInto(filterRow(4, "koa"), "0")
	if msg := eval[string](p, `document.querySelector('[data-error-for="filters[4].koa"]').textContent`); !strings.Contains(msg, "greater than 0") {
		t.Errorf("row 4 KoA 0 (row 3 empty): beside it %q, want the error of that row", msg)
	}
	p.typeInto(filterRow(4, "koa"), "1000")
	spec := sizeDemo()
	spec.Filters = append(spec.Filters, core.Filter{Label: "Spare", KoA: 1000})
	s := wantSize(t, p, spec)
	if s.Choice.Chosen == nil || *s.Choice.Chosen != 3 {
		t.Errorf("core chose %v, want the spare (KoA 1000 below Shelf C's 1050)", s.Choice.Chosen)
	}

	// Remove Shelf A: the rows below move up and are renamed.
	p.do(chromedp.Click(chromedp.CSS(`#size-filters .filter-row:first-child [data-remove]`)))
	names := eval[[]string](p, `[...document.querySelectorAll('#size-filters .filter-row [data-part="label"]')].map(i => i.name + '=' + i.value)`)
	if want := []string{"filters[0].label=Shelf B", "filters[1].label=Shelf C", "filters[2].label=", "filters[3].label=Spare"}; strings.Join(names, " ") != strings.Join(want, " ") {
		t.Errorf("rows after removing the first: %v, want %v", names, want)
	}
	spec.Filters = spec.Filters[1:]
	wantSize(t, p, spec)

	small := eval[[]string](p, `[...document.querySelectorAll('`+sizeView+` button, `+sizeView+` input, `+sizeView+` summary')].filter(e => e.offsetParent !== null).filter(e => { const r = e.getBoundingClientRect(); return r.height < 44 || r.width < 44; }).map(e => e.id || e.name || e.textContent.trim())`)
	if len(small) > 0 {
		t.Errorf("controls smaller than 44 x 44 px (WCAG 2.2 target size, enhanced level): %v", small)
	}
}

// The flows the filter in use needs; a machine range that cannot reach the
// target says so beside the answer, not as an error of the whole.
func TestSizeCurrentFilter(t *testing.T) {
	p := openSize(t)
	p.typeInto("#size-qd-max", "700") // 726.8 mL/min is needed (core)
	spec := sizeDemo()
	spec.QDRange.Max = 700
	s := wantSize(t, p, spec)
	if s.Current.QD.OK {
		t.Fatal("core reached the target within QD 300 to 700")
	}
	note := eval[string](p, `document.querySelector('[data-solve-note="qd"]').textContent`)
	if !strings.HasPrefix(note, "No QD up to 700 mL/min reaches 250 mL/min") || !strings.Contains(note, "QD 726.8 mL/min would") { // 726.797 (core) rounded up to a tenth
		t.Errorf("QD note %q, want the range's shortfall and the QD that would do", note)
	}
	if state := eval[string](p, `document.getElementById('size-results').dataset.state`); state != "ok" {
		t.Errorf("results state %q with a failed flow solve, want ok", state)
	}
	// At the bottom of the range already.
	p.typeInto("#size-target", "200")
	p.typeInto("#size-qd-max", "800")
	spec.Target, spec.QDRange.Max = 200, 800
	s = wantSize(t, p, spec)
	if !s.Current.QD.AtMinimum {
		t.Fatal("core: KoA 700 at QB 300 should reach 200 mL/min at QD 300")
	}
	if note := eval[string](p, `document.querySelector('[data-solve-note="qd"]').textContent`); !strings.Contains(note, "already reaches") {
		t.Errorf("QD note %q, want the lowest settable QD to be enough", note)
	}
	// A filter that no QB reaches the target with, at any QB: named as such.
	p.typeInto("#size-qb-min", "")
	p.typeInto("#size-qb-max", "")
	p.typeInto("#size-target", "280")
	p.typeInto("#size-cur-koa", "300")
	if note := eval[string](p, `document.querySelector('[data-solve-note="qb"]').textContent`); !strings.HasPrefix(note, "The filter in use cannot reach 280 mL/min") {
		t.Errorf("QB note %q, want the filter in use to be named as unable", note)
	}
	// No filter in use: the panel says what to enter.
	p.typeInto("#size-cur-koa", "")
	if shown := eval[bool](p, `!document.querySelector('[data-current-none]').hidden && document.querySelector('[data-current-some]').hidden`); !shown {
		t.Error("without a filter in use the panel should ask for one")
	}
}

// The chart: both series, both ceilings as vertical lines at the
// ceilings' places, the target marked; each series ends at the top of
// the axis (the API's area_m2_max) before its ceiling.
func TestSizeChart(t *testing.T) {
	p := openSize(t)
	if n := eval[int](p, `document.querySelectorAll('#size-chart path.series').length`); n != 2 {
		t.Errorf("%d series drawn, want 2", n)
	}
	labels := eval[[]string](p, `[...document.querySelectorAll('#size-chart line.ceiling')].map(l => l.dataset.vertical)`)
	if strings.Join(labels, "|") != "counter max 300.0|co max 187.5" {
		t.Errorf("vertical ceilings %v, want counter max 300.0 and co max 187.5 (min(300, 500), 300 x 500/800)", labels)
	}
	// Every point of each series lies left of its ceiling line.
	ok := eval[bool](p, `(() => {
		const xs = [...document.querySelectorAll('#size-chart line.ceiling')].map(l => Number(l.getAttribute('x1')));
		const paths = [...document.querySelectorAll('#size-chart path.series')];
		return paths.every((p, i) => p.getAttribute('d').split(/[ML]/).filter(Boolean).every(pt => Number(pt.split(' ')[0]) <= xs[i] + 0.05));
	})()`)
	if !ok {
		t.Error("a series is drawn beyond its ceiling")
	}
	if n := eval[int](p, `document.querySelectorAll('#size-chart circle.point').length`); n != 1 {
		t.Errorf("%d target points, want 1 (co-current cannot reach 250)", n)
	}
}

// The handle in views.js's map: snapshot gives the inputs and the
// answer; restore puts them back (on another page) and recomputes.
func TestSizeSnapshotRestore(t *testing.T) {
	p := openSize(t)
	p.typeInto("#size-target", "240")
	p.do(chromedp.Click(chromedp.CSS(`#size-add-filter`)))
	p.typeInto(filterRow(3, "koa"), "990")
	snap := eval[string](p, `import('./js/views.js').then(m => JSON.stringify(m.views.get('size').snapshot()))`)
	if !strings.Contains(snap, `"view":"size"`) || !strings.Contains(snap, `"koa":"990"`) || !strings.Contains(snap, `"target_clearance":"240"`) || strings.Contains(snap, `"sweep"`) {
		t.Fatalf("snapshot %s, want the view, the inputs and the rows, and no chart series", snap)
	}
	q := openSize(t)
	eval[bool](q, `import('./js/views.js').then(m => { m.views.get('size').restore(JSON.parse(`+strconv.Quote(snap)+`).inputs); return true; })`)
	spec := sizeDemo()
	spec.Target = 240
	spec.Filters = append(spec.Filters, core.Filter{KoA: 990})
	wantSize(t, q, spec)
	p.typeInto("#size-target", "x")
	if got := eval[string](p, `import('./js/views.js').then(m => JSON.stringify(m.views.get('size').snapshot()))`); got != "null" {
		t.Errorf("snapshot with an input in error = %s, want null", got)
	}
}

// TestSizeInputChangesOnlyWhatDiffers: typing a new target in the size
// view rewrites the numbers whose text differs (cards, filters on hand,
// filter in use) and leaves the others alone; the same target written
// another way changes nothing in the results at all (no text, attribute,
// flag or chart element written). Reference: the texts the view showed
// before and after, read from the page.
func TestSizeInputChangesOnlyWhatDiffers(t *testing.T) {
	p := openPage(t, "")
	p.showView("size")
	steps := eval[[]map[string]any](p, `(() => {`+typedJS+`
		const view = document.querySelector('#view-size');
		const input = view.querySelector('input[name="target_clearance"]');
		const outputs = [...view.querySelectorAll('.results output')];
		const type = (v) => {
			const before = outputs.map((o) => o.textContent);
			const records = typed(input, view.querySelector('.results'), v);
			const rewritten = new Set();
			let others = 0;
			for (const r of records) {
				const node = r.target.nodeType === Node.TEXT_NODE ? r.target.parentNode : r.target;
				const out = node.closest('output');
				if (out) rewritten.add(out);
				else others++;
			}
			return {
				target: v, others, records: records.length,
				wrong: outputs.filter((o, i) => rewritten.has(o) !== (o.textContent !== before[i])).map((o) => o.dataset.out ?? o.dataset.fit),
				changed: outputs.filter((o, i) => o.textContent !== before[i]).length,
			};
		};
		type('240');
		return [type('241'), type('241,0')];
	})()`)
	for _, s := range steps {
		if w := s["wrong"].([]any); len(w) > 0 {
			t.Errorf("target %v: outputs rewritten though their text is the same, or not though it changed: %v", s["target"], w)
		}
	}
	if s := steps[0]; s["changed"].(float64) == 0 {
		t.Errorf("target %v: no output changed", s["target"])
	}
	if s := steps[1]; s["records"].(float64) != 0 {
		t.Errorf("target %v, the same as before: %v changes in the results (%v outside the outputs), want none", s["target"], s["records"], s["others"])
	}
}
