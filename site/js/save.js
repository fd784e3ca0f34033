// save.js: the "Save to log" action of every view with a handle, and the
// dialog that asks for the record's labels (site, machine ID, filter,
// notes; the time is taken when the user saves).

import { views, sectionOf, viewTitle } from './views.js';
import { newId, remember, recall, persistence } from './store.js';
import { LABELS, exportJSON, download } from './log-file.js';
import { formatTime } from './report.js';
import { el, button } from './dom.js';

// mountSave adds a save bar to each registered view. ctx: {store, version,
// onSaved(record), exportLog()}.
export function mountSave(dialog, ctx) {
  const fields = Object.fromEntries(LABELS.map((k) => [k, dialog.querySelector(`[name="${k}"]`)]));
  const what = dialog.querySelector('[data-save-what]');
  const error = dialog.querySelector('[data-save-error]');
  const fallback = dialog.querySelector('[data-save-fallback]');
  const saveButton = dialog.querySelector('[data-save="save"]');
  let pending = null; // {record, bar}
  let asked = false;

  const fail = (message, offerExport) => {
    error.textContent = message;
    fallback.hidden = !offerExport;
  };

  async function save() {
    if (!pending) return;
    const { record, bar } = pending;
    record.labels = Object.fromEntries(LABELS.map((k) => [k, fields[k].value.trim()]));
    saveButton.disabled = true;
    try {
      await ctx.store.add(record);
    } catch (err) {
      fail(err.kind === 'quota'
        ? "The device's storage for ClearKit is full: this record was not saved. Export it now to keep it, then export the log and delete old records to make room."
        : `The browser did not store this record (${err.message}). Export it now to keep it.`, true);
      return;
    } finally {
      saveButton.disabled = false;
    }
    remember('labels', { site: record.labels.site, machine_id: record.labels.machine_id, filter: record.labels.filter });
    pending = null;
    dialog.close();
    tell(bar.note, 'saved', ctx.store.kind === 'tab'
      ? 'Saved for this tab only: export the log before closing it.'
      : 'Saved to the service log.');
    ctx.onSaved(record);
    // Ask once, from this user action, that the browser keep the log.
    if (!asked && ctx.store.kind === 'device') {
      asked = true;
      persistence(true).then(ctx.onPersistence);
    }
  }

  function ask(handle, bar) {
    const snap = handle.snapshot();
    tell(bar.note, '', '');
    if (!snap) {
      tell(bar.note, 'refused', 'Correct the inputs marked in red first: only a valid calculation can be saved.');
      return;
    }
    const now = new Date();
    pending = {
      bar,
      record: {
        id: newId(),
        view: snap.view,
        saved_at: now.toISOString(),
        labels: {},
        inputs: snap.inputs,
        result: snap.result,
        app_version: ctx.version,
      },
    };
    const last = recall('labels') || {};
    for (const k of LABELS) fields[k].value = typeof last[k] === 'string' ? last[k] : '';
    what.textContent = `${bar.title}, ${formatTime(pending.record.saved_at)}`;
    fail('', false);
    dialog.showModal();
    fields.site.focus();
  }

  dialog.querySelector('[data-save="cancel"]').addEventListener('click', () => dialog.close());
  saveButton.addEventListener('click', save);
  dialog.addEventListener('close', () => {
    pending = null;
  });
  // Enter in a one-line field saves, as in any form.
  dialog.addEventListener('keydown', (event) => {
    if (event.key === 'Enter' && event.target.tagName === 'INPUT') {
      event.preventDefault();
      save();
    }
  });
  dialog.querySelector('[data-save="export-record"]').addEventListener('click', () => {
    if (!pending) return;
    const r = pending.record;
    download(exportJSON([r], ctx.version), `clearkit-record-${r.saved_at.slice(0, 10)}-${r.id.slice(0, 8)}.json`, 'application/json');
  });
  dialog.querySelector('[data-save="export-log"]').addEventListener('click', () => ctx.exportLog());

  for (const [name, handle] of views) {
    const section = sectionOf(name);
    const note = el('span', 'save-note');
    note.setAttribute('role', 'status');
    const entry = { note, title: viewTitle(name) };
    const opener = button('Save to log', 'primary', () => ask(handle, entry));
    opener.dataset.saveView = name;
    const bar = el('div', 'save-bar');
    bar.append(opener);
    section.prepend(bar);
    // The note is a line of its own under the view's title, so that a long
    // one never covers the title (the button's bar sits beside it).
    section.querySelector(':scope > h1').after(note);
    section.addEventListener('input', () => {
      if (note.firstChild) tell(note, '', '');
    });
  }
}

// tell shows text in a view's save note, marked as kind: 'saved' (a tick)
// or 'refused' (a warning, in the error colour); empty text hides it.
function tell(note, kind, text) {
  note.dataset.kind = kind;
  note.textContent = text;
}
