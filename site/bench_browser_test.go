//go:build bench

package site

// Browser benchmarks, run by ./build.sh bench (go test -tags bench): they
// print figures and assert nothing (speed is reported, not asserted). Both
// run in headless Chromium with the page's main thread slowed 4x
// (emulation.SetCPUThrottlingRate), and are timed inside the page with
// performance.now().

import (
	"fmt"
	"slices"
	"testing"
	"time"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"
)

const (
	benchThrottle = 4
	benchReloads  = 15  // timed start-ups, after one untimed
	benchInputs   = 200 // timed inputs, after 60 untimed
)

// TestBenchBrowser: (1) navigation to the first computed result with the
// service worker's cache warm: the page is installed for offline use, then
// reloaded; the figure is the time from the start of navigation to the
// mark main.js sets once every view has computed and drawn its first
// result (performance.mark 'clearkit:ready'). (2) Input to updated results
// and charts: a new QB in the compare view's input, an input event, and
// a forced style and layout of the results and the chart; the figure runs
// from before the event to after the layout (painting is not included).
func TestBenchBrowser(t *testing.T) {
	p := openPage(t, "")
	waitOffline(p)
	if _, err := chromedp.Call(p.ctx, emulation.SetCPUThrottlingRate, emulation.SetCPUThrottlingRateParams{Rate: benchThrottle}); err != nil {
		t.Fatal(err)
	}
	var ready, wasmDone, domDone, compiled, started, viewsDone []float64
	for i := range benchReloads + 1 {
		p.reload()
		if !eval[bool](p, `Boolean(navigator.serviceWorker.controller)`) {
			t.Fatal("after a reload the service worker does not control the page")
		}
		if i == 0 {
			continue
		}
		ready = append(ready, eval[float64](p, `performance.getEntriesByName('clearkit:ready')[0].startTime`))
		wasmDone = append(wasmDone, eval[float64](p, `performance.getEntriesByName(new URL('clearkit.wasm', location.href).href)[0].responseEnd`))
		domDone = append(domDone, eval[float64](p, `performance.getEntriesByType('navigation')[0].domContentLoadedEventEnd`))
		compiled = append(compiled, eval[float64](p, `performance.getEntriesByName('clearkit:compiled')[0].startTime`))
		started = append(started, eval[float64](p, `performance.getEntriesByName('clearkit:started')[0].startTime`))
		viewsDone = append(viewsDone, eval[float64](p, `performance.getEntriesByName('clearkit:views')[0].startTime`))
	}
	fmt.Printf("bench: browser, Chromium headless, CPU throttled %dx, service worker cache warm, %d reloads:\n", benchThrottle, benchReloads)
	fmt.Printf("  navigation to first computed result  median %6.1f ms  p95 %6.1f ms  (target median <= 600 ms)\n", quantile(ready, 0.5), quantile(ready, 0.95))
	fmt.Printf("    of which DOMContentLoaded           median %6.1f ms, clearkit.wasm received %6.1f ms\n", quantile(domDone, 0.5), quantile(wasmDone, 0.5))
	fmt.Printf("    module compiled %6.1f ms, Go started %6.1f ms, views computed and drawn %6.1f ms (medians)\n", quantile(compiled, 0.5), quantile(started, 0.5), quantile(viewsDone, 0.5))

	times := eval[[]float64](p, fmt.Sprintf(`(async () => {
		const view = document.querySelector('section.view[data-view="compare"]');
		const input = view.querySelector('input[name="qb"]');
		const results = view.querySelector('.results');
		const chart = view.querySelector('svg.chart');
		const times = [];
		for (let i = 0; i < %d; i++) {
			await new Promise((r) => requestAnimationFrame(() => setTimeout(r, 0)));
			input.value = String(250 + (i %% 100));
			const t0 = performance.now();
			input.dispatchEvent(new Event('input', { bubbles: true }));
			results.getBoundingClientRect();
			chart.getBoundingClientRect();
			times.push(performance.now() - t0);
		}
		return times.slice(60);
	})()`, benchInputs+60))
	// The last input (QB 309) must have been computed and shown.
	if state, shown := eval[string](p, `document.querySelector('#view-compare .results').dataset.state`),
		eval[string](p, `document.querySelector('#view-compare input[name="qb"]').value`); state != "ok" || shown != "309" {
		t.Fatalf("after the inputs: results state %q, QB %q, want ok and 309", state, shown)
	}
	fmt.Printf("  input to updated results and charts  median %6.2f ms  p95 %6.2f ms  (targets 8 ms and 16 ms; %d inputs)\n", quantile(times, 0.5), quantile(times, 0.95), len(times))
	// The share of the calculation: the same request as the view makes,
	// JSON.stringify, the bridge call with the series buffer, JSON.parse
	// and the series unpacked, as engine.js does.
	calls := eval[[]float64](p, fmt.Sprintf(`(async () => {
		const { unpack } = await import('./js/engine.js');
		const series = new Uint8Array(clearkit.packedBytes);
		const form = document.querySelector('section.view[data-view="compare"] form');
		const times = [];
		for (let i = 0; i < %d; i++) {
			await new Promise((r) => setTimeout(r, 0));
			const request = { ...Object.fromEntries([...form.querySelectorAll('input[name]')].map((e) => [e.name, e.value.trim()])), qb: String(250 + (i %% 100)), sweep: {} };
			const t0 = performance.now();
			unpack(JSON.parse(clearkit.compare(JSON.stringify(request), series)), series);
			times.push(performance.now() - t0);
		}
		return times.slice(60);
	})()`, benchInputs+60))
	fmt.Printf("    of which the calculation call       median %6.2f ms  p95 %6.2f ms  (stringify, bridge, parse, unpack)\n", quantile(calls, 0.5), quantile(calls, 0.95))
	// The share of the chart: pressing the chart's axis button redraws it
	// from the last result without a calculation.
	draws := eval[[]float64](p, fmt.Sprintf(`(async () => {
		const view = document.querySelector('section.view[data-view="compare"]');
		const buttons = [...view.querySelectorAll('[data-axis]')];
		const chart = view.querySelector('svg.chart');
		const times = [];
		for (let i = 0; i < %d; i++) {
			await new Promise((r) => requestAnimationFrame(() => setTimeout(r, 0)));
			const t0 = performance.now();
			buttons[i %% buttons.length].click();
			chart.getBoundingClientRect();
			times.push(performance.now() - t0);
		}
		return times.slice(60);
	})()`, benchInputs+60))
	fmt.Printf("    and the chart redrawn alone         median %6.2f ms  p95 %6.2f ms  (axis button, no calculation)\n", quantile(draws, 0.5), quantile(draws, 0.95))
}

