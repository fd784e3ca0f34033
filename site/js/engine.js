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
  go.run(result.instance); // runs Go's main until it waits for calls
  const api = globalThis.clearkit;
  if (!api) {
    throw new Error('the calculation module did not start');
  }
  return {
    version: api.version,
    // call runs one calculation: request is a plain object, the answer is
    // the parsed response ({ok: true, ...} or {ok: false, error}).
    call(name, request) {
      const fn = api[name];
      if (typeof fn !== 'function') {
        throw new Error(`the calculation module has no "${name}"`);
      }
      return JSON.parse(fn(JSON.stringify(request)));
    },
  };
}
