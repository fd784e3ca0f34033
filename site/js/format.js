// format.js: putting API numbers on the page. Each <output data-out="a.b">
// shows the value at that path of a response, rounded for reading, and
// keeps the full value in data-value.

import { setText } from './dom.js';

export function formatNumber(value, digits = 1, { percent = false, signed = false } = {}) {
  if (typeof value !== 'number' || !Number.isFinite(value)) return '–';
  const shown = percent ? value * 100 : value;
  const text = shown.toFixed(digits);
  return signed && shown > 0 ? `+${text}` : text;
}

export function at(data, path) {
  return path.split('.').reduce((obj, key) => (obj == null ? undefined : obj[key]), data);
}

// How each output shows its value, read from its attributes once.
const shown = new WeakMap();

function howShown(out) {
  let how = shown.get(out);
  if (!how) {
    how = {
      keys: out.dataset.out.split('.'),
      digits: Number(out.dataset.digits ?? 1),
      options: { percent: out.hasAttribute('data-percent'), signed: out.hasAttribute('data-signed') },
    };
    shown.set(out, how);
  }
  return how;
}

// renderOutputs fills every output under root from data (showNumber),
// but those in the set keep, which stay as they are.
export function renderOutputs(root, data, keep = null) {
  for (const out of root.querySelectorAll('output[data-out]')) {
    if (keep?.has(out)) continue;
    const how = howShown(out);
    let value = data;
    for (const key of how.keys) value = value == null ? undefined : value[key];
    showNumber(out, value, how.digits, how.options);
  }
}

// showNumber puts value in the output out, rounded as formatNumber does,
// with the full value in data-value; a null value shows the output's
// data-null word where it has one ("cannot reach"). An output whose text
// and value are unchanged is left alone, so that the browser lays out
// again only what changed; data-chars holds the length of the text, which
// style.css uses to give a view's numbers boxes of their own.
export function showNumber(out, value, digits, options) {
  const text = value === null && out.dataset.null !== undefined ? out.dataset.null : formatNumber(value, digits, options);
  const full = typeof value === 'number' ? String(value) : '';
  if (out.getAttribute('data-value') !== full) out.setAttribute('data-value', full);
  if (out.textContent === text) return;
  const chars = String(text.length);
  if (out.getAttribute('data-chars') !== chars) out.setAttribute('data-chars', chars);
  setText(out, text);
}
