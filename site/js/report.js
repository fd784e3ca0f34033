// report.js: a saved record, opened into its view. The view recomputes from
// the saved inputs; a banner above it shows the record's labels, when and
// with which version it was saved, whether this version computes the same
// results, and the saved values. Printed (print stylesheet in style.css),
// the banner, the view and the caution make the report.

import { views, sectionOf, showView, viewTitle, currentInputs } from './views.js';
import { LABELS, LABEL_NAMES, flatten } from './log-file.js';
import { el, button } from './dom.js';
import { same } from './store.js';

// Saved and recomputed numbers agree when within this relative difference:
// the same build gives identical numbers; another build's arithmetic may
// move the last digits only.
const AGREE = 1e-9;

function agree(a, b) {
  if (typeof a === 'number' && typeof b === 'number') {
    return a === b || Math.abs(a - b) <= AGREE * Math.max(Math.abs(a), Math.abs(b));
  }
  return JSON.stringify(a) === JSON.stringify(b);
}

// differences lists [path, saved, now] where the saved result and the
// recomputed one differ.
export function differences(saved, now) {
  const a = new Map(flatten(saved));
  const b = new Map(flatten(now));
  const out = [];
  for (const key of new Set([...a.keys(), ...b.keys()])) {
    if (!agree(a.get(key), b.get(key))) out.push([key, a.get(key), b.get(key)]);
  }
  return out;
}

const show = (v) => (v === undefined ? '(none)' : typeof v === 'object' ? JSON.stringify(v) : String(v));

function table(caption, rows) {
  const t = el('table', 'saved-values');
  t.append(el('caption', '', caption));
  const body = el('tbody');
  for (const row of rows) {
    const tr = el('tr');
    row.forEach((cell, i) => tr.append(el(i === 0 ? 'th' : 'td', '', show(cell))));
    body.append(tr);
  }
  t.append(body);
  return t;
}

export function formatTime(iso) {
  return new Date(iso).toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' });
}

// openRecord shows record in its view with its banner. It returns an error
// message when this version has no such view, else "".
export function openRecord(record, version) {
  const handle = views.get(record.view);
  const section = sectionOf(record.view);
  if (!handle || !section) {
    return `This version of ClearKit has no "${record.view}" view, so the record cannot be opened here. It stays in the log and in every export.`;
  }
  for (const old of document.querySelectorAll('.record-banner')) old.remove();
  showView(record.view);
  handle.restore(structuredClone(record.inputs));
  const snap = handle.snapshot();

  const banner = el('div', 'record-banner');
  banner.dataset.record = record.id;
  banner.setAttribute('role', 'region');
  banner.setAttribute('aria-label', 'Saved service record');
  const head = el('div', 'record-banner-head');
  head.append(el('h2', '', `Service record: ${viewTitle(record.view)}`));
  const actions = el('div', 'record-banner-actions');
  actions.append(
    button('Print report', 'primary', () => window.print()),
    button('Close record', 'secondary', () => banner.remove()),
  );
  head.append(actions);
  banner.append(head);

  const dl = el('dl', 'record-labels');
  const add = (name, value) => {
    const pair = el('div');
    const dd = el('dd', '', value || '–');
    dd.dataset.label = name;
    pair.append(el('dt', '', name), dd);
    dl.append(pair);
  };
  for (const k of LABELS) add(LABEL_NAMES[k], record.labels[k]);
  add('Saved', `${formatTime(record.saved_at)} (${record.saved_at})`);
  add('Saved with', `ClearKit ${record.app_version}`);
  add('Shown by', `ClearKit ${version}`);
  add('Record', record.id);
  banner.append(dl);

  const check = el('p', 'record-check');
  const details = el('details', 'record-saved');
  details.append(el('summary', '', 'Saved values'));
  if (!snap) {
    check.dataset.state = 'error';
    check.textContent = 'This version cannot compute the saved inputs (see the field marked in the view). The saved values are below.';
    details.open = true;
  } else {
    const diff = differences(record.result, snap.result);
    if (diff.length === 0) {
      check.dataset.state = 'same';
      check.textContent = 'Recomputed now from the saved inputs: the same results as saved.';
    } else {
      check.dataset.state = 'differ';
      check.textContent = `Recomputed now from the saved inputs: ${diff.length} value${diff.length === 1 ? '' : 's'} differ from the saved record. The view shows this version's results; the saved ones are below.`;
      details.append(table('Values that differ (saved, now)', diff));
      details.open = true;
    }
  }
  details.append(table('Saved inputs', flatten(record.inputs)));
  details.append(table('Saved results', flatten(record.result)));
  banner.append(check, details);

  const h1 = section.querySelector('h1');
  if (h1) h1.after(banner);
  else section.prepend(banner);
  // Once an input changes (typed, or filled by a button of the view), the
  // view no longer shows the record, and the banner goes.
  const opened = currentInputs(handle);
  const events = ['input', 'change', 'click'];
  const leave = () => {
    if (!banner.isConnected) events.forEach((type) => section.removeEventListener(type, onEvent));
    else if (!same(currentInputs(handle), opened)) banner.remove();
  };
  const onEvent = (event) => {
    if (!banner.contains(event.target)) setTimeout(leave, 0);
  };
  events.forEach((type) => section.addEventListener(type, onEvent));
  banner.scrollIntoView({ block: 'start' });
  return '';
}

// Printing shows every folded part of the open view (the optional inputs),
// and folds them back afterwards. The saved values of a record stay as
// they are: open, and printed, when they differ from the view's.
let unfolded = [];
window.addEventListener('beforeprint', () => {
  for (const d of document.querySelectorAll('section.view:not([hidden]) details:not([open]):not(.record-saved)')) {
    d.open = true;
    unfolded.push(d);
  }
});
window.addEventListener('afterprint', () => {
  for (const d of unfolded) d.open = false;
  unfolded = [];
});
