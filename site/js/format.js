// format.js: putting API numbers on the page. Each <output data-out="a.b">
// shows the value at that path of a response, rounded for reading, and
// keeps the full value in data-value.

export function formatNumber(value, digits = 1, { percent = false, signed = false } = {}) {
  if (typeof value !== 'number' || !Number.isFinite(value)) return '–';
  const shown = percent ? value * 100 : value;
  const text = shown.toFixed(digits);
  return signed && shown > 0 ? `+${text}` : text;
}

export function at(data, path) {
  return path.split('.').reduce((obj, key) => (obj == null ? undefined : obj[key]), data);
}

export function renderOutputs(root, data) {
  for (const out of root.querySelectorAll('output[data-out]')) {
    const value = at(data, out.dataset.out);
    out.textContent = formatNumber(value, Number(out.dataset.digits ?? 1), {
      percent: out.hasAttribute('data-percent'),
      signed: out.hasAttribute('data-signed'),
    });
    out.dataset.value = typeof value === 'number' ? String(value) : '';
  }
}