// quantile returns the q quantile of xs (nearest rank).
func quantile(xs []float64, q float64) float64 {
	s := slices.Sorted(slices.Values(xs))
	i := int(q*float64(len(s)) + 0.5)
	return s[min(max(i-1, 0), len(s)-1)]
}

// TestBenchBrowserCheck: a keystroke in the Field checks view's clearance
// test with the demo's QF 10 mL/min and uncertainty on, CPU throttled 4x.
// (1) Input to updated results: a new CBo, the input event, style and
// layout of the results forced; the 95 % ranges are then pending
// (check-view.js asks for them later). (2) The ranges: the pending
// calculation run at once (the handle's snapshot flushes it) and the
// results laid out again. (3) The calls alone (JSON.stringify,
// clearkit.check, JSON.parse): without the uncertainty, as the keystroke
// makes it, and the whole check, as one call per keystroke made it before.
func TestBenchBrowserCheck(t *testing.T) {
	const n = 40 // timed inputs of each kind, after 10 untimed
	p := openPage(t, "")
	p.showView("check")
	p.settle()
	if _, err := chromedp.Call(p.ctx, emulation.SetCPUThrottlingRate, emulation.SetCPUThrottlingRateParams{Rate: benchThrottle}); err != nil {
		t.Fatal(err)
	}
	type figures struct{ Keystroke, Ranges, First, Whole []float64 }
	// Each round computes the ranges twice (about 0.2 s at 4x); a loaded
	// machine can take far longer than eval's 20 s for all of them.
	f := evalTimeout[figures](p, fmt.Sprintf(`import('./js/views.js').then(async (m) => {
		const handle = m.views.get('check');
		const form = document.getElementById('check-form');
		const input = document.getElementById('check-cbo');
		const results = document.getElementById('check-results');
		const out = { Keystroke: [], Ranges: [], First: [], Whole: [] };
		const uncertainty = ['concentration_uncertainty_percent', 'concentration_uncertainty_floor', 'flow_uncertainty_percent'];
		const frame = () => new Promise((r) => requestAnimationFrame(() => setTimeout(r, 0)));
		for (let i = 0; i < %[1]d + 10; i++) {
			await frame();
			input.value = String(18 + (i %% 20) / 10);
			let t0 = performance.now();
			input.dispatchEvent(new Event('input', { bubbles: true }));
			results.getBoundingClientRect();
			const keystroke = performance.now() - t0;
			if (results.dataset.pending !== 'true') throw new Error('no ranges pending after an input');
			await frame();
			t0 = performance.now();
			handle.snapshot();
			results.getBoundingClientRect();
			const ranges = performance.now() - t0;
			await frame();
			const request = Object.fromEntries([...form.querySelectorAll('input[name]')].map((e) => [e.name, e.value.trim()]));
			t0 = performance.now();
			const whole = JSON.parse(clearkit.check(JSON.stringify(request)));
			const call = performance.now() - t0;
			if (!whole.ok || !whole.uncertainty) throw new Error('the whole check gave no uncertainty');
			for (const f of uncertainty) delete request[f];
			await frame();
			t0 = performance.now();
			JSON.parse(clearkit.check(JSON.stringify(request)));
			const first = performance.now() - t0;
			if (i >= 10) { out.Keystroke.push(keystroke); out.Ranges.push(ranges); out.First.push(first); out.Whole.push(call); }
		}
		return out;
	})`, n), 5*time.Minute)
	fmt.Printf("bench: browser, Chromium headless, CPU throttled %dx, Field checks clearance test, QF 10 mL/min, uncertainty on (%d inputs):\n", benchThrottle, n)
	fmt.Printf("  keystroke to updated results, ranges pending  median %6.2f ms  p95 %6.2f ms\n", quantile(f.Keystroke, 0.5), quantile(f.Keystroke, 0.95))
	fmt.Printf("    of which the call without the uncertainty    median %6.2f ms  p95 %6.2f ms  (stringify, bridge, parse)\n", quantile(f.First, 0.5), quantile(f.First, 0.95))
	fmt.Printf("  the 95 %% ranges computed and shown            median %6.2f ms  p95 %6.2f ms\n", quantile(f.Ranges, 0.5), quantile(f.Ranges, 0.95))
	fmt.Printf("    the whole check in one call (as before)      median %6.2f ms  p95 %6.2f ms\n", quantile(f.Whole, 0.5), quantile(f.Whole, 0.95))
}

