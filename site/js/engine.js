// engine.js: loads the Go calculation module (clearkit.wasm) and wraps the
// API it publishes on globalThis.clearkit. Every number the page shows
// comes through call().

export async function loadEngine(url = 'clearkit.wasm') {
  if (typeof Go !== 'function') {
    throw new Error('wasm_exec.js did not load');
  }
  const go = new Go();
  let result;
  try {
    result = await WebAssembly.instantiateStreaming(fetch(url), go.importObject);
  } catch (streamError) {
    // Some static hosts serve .wasm with the wrong media type; instantiate
    // from the bytes instead. A network failure fails here again, loudly.
    const response = await fetch(url);
    if (!response.ok) {
      throw new Error(`could not fetch ${url} (HTTP ${response.status})`);
    }
    result = await WebAssembly.instantiate(await response.arrayBuffer(), go.importObject);
  }
  performance.mark('clearkit:compiled'); // start-up marks: see site/bench_browser_test.go
  go.run(result.instance); // runs Go's main until it waits for calls
  performance.mark('clearkit:started');
  const api = globalThis.clearkit;
  if (!api) {
    throw new Error('the calculation module did not start');
  }
  // The module writes chart series here as float64 values rather than as
  // JSON text (see unpack); one buffer serves every call.
  const series = new Uint8Array(api.packedBytes);
  return {
    version: api.version,
    // call runs one calculation: request is a plain object, the answer is
    // the parsed response ({ok: true, ...} or {ok: false, error}), with
    // any chart series as Float64Arrays.
    call(name, request) {
      const fn = api[name];
      if (typeof fn !== 'function') {
        throw new Error(`the calculation module has no "${name}"`);
      }
      return unpack(JSON.parse(fn(JSON.stringify(request), series)), series);
    },
  };
}

// unpack puts the chart series the module wrote into bytes back where the
// JSON answer would have held them: answer.packed = {into, points or
// lengths, series} names them, as paths within answer[into], in the order
// they lie end to end, points values each or lengths[k] for series k
// (compare's {into: "sweeps", points: 101, series: ["qb.x", ...]} makes
// answer.sweeps.qb.x and so on). Each becomes a Float64Array of its own
// copy of the values (the buffer is reused).
export function unpack(answer, bytes) {
  const packed = answer.packed;
  if (!packed) return answer;
  const { into, points, lengths, series } = packed;
  let total = 0;
  for (let k = 0; k < series.length; k++) total += lengths ? lengths[k] : points;
  const values = new Float64Array(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + 8 * total));
  const target = (answer[into] ??= {});
  for (let k = 0, at = 0; k < series.length; k++) {
    const n = lengths ? lengths[k] : points;
    const path = seriesPath(series[k]);
    let obj = target;
    for (let i = 0; i < path.length - 1; i++) obj = (obj[path[i]] ??= {});
    obj[path[path.length - 1]] = values.subarray(at, at + n);
    at += n;
  }
  delete answer.packed;
  return answer;
}

// seriesPath splits a packed series name, "qb.x", into ["qb", "x"] (a
// name of more parts goes as deep), once per name: the names are the same
// in every answer, and the split is a third of unpack's time (./build.sh
// bench).
const seriesPaths = new Map();
function seriesPath(name) {
  let path = seriesPaths.get(name);
  if (!path) seriesPaths.set(name, (path = name.split('.')));
  return path;
}
