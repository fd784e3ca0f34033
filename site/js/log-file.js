// log-file.js: the service log's export files (JSON and CSV) and the
// checks an imported JSON file must pass. The JSON schema is documented in
// the README ("Service log files"); change SCHEMA when it changes.

import { same } from './store.js';

export const FORMAT = 'clearkit-service-log';
export const SCHEMA = 1;

// Limits on an imported file and its records.
export const MAX_FILE_BYTES = 20 * 1024 * 1024;
export const MAX_RECORDS = 100000;
const LABEL_LIMITS = { site: 200, machine_id: 200, filter: 200, notes: 4000 };
export const LABELS = Object.keys(LABEL_LIMITS);
// LABEL_NAMES are the labels as the page shows them.
export const LABEL_NAMES = { site: 'Site', machine_id: 'Machine ID', filter: 'Filter', notes: 'Notes' };

const RECORD_KEYS = ['id', 'view', 'saved_at', 'labels', 'inputs', 'result', 'app_version'];
const FILE_KEYS = ['format', 'schema', 'exported_at', 'app_version', 'records'];
const ID = /^[A-Za-z0-9_-]{1,64}$/;
const VIEW = /^[a-z][a-z0-9-]{0,31}$/;
// An ISO 8601 UTC time as Date.prototype.toISOString writes it.
const TIME = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d{1,3})?Z$/;

// exportJSON is the whole log as one JSON document (records newest first,
// as given).
export function exportJSON(records, appVersion, now = new Date()) {
  const file = { format: FORMAT, schema: SCHEMA, exported_at: now.toISOString(), app_version: appVersion, records };
  return `${JSON.stringify(file, null, 2)}\n`;
}

// ImportError says what is wrong with an imported file; nothing has been
// stored when it is thrown.
export class ImportError extends Error {
  constructor(message) {
    super(message);
    this.name = 'ImportError';
  }
}

const isObject = (v) => v !== null && typeof v === 'object' && !Array.isArray(v);

// parseImport checks text as a ClearKit service log file and returns its
// records. Any fault throws an ImportError naming the record (counted from
// 1) and the member at fault.
export function parseImport(text, size = text.length) {
  if (size > MAX_FILE_BYTES) {
    throw new ImportError(`The file is ${(size / 1048576).toFixed(1)} MB; a service log file is at most ${MAX_FILE_BYTES / 1048576} MB.`);
  }
  let file;
  try {
    file = JSON.parse(text.replace(/^\uFEFF/, ''));
  } catch {
    throw new ImportError('This is not a ClearKit service log: the file is not JSON (a CSV export cannot be imported; use the JSON export).');
  }
  if (!isObject(file) || file.format !== FORMAT) {
    throw new ImportError(`This is not a ClearKit service log: it lacks "format": "${FORMAT}".`);
  }
  if (file.schema !== SCHEMA) {
    const newer = Number.isInteger(file.schema) && file.schema > SCHEMA;
    throw new ImportError(newer
      ? `The file was written by a newer ClearKit (log schema ${file.schema}); this version reads schema ${SCHEMA}. Update ClearKit, then import it.`
      : `The file's "schema" is ${JSON.stringify(file.schema)}; this version reads schema ${SCHEMA}.`);
  }
  for (const key of Object.keys(file)) {
    if (!FILE_KEYS.includes(key)) throw new ImportError(`The file has an unknown member "${key}".`);
  }
  if (!Array.isArray(file.records)) throw new ImportError('The file\'s "records" is not a list.');
  if (file.records.length > MAX_RECORDS) {
    throw new ImportError(`The file holds ${file.records.length} records; at most ${MAX_RECORDS} can be imported at once.`);
  }
  const byId = new Map();
  const records = [];
  file.records.forEach((record, i) => {
    checkRecord(record, `Record ${i + 1}`);
    const first = byId.get(record.id);
    if (first) {
      if (!same(first.record, record)) {
        throw new ImportError(`Record ${i + 1} has the id of record ${first.index} but other content.`);
      }
      return; // the same record twice: keep one
    }
    byId.set(record.id, { record, index: i + 1 });
    records.push(record);
  });
  return records;
}

// realTime is false for a well-formed time that does not exist (February
// 30th, hour 25): Date would roll it over into another day.
function realTime(text) {
  const t = Date.parse(text);
  return !Number.isNaN(t) && new Date(t).toISOString().slice(0, 19) === text.slice(0, 19);
}