// TestBenchBrowserSize: a keystroke in the Size a filter view with the
// demo (three filters on the shelf, a filter in use, both flow ranges),
// CPU throttled 4x. (1) Input to updated results and chart: a new target
// clearance, the input event, style and layout of the results and the
// chart forced (painting not included). (2) The calculation's share: the
// same inputs again with clearkit.size wrapped, timing the bridge call and
// a JSON.parse of its answer (the chart series travel apart, packed).
func TestBenchBrowserSize(t *testing.T) {
	p := openPage(t, "")
	p.showView("size")
	p.settle()
	if _, err := chromedp.Call(p.ctx, emulation.SetCPUThrottlingRate, emulation.SetCPUThrottlingRateParams{Rate: benchThrottle}); err != nil {
		t.Fatal(err)
	}
	type figures struct {
		Keystroke, Call []float64
		Bytes           int
	}
	f := evalTimeout[figures](p, fmt.Sprintf(`(async () => {
		const view = document.querySelector('section.view[data-view="size"]');
		const input = view.querySelector('#size-form input[name="target_clearance"]');
		const results = view.querySelector('.results');
		const chart = view.querySelector('svg.chart');
		const frame = () => new Promise((r) => requestAnimationFrame(() => setTimeout(r, 0)));
		const out = { Keystroke: [], Call: [], Bytes: 0 };
		const keystrokes = async (record) => {
			for (let i = 0; i < %[1]d + 60; i++) {
				await frame();
				input.value = String(230 + (i %% 40));
				const t0 = performance.now();
				input.dispatchEvent(new Event('input', { bubbles: true }));
				results.getBoundingClientRect();
				chart.getBoundingClientRect();
				if (record && i >= 60) out.Keystroke.push(performance.now() - t0);
			}
		};
		await keystrokes(true);
		const size = clearkit.size;
		const calls = [];
		clearkit.size = (...args) => {
			const t0 = performance.now();
			const answer = size(...args);
			JSON.parse(answer);
			calls.push(performance.now() - t0);
			out.Bytes = answer.length;
			return answer;
		};
		try {
			await keystrokes(false);
		} finally {
			clearkit.size = size;
		}
		out.Call = calls.slice(60);
		return out;
	})()`, benchInputs), 5*time.Minute)
	// The last input (target 249 mL/min) must have been computed and shown.
	if state, shown := eval[string](p, `document.querySelector('#view-size .results').dataset.state`),
		eval[string](p, `document.querySelector('#size-form input[name="target_clearance"]').value`); state != "ok" || shown != "249" {
		t.Fatalf("after the inputs: results state %q, target %q, want ok and 249", state, shown)
	}
	fmt.Printf("bench: browser, Chromium headless, CPU throttled %dx, Size a filter with the demo (%d inputs):\n", benchThrottle, len(f.Keystroke))
	fmt.Printf("  input to updated results and chart   median %6.2f ms  p95 %6.2f ms\n", quantile(f.Keystroke, 0.5), quantile(f.Keystroke, 0.95))
	fmt.Printf("    of which the call and JSON.parse    median %6.2f ms  p95 %6.2f ms  (%d bytes of JSON back)\n", quantile(f.Call, 0.5), quantile(f.Call, 0.95), f.Bytes)
}
