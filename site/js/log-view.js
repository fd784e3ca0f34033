// log-view.js: the "Service log" view. Lists the saved records (newest
// first, with a search over their labels), opens one into its view or as a
// printed report, deletes with undo, exports the log as JSON or CSV and
// imports a JSON export. It also says plainly where the records are kept
// and when the browser will not keep them.

import { viewTitle } from './views.js';
import { persistence, usage, same } from './store.js';
import { LABELS, LABEL_NAMES, exportJSON, exportCSV, parseImport, download, ImportError } from './log-file.js';
import { el, button } from './dom.js';
import { openRecord, formatTime } from './report.js';

// size writes a number of bytes for reading: 0.4 MB, 8.2 MB, 312 MB, 10 GB.
function size(bytes) {
  const mb = bytes / 1048576;
  if (mb < 10) return `${mb.toFixed(1)} MB`;
  if (mb < 1024) return `${Math.round(mb)} MB`;
  return `${(mb / 1024).toFixed(mb < 10240 ? 1 : 0)} GB`;
}

const PAGE = 100;

// mountLog wires the log view in root. ctx: {store, version}. It returns
// {refresh(), exportJSON(), onPersistence(state)} for the save dialog.
export function mountLog(root, ctx) {
  const { store } = ctx;
  const list = root.querySelector('[data-log-list]');
  const count = root.querySelector('[data-log-count]');
  const storage = root.querySelector('[data-log-storage]');
  const message = root.querySelector('[data-log-message]');
  const messageText = message.querySelector('[data-log-text]');
  const messageActions = message.querySelector('[data-log-actions]');
  const search = root.querySelector('[data-log-search]');
  const fileInput = root.querySelector('[data-log-file]');
  const tools = Object.fromEntries([...root.querySelectorAll('[data-log]')].map((b) => [b.dataset.log, b]));
  let records = [];
  // The list shows the newest PAGE records (a long log stays quick to
  // open); "Show more" adds as many again. The search covers all of them.
  let listed = PAGE;
  const more = button('', 'secondary log-more', () => {
    listed += PAGE;
    render();
  });
  more.hidden = true;
  list.after(more);
  let persisted = 'unknown';
  let inputsRefused = false;

  // say shows a message with optional action buttons; tone is "ok",
  // "warn" or "error" (also said in words: the colour is not the message).
  function say(text, tone = 'ok', ...actions) {
    message.dataset.tone = tone;
    messageText.textContent = text;
    messageActions.replaceChildren(...actions);
  }

  async function describeStorage() {
    const parts = [];
    let tone = 'ok';
    if (store.kind === 'tab') {
      tone = 'error';
      parts.push('This browser does not let ClearKit keep records on this device (private browsing or a privacy setting does this). Records saved now last only until this tab closes: export the log before closing it.');
    } else if (persisted === 'persistent') {
      parts.push('Records are kept on this device until you delete them or clear the browser’s data for this page.');
    } else {
      tone = 'warn';
      parts.push('Records are kept on this device, but the browser has not promised to keep them when storage runs low: export the log now and then.');
    }
    if (inputsRefused) {
      tone = tone === 'ok' ? 'warn' : tone;
      parts.push('The browser does not keep the last inputs across a reload.');
    }
    const u = store.kind === 'device' ? await usage() : null;
    if (u && u.quota) parts.push(`This page uses ${size(u.usage)} of the ${size(u.quota)} the browser allows it (the offline copy included).`);
    storage.dataset.tone = tone;
    storage.textContent = parts.join(' ');
  }

  // summary lists a record's inputs that were filled in: its own, then
  // those one level down (a field check keeps each form's texts under its
  // name: inputs.clearance, inputs.blood, ...), named after that level
  // unless it is the part shown.
  function summary(inputs) {
    const filled = ([, v]) => v !== '' && v !== null && typeof v !== 'object';
    const out = Object.entries(inputs).filter(filled).map(([k, v]) => `${k} ${v}`);
    for (const [name, v] of Object.entries(inputs)) {
      if (!v || typeof v !== 'object' || Array.isArray(v)) continue;
      const prefix = name === inputs.part ? '' : `${name} `;
      out.push(...Object.entries(v).filter(filled).map(([k, x]) => `${prefix}${k} ${x}`));
    }
    return out.join(' · ');
  }

  function item(record) {
    const li = el('li', 'record');
    li.dataset.id = record.id;
    const head = el('div', 'record-head');
    head.append(el('strong', 'record-time', formatTime(record.saved_at)), el('span', 'record-view', viewTitle(record.view)));
    const dl = el('dl', 'record-labels');
    for (const k of LABELS) {
      if (!record.labels[k]) continue;
      const pair = el('div');
      const dd = el('dd', '', record.labels[k]);
      dd.dataset.label = k;
      pair.append(el('dt', '', LABEL_NAMES[k]), dd);
      dl.append(pair);
    }
    const inputs = el('p', 'record-inputs', summary(record.inputs));
    const actions = el('div', 'record-actions');
    actions.append(
      button('Open', 'secondary', () => open(record, false)),
      button('Print report', 'secondary', () => open(record, true)),
      button('Delete', 'secondary danger', () => remove([record], 'the record')),
    );
    li.append(head, dl, inputs, actions);
    return li;
  }

  function render() {
    const q = search.value.trim().toLowerCase();
    const shown = q ? records.filter((r) => LABELS.some((k) => r.labels[k].toLowerCase().includes(q))) : records;
    list.replaceChildren(...shown.slice(0, listed).map(item));
    const rest = shown.length - listed;
    more.hidden = rest <= 0;
    more.textContent = `Show ${Math.min(rest, PAGE)} more (of ${rest} not shown)`;
    if (records.length === 0) count.textContent = 'No records yet. Use “Save to log” in a calculator view.';
    else if (q) count.textContent = `${shown.length} of ${records.length} records match “${search.value.trim()}”.`;
    else count.textContent = records.length === 1 ? '1 record.' : `${records.length} records.`;
    tools['export-json'].disabled = records.length === 0;
    tools['export-csv'].disabled = records.length === 0;
    tools['delete-all'].disabled = records.length === 0;
  }

  // refresh reads the store again. The list is rebuilt only when the
  // records changed, so that a button is not replaced under a finger.
  // root.dataset.refreshed counts the refreshes done (tests wait on it).
  let refreshes = 0;
  async function refresh() {
    let changed = true;
    try {
      const now = await store.all();
      changed = !same(now, records);
      records = now;
    } catch (err) {
      say(`The log could not be read: ${err.message}`, 'error');
    }
    if (changed || refreshes === 0) render();
    await describeStorage();
    root.dataset.refreshed = String(++refreshes);
  }

  function open(record, print) {
    const problem = openRecord(record, ctx.version);
    if (problem) {
      say(problem, 'warn');
      return;
    }
    if (print) window.print();
  }

  async function remove(gone, what) {
    try {
      await store.remove(gone.map((r) => r.id));
    } catch (err) {
      say(`Nothing was deleted: ${err.message}`, 'error');
      return;
    }
    await refresh();
    const undo = button('Undo', 'primary', async () => {
      try {
        await store.putBack(gone);
      } catch (err) {
        say(`The records could not be put back: ${err.message} Import your last export to restore them.`, 'error');
        return;
      }
      await refresh();
      say(gone.length === 1 ? 'The record is back.' : `The ${gone.length} records are back.`);
    });
    say(`Deleted ${what}.`, 'ok', undo);
  }

  function exportLog() {
    if (records.length === 0) return;
    download(exportJSON(records, ctx.version), `clearkit-log-${today()}.json`, 'application/json');
    say(`Exported ${records.length} record${records.length === 1 ? '' : 's'} as JSON.`);
  }

  async function importFile(file) {
    let found;
    try {
      found = parseImport(await file.text(), file.size);
    } catch (err) {
      const reason = err instanceof ImportError ? err.message : `The file could not be read (${err.message}).`;
      say(`Nothing was imported from ${file.name}. ${reason} The log is unchanged.`, 'error');
      return;
    }
    let counts;
    try {
      counts = await store.merge(found);
    } catch (err) {
      say(err.kind === 'quota'
        ? `Nothing was imported from ${file.name}: the device's storage for ClearKit is full. The log is unchanged; delete old records (export them first) to make room.`
        : `Nothing was imported from ${file.name}: ${err.message} The log is unchanged.`, 'error');
      return;
    }
    await refresh();
    const parts = [`Imported ${counts.added} record${counts.added === 1 ? '' : 's'} from ${file.name}.`];
    if (counts.present) parts.push(`${counts.present} ${counts.present === 1 ? 'was' : 'were'} already in the log.`);
    if (counts.conflicts) {
      parts.push(`${counts.conflicts} had the id of a different record in the log; the log's record${counts.conflicts === 1 ? ' was' : 's were'} kept.`);
    }
    say(parts.join(' '), counts.conflicts ? 'warn' : 'ok');
  }

  tools['export-json'].addEventListener('click', exportLog);
  tools['export-csv'].addEventListener('click', () => {
    if (records.length === 0) return;
    download(exportCSV(records), `clearkit-log-${today()}.csv`, 'text/csv');
    say(`Exported ${records.length} record${records.length === 1 ? '' : 's'} as CSV (for spreadsheets; only the JSON export can be imported again).`);
  });
  tools.import.addEventListener('click', () => fileInput.click());
  fileInput.addEventListener('change', async () => {
    const file = fileInput.files[0];
    fileInput.value = '';
    if (file) await importFile(file);
  });
  tools['delete-all'].addEventListener('click', () => {
    const all = records.slice();
    say(`Delete all ${all.length} records from this device? Export them first if you may need them.`, 'warn',
      button(`Delete all ${all.length}`, 'primary danger', () => remove(all, `all ${all.length} records`)),
      button('Keep them', 'secondary', () => say('')));
  });
  search.addEventListener('input', () => {
    listed = PAGE;
    render();
  });
  // Another tab of the page may have changed the log meanwhile.
  root.addEventListener('viewshown', refresh);
  document.addEventListener('visibilitychange', () => {
    if (document.visibilityState === 'visible' && !root.hidden) refresh();
  });

  persistence(false).then((state) => {
    persisted = state;
    return refresh();
  });
  return {
    refresh,
    exportLog,
    onPersistence(state) {
      persisted = state;
      describeStorage();
    },
    inputsRefused() {
      inputsRefused = true;
      describeStorage();
    },
  };
}

function today() {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`;
}