function checkRecord(r, where) {
  if (!isObject(r)) throw new ImportError(`${where} is not an object.`);
  for (const key of RECORD_KEYS) {
    if (!(key in r)) throw new ImportError(`${where} has no "${key}".`);
  }
  for (const key of Object.keys(r)) {
    if (!RECORD_KEYS.includes(key)) throw new ImportError(`${where} has an unknown member "${key}".`);
  }
  if (typeof r.id !== 'string' || !ID.test(r.id)) {
    throw new ImportError(`${where}: "id" must be 1 to 64 letters, digits, "-" or "_".`);
  }
  if (typeof r.view !== 'string' || !VIEW.test(r.view)) {
    throw new ImportError(`${where}: "view" must be a view name such as "compare".`);
  }
  if (typeof r.saved_at !== 'string' || !TIME.test(r.saved_at) || !realTime(r.saved_at)) {
    throw new ImportError(`${where}: "saved_at" must be a UTC time such as 2025-03-14T09:26:53.000Z.`);
  }
  if (!isObject(r.labels)) throw new ImportError(`${where}: "labels" must be an object.`);
  for (const key of Object.keys(r.labels)) {
    if (!(key in LABEL_LIMITS)) throw new ImportError(`${where}: unknown label "${key}".`);
  }
  for (const [key, limit] of Object.entries(LABEL_LIMITS)) {
    const v = r.labels[key];
    if (typeof v !== 'string') throw new ImportError(`${where}: label "${key}" must be text.`);
    if (v.length > limit) throw new ImportError(`${where}: label "${key}" is longer than ${limit} characters.`);
  }
  if (!isObject(r.inputs)) throw new ImportError(`${where}: "inputs" must be an object.`);
  if (!isObject(r.result)) throw new ImportError(`${where}: "result" must be an object.`);
  if (typeof r.app_version !== 'string' || r.app_version.length > 100) {
    throw new ImportError(`${where}: "app_version" must be text of at most 100 characters.`);
  }
}

// flatten lists the leaves of a JSON value as [path, value] pairs, paths
// joined with ".". Lists are leaves (written as JSON).
export function flatten(value, prefix = '', out = []) {
  if (isObject(value)) {
    for (const [k, v] of Object.entries(value)) flatten(v, prefix ? `${prefix}.${k}` : k, out);
  } else if (prefix) {
    out.push([prefix, value]);
  }
  return out;
}

const NUMBER_TEXT = /^[-+]?(\d+([.,]\d*)?|[.,]\d+)([eE][-+]?\d+)?$/;

// cell is one CSV field (RFC 4180): quoted when it holds a comma, quote or
// line break. Text that a spreadsheet would run as a formula (starting
// with = + - @ or a tab or carriage return, and not a number) gets a
// leading apostrophe (OWASP, CSV injection).
function cell(value) {
  let text;
  if (value === null || value === undefined) text = '';
  else if (typeof value === 'object') text = JSON.stringify(value);
  else text = String(value);
  if (typeof value === 'string' && /^[=+\-@\t\r]/.test(text) && !NUMBER_TEXT.test(text)) text = `'${text}`;
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

// exportCSV is one row per record: fixed columns, then "input.NAME" for
// every input name and "result.PATH" for every result value in any record,
// each group sorted. UTF-8 with a byte-order mark (so spreadsheets read
// accents right), CRLF line ends.
export function exportCSV(records) {
  const fixed = ['id', 'saved_at', 'view', ...LABELS, 'app_version'];
  const inputs = new Set();
  const results = new Set();
  const flat = records.map((r) => ({ inputs: new Map(flatten(r.inputs)), result: new Map(flatten(r.result)) }));
  for (const f of flat) {
    for (const k of f.inputs.keys()) inputs.add(k);
    for (const k of f.result.keys()) results.add(k);
  }
  const inputCols = [...inputs].sort();
  const resultCols = [...results].sort();
  const header = [...fixed, ...inputCols.map((k) => `input.${k}`), ...resultCols.map((k) => `result.${k}`)];
  const rows = records.map((r, i) => [
    r.id, r.saved_at, r.view, ...LABELS.map((k) => r.labels[k]), r.app_version,
    ...inputCols.map((k) => flat[i].inputs.get(k)),
    ...resultCols.map((k) => flat[i].result.get(k)),
  ]);
  return `\uFEFF${[header, ...rows].map((row) => row.map(cell).join(',')).join('\r\n')}\r\n`;
}

// download offers text as a file named name.
export function download(text, name, type) {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.hidden = true;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10000);
}
