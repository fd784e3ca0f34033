// bench.mjs: times the calculation module under Node against peer.mjs, a
// plain JavaScript implementation of the same closed forms, in one run, and
// prints the ratios of README's Performance section. ./build.sh bench runs
// it as
//
//   node wasm/bench/bench.mjs site/clearkit.wasm "$(go env GOROOT)/lib/wasm/wasm_exec.js"
//
// Each figure is the median time per call (performance.now()) over 41
// batches of about 5 ms, after a warm-up (see measure). Calls run as the
// page makes them: one string in, one string out.

import { readFileSync, statSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import * as peer from './peer.mjs';
import { unpack } from '../../site/js/engine.js';

// With --check it only checks that the peer gives the module's numbers
// (./build.sh test does that, so that the peer follows the module).
const args = process.argv.slice(2);
const checkOnly = args[0] === '--check';
const [wasmPath, wasmExec] = checkOnly ? args.slice(1) : args;
if (!wasmExec) {
  console.error('usage: node bench.mjs [--check] site/clearkit.wasm $(go env GOROOT)/lib/wasm/wasm_exec.js');
  process.exit(2);
}
await import(pathToFileURL(wasmExec).href); // defines globalThis.Go
const go = new Go();
const bytes = readFileSync(wasmPath);
const { instance } = await WebAssembly.instantiate(bytes, go.importObject);
go.run(instance); // returns once Go's main waits for calls
const ck = globalThis.clearkit;
if (!ck || typeof ck.compare !== 'function' || typeof ck.echo !== 'function') {
  console.error(`${wasmPath} did not publish clearkit.compare and clearkit.echo`);
  process.exit(1);
}

// The view's requests: the form's texts as typed (the demo values and the
// empty conditions of compare-view.js), with sweep: {} for the chart series.
const form = { qb: '300', qd: '500', koa: '800', cbi: '', cdi: '', qf: '', sieving: '', hct: '', plasma_water: '', red_cell_water: '' };
const compareRequest = JSON.stringify(form);
const interactionRequest = JSON.stringify({ ...form, sweep: {} });

// The peer must give the module's numbers (to 1e-12 relative, or 1e-300
// absolute near 0), or the comparison means nothing.
function agree(a, b, path = '') {
  if (typeof a === 'number' && typeof b === 'number') {
    if (Math.abs(a - b) > 1e-12 * Math.abs(b) + 1e-300) throw new Error(`peer ${path} = ${a}, module ${b}`);
    return;
  }
  if (Array.isArray(b)) {
    if (!Array.isArray(a) || a.length !== b.length) throw new Error(`peer ${path}: length differs`);
    b.forEach((x, i) => agree(a[i], x, `${path}[${i}]`));
    return;
  }
  if (b && typeof b === 'object') {
    for (const k of Object.keys(b)) agree(a?.[k], b[k], `${path}.${k}`);
    return;
  }
  if (a !== b) throw new Error(`peer ${path} = ${a}, module ${b}`);
}
// The page's call (engine.js): the request, and a buffer for the chart
// series, which the module writes there as float64 values.
const seriesBuffer = new Uint8Array(ck.packedBytes);
const pageCall = (request) => unpack(JSON.parse(ck.compare(JSON.stringify(request), seriesBuffer)), seriesBuffer);
for (const req of [form, { ...form, sweep: {} }, { qb: 450, qd: '700,5', koa: 1300, cbi: 12, cdi: 1.5, sweep: {} }, { qb: 400, qd: 400, koa: 0 }]) {
  agree(peer.compare(req), JSON.parse(ck.compare(JSON.stringify(req))));
  agree(peer.compare(req), pageCall(req));
}
for (const req of [{ qb: -1, qd: 500, koa: 800 }, { qb: 300, qd: 500 }]) {
  const [p, m] = [peer.compare(req), JSON.parse(ck.compare(JSON.stringify(req)))];
  if (p.ok || m.ok || p.error.field !== m.error.field) throw new Error(`peer and module disagree on ${JSON.stringify(req)}`);
}

if (checkOnly) {
  console.log('bench: the peer (wasm/bench/peer.mjs) gives the module\'s numbers');
  process.exit(0);
}

let sink = 0; // keeps results alive so that no call is optimised away

// measure times every benchmark of cases ({name: fn}) and returns the
// median time of one call of each, in microseconds. Each is warmed up for
// 300 ms, which also sizes its batch to about 5 ms; then 41 rounds run one
// batch of every benchmark in turn, so that a change in the machine's load
// falls on all of them alike and the ratios hold.
function measure(cases) {
  const batch = {};
  for (const [name, fn] of Object.entries(cases)) {
    const end = performance.now() + 300;
    let n = 0;
    while (performance.now() < end) {
      sink += fn();
      n++;
    }
    batch[name] = Math.max(1, Math.round(n / 60));
  }
  const times = Object.fromEntries(Object.keys(cases).map((name) => [name, []]));
  for (let round = 0; round < 41; round++) {
    for (const [name, fn] of Object.entries(cases)) {
      const t0 = performance.now();
      for (let i = 0; i < batch[name]; i++) sink += fn();
      times[name].push(((performance.now() - t0) / batch[name]) * 1000);
    }
  }
  return Object.fromEntries(Object.entries(times).map(([name, ts]) => [name, ts.sort((x, y) => x - y)[20]]));
}

const size = (x) => (typeof x === 'string' ? x.length : 1);
const response = ck.compare(interactionRequest);
const packedResponse = ck.compare(interactionRequest, seriesBuffer);
const t = measure({
  peerCompare: () => size(peer.compare(form).countercurrent),
  peerInteraction: () => size(peer.compare({ ...form, sweep: {} }).sweeps.qb.x),
  empty: () => size(ck.echo(compareRequest)),
  compare: () => size(ck.compare(compareRequest)),
  compareEngine: () => size(JSON.parse(ck.compare(JSON.stringify(form))).countercurrent),
  interactionBridge: () => size(ck.compare(interactionRequest, seriesBuffer)),
  interaction: () => size(pageCall({ ...form, sweep: {} }).sweeps),
  unpack: () => size(unpack(JSON.parse(packedResponse), seriesBuffer).sweeps),
  interactionJSON: () => size(JSON.parse(ck.compare(JSON.stringify({ ...form, sweep: {} }))).sweeps),
  parseJSON: () => size(JSON.parse(response).sweeps),
});

// (b) once more with only the two calls it compares in the rounds: the
// other cases change the state of Go's heap (how often it collects, how
// many finalizers of js.Values wait), which moves the empty call's cost
// by a microsecond or so, and so the ratio by some 0.1.
const alone = measure({
  empty: () => size(ck.echo(compareRequest)),
  compare: () => size(ck.compare(compareRequest)),
});

const us = (x) => `${x.toFixed(x < 10 ? 2 : 1)} us`.padStart(10);
const ratio = (x) => `${x.toFixed(2)}x`;
const raw = statSync(wasmPath).size;
console.log(`bench: under Node ${process.version}, ${wasmPath} (${raw} bytes); median time per call`);
console.log(`  peer compare (plain JS, request object to answer object)        ${us(t.peerCompare)}`);
console.log(`  peer interaction (compare + the 3 chart sweeps, 101 points)     ${us(t.peerInteraction)}`);
console.log(`  (a) empty bridge call, clearkit.echo(string)                    ${us(t.empty)}  ${ratio(t.empty / t.peerCompare)} the peer's compare`);
console.log(`  (b) clearkit.compare, JSON string in and out                    ${us(t.compare)}  ${ratio(t.compare / t.empty)} the empty call (target <= 1.3x)`);
console.log(`      measured alone (the empty call and compare only)            ${us(alone.compare)}  ${ratio(alone.compare / alone.empty)} the empty call's ${us(alone.empty).trim()}`);
console.log(`      the same with JSON.stringify and JSON.parse (engine.call)   ${us(t.compareEngine)}  ${ratio(t.compareEngine / t.empty)} the empty call`);
console.log(`  (c) interaction as the page makes it (engine.js): stringify, one  ${us(t.interaction)}  ${ratio(t.interaction / t.peerInteraction)} the peer (target <= 3x)`);
console.log(`      call with the series written to a buffer, parse, unpack`);
console.log(`      of which the bridge call alone (${packedResponse.length} bytes of JSON back) ${us(t.interactionBridge)}  ${ratio(t.interactionBridge / t.peerInteraction)} the peer`);
console.log(`      and JSON.parse with unpack alone                            ${us(t.unpack)}`);
console.log(`      the same interaction with the series as JSON text           ${us(t.interactionJSON)}  ${ratio(t.interactionJSON / t.peerInteraction)} the peer`);
console.log(`      of which JSON.parse of the ${response.length}-byte response alone       ${us(t.parseJSON)}`);
if (sink === 0) console.log('(no results)');
process.exit(0); // Go's main never returns
