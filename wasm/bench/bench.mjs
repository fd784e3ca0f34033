// bench.mjs: times the calculation module under Node against peer.mjs, a
// plain JavaScript implementation of the same closed forms, in one run, and
// prints the ratios of README's Performance section. ./build.sh bench runs
// it as
//
//   node wasm/bench/bench.mjs site/clearkit.wasm "$(go env GOROOT)/lib/wasm/wasm_exec.js"
//
// Each figure is the median, over 31 batches of calls lasting about 10 ms
// each, of the time per call (performance.now()), after a warm-up of
// 300 ms. Calls run as the page makes them: one string in, one string out.

import { readFileSync, statSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import * as peer from './peer.mjs';

const [wasmPath = 'site/clearkit.wasm', wasmExec] = process.argv.slice(2);
if (!wasmExec) {
  console.error('usage: node bench.mjs site/clearkit.wasm $(go env GOROOT)/lib/wasm/wasm_exec.js');
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

// The view's requests: the form's texts as typed, with sweep: {} for the
// chart series (compare-view.js).
const form = { qb: '300', qd: '500', koa: '800', cbi: '', cdi: '' };
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
for (const req of [form, { ...form, sweep: {} }, { qb: 450, qd: '700,5', koa: 1300, cbi: 12, cdi: 1.5, sweep: {} }, { qb: 400, qd: 400, koa: 0 }]) {
  agree(peer.compare(req), JSON.parse(ck.compare(JSON.stringify(req))));
}
for (const req of [{ qb: -1, qd: 500, koa: 800 }, { qb: 300, qd: 500 }]) {
  const [p, m] = [peer.compare(req), JSON.parse(ck.compare(JSON.stringify(req)))];
  if (p.ok || m.ok || p.error.field !== m.error.field) throw new Error(`peer and module disagree on ${JSON.stringify(req)}`);
}

let sink = 0; // keeps results alive so that no call is optimised away

// perCall returns the median time of one call of fn, in microseconds.
function perCall(fn) {
  const warm = performance.now() + 300;
  let n = 0;
  while (performance.now() < warm) {
    sink += fn();
    n++;
  }
  const batch = Math.max(1, Math.round(n / 30)); // about 10 ms
  const times = [];
  for (let b = 0; b < 31; b++) {
    const t0 = performance.now();
    for (let i = 0; i < batch; i++) sink += fn();
    times.push(((performance.now() - t0) / batch) * 1000);
  }
  times.sort((x, y) => x - y);
  return times[15];
}

const size = (x) => (typeof x === 'string' ? x.length : 1);
const t = {
  peerCompare: perCall(() => size(peer.compare(form).countercurrent)),
  peerInteraction: perCall(() => size(peer.compare({ ...form, sweep: {} }).sweeps.qb.x)),
  empty: perCall(() => size(ck.echo(compareRequest))),
  compare: perCall(() => size(ck.compare(compareRequest))),
  compareEngine: perCall(() => size(JSON.parse(ck.compare(JSON.stringify(form))).countercurrent)),
  interactionBridge: perCall(() => size(ck.compare(interactionRequest))),
  interaction: perCall(() => size(JSON.parse(ck.compare(JSON.stringify({ ...form, sweep: {} }))).sweeps)),
};
const response = ck.compare(interactionRequest);
t.parse = perCall(() => size(JSON.parse(response).sweeps));

const us = (x) => `${x.toFixed(x < 10 ? 2 : 1)} us`.padStart(10);
const ratio = (x) => `${x.toFixed(2)}x`;
const raw = statSync(wasmPath).size;
console.log(`bench: under Node ${process.version}, ${wasmPath} (${raw} bytes); median time per call`);
console.log(`  peer compare (plain JS, request object to answer object)        ${us(t.peerCompare)}`);
console.log(`  peer interaction (compare + the 3 chart sweeps, 101 points)     ${us(t.peerInteraction)}`);
console.log(`  (a) empty bridge call, clearkit.echo(string)                    ${us(t.empty)}  ${ratio(t.empty / t.peerCompare)} the peer's compare`);
console.log(`  (b) clearkit.compare, JSON string in and out                    ${us(t.compare)}  ${ratio(t.compare / t.empty)} the empty call (target <= 1.3x)`);
console.log(`      the same with JSON.stringify and JSON.parse (engine.call)   ${us(t.compareEngine)}  ${ratio(t.compareEngine / t.empty)} the empty call`);
console.log(`  (c) interaction, one call with sweeps, stringify and parse      ${us(t.interaction)}  ${ratio(t.interaction / t.peerInteraction)} the peer (target <= 3x)`);
console.log(`      of which the bridge call alone (${response.length} bytes back)       ${us(t.interactionBridge)}  ${ratio(t.interactionBridge / t.peerInteraction)} the peer`);
console.log(`      and JSON.parse of the response alone                        ${us(t.parse)}`);
if (sink === 0) console.log('(no results)');
process.exit(0); // Go's main never returns
