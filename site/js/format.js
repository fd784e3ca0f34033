// format.js: putting API numbers on the page. Each <output data-out="a.b">
// shows the value at that path of a response, rounded for reading, and
// keeps the full value in data-value.

import { setText, setData } from './dom.js';

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
// again only what changed; data-chars holds the length of the text (empty
// for a data-null word), which style.css uses to give a view's numbers
// boxes of their own.
export function showNumber(out, value, digits, options) {
  const word = value === null && out.dataset.null !== undefined;
  const text = word ? out.dataset.null : formatNumber(value, digits, options);
  const full = typeof value === 'number' ? String(value) : '';
  if (out.getAttribute('data-value') !== full) out.setAttribute('data-value', full);
  if (out.textContent === text) return;
  const chars = word ? '' : String(text.length); // a word ("no rating") gets no box: letters are not 1ch
  
  if (out.getAttribute('data-chars') !== chars) out.setAttribute('data-chars', chars);
  setText(out, text);
}

// showSentence puts text in node with each of its numbers (a run of
// digits with an optional sign and decimal part, and what touches it: see
// NUMBER) in a box of its own, <span
// class="num" data-chars="n">, as showNumber's outputs have: a sentence
// whose numbers follow the input (an out-of-reach message, say) then
// changes only inside its boxes from one keystroke to the next, and the
// browser lays out the boxes alone. When node shows the same words between
// the same count of numbers, only the numbers are written; otherwise its
// children are made again. An empty text leaves node empty.
export function showSentence(node, text) {
  const parts = text.split(NUMBER); // words, number, words, ..., words
  if (!sameWords(node, parts)) {
    const children = [];
    parts.forEach((part, i) => {
      if (i % 2 === 0) {
        if (part !== '') children.push(document.createTextNode(part));
        return;
      }
      const box = document.createElement('span');
      box.className = 'num';
      box.dataset.chars = boxChars(part);
      box.textContent = part;
      children.push(box);
    });
    node.replaceChildren(...children);
    return;
  }
  let box = node.firstElementChild;
  for (let i = 1; i < parts.length; i += 2) {
    setData(box, 'chars', boxChars(parts[i]));
    setText(box, parts[i]);
    box = box.nextElementSibling;
  }
}

// A number with its sign and whatever touches it on either side ("(+3.6",
// "-2.0%),"): a line may break on either side of a box, so what touches
// the number goes in its box rather than be left at the end of a line.
const NUMBER = /([^\s0-9]*[+-]?[0-9]+(?:\.[0-9]+)?[^\s]*)/;

// boxChars is the width of part's box in characters (data-chars): its
// length, with one more for each of %, ± and +, which are wider than a
// digit; none (no box) when part holds a letter ("CO2").
function boxChars(part) {
  if (/[A-Za-z]/.test(part)) return '';
  return String(part.length + (part.match(/[%±+]/g)?.length ?? 0));
}

// sameWords tells whether node's children are parts' words (text nodes,
// empty ones left out) and a number box in the place of each number.
function sameWords(node, parts) {
  let child = node.firstChild;
  for (let i = 0; i < parts.length; i++) {
    if (i % 2 === 0 && parts[i] === '') continue;
    if (child === null) return false;
    if (i % 2 === 0 ? child.nodeType !== Node.TEXT_NODE || child.data !== parts[i] : child.nodeName !== 'SPAN' || child.className !== 'num') {
      return false;
    }
    child = child.nextSibling;
  }
  return child === null;
}
