// store.js: where ClearKit keeps things on the device.
//
// Service records live in IndexedDB (database "clearkit", object store
// "records", key "id"), with persistent storage requested so the browser
// does not evict them under pressure. When the browser refuses IndexedDB
// (private browsing, a privacy setting) the store keeps records in memory
// for the life of the tab and says so: the page then offers the export.
// Small settings (the last inputs of each view, the open tab, the last
// labels) go to localStorage, under keys starting "clearkit.".

const DB_NAME = 'clearkit';
const DB_VERSION = 1;
const RECORDS = 'records';

// StoreError is a failure the page explains to the user. kind is "quota"
// (the device's storage for this page is full), "refused" (the browser
// refuses storage) or "failed" (anything else).
export class StoreError extends Error {
  constructor(kind, message, cause) {
    super(message);
    this.name = 'StoreError';
    this.kind = kind;
    this.cause = cause;
  }
}

function storeError(err) {
  if (err instanceof StoreError) return err;
  const name = err && err.name;
  if (name === 'QuotaExceededError') {
    return new StoreError('quota', "The device's storage for ClearKit is full.", err);
  }
  if (name === 'SecurityError' || name === 'InvalidStateError') {
    return new StoreError('refused', 'The browser refuses to store data for this page.', err);
  }
  return new StoreError('failed', `Storing failed: ${(err && err.message) || err}`, err);
}

// done turns an IDBRequest into a promise.
function done(request) {
  return new Promise((resolve, reject) => {
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error);
  });
}

// finished resolves when a transaction commits, and rejects with the reason
// when it aborts (a quota failure often shows only here, at commit).
function finished(tx) {
  return new Promise((resolve, reject) => {
    tx.oncomplete = () => resolve();
    tx.onabort = () => reject(tx.error || new DOMException('The transaction was aborted', 'AbortError'));
    tx.onerror = () => {}; // the abort that follows carries the error
  });
}

async function openDatabase() {
  if (typeof indexedDB === 'undefined' || !indexedDB) {
    throw new StoreError('refused', 'This browser has no IndexedDB.');
  }
  const request = indexedDB.open(DB_NAME, DB_VERSION);
  request.onupgradeneeded = () => {
    const db = request.result;
    if (!db.objectStoreNames.contains(RECORDS)) db.createObjectStore(RECORDS, { keyPath: 'id' });
  };
  request.onblocked = () => {}; // another tab holds an older version; it closes on versionchange
  const db = await done(request);
  db.onversionchange = () => db.close();
  return db;
}

// same is true when two records hold the same JSON.
export function same(a, b) {
  return canonical(a) === canonical(b);
}

// canonical is JSON with object keys sorted, so that key order (which
// IndexedDB and JSON.parse may not keep alike) does not matter.
function canonical(value) {
  return JSON.stringify(value, (key, v) => (v && typeof v === 'object' && !Array.isArray(v)
    ? Object.fromEntries(Object.keys(v).sort().map((k) => [k, v[k]]))
    : v));
}

const newestFirst = (a, b) => (a.saved_at < b.saved_at ? 1 : a.saved_at > b.saved_at ? -1 : a.id < b.id ? -1 : 1);

// The IndexedDB store.
class DeviceStore {
  constructor(db) {
    this.db = db;
    this.kind = 'device';
  }

  async all() {
    const tx = this.db.transaction(RECORDS, 'readonly');
    return (await done(tx.objectStore(RECORDS).getAll())).sort(newestFirst);
  }

  async get(id) {
    const tx = this.db.transaction(RECORDS, 'readonly');
    return done(tx.objectStore(RECORDS).get(id));
  }

  // write runs fn(objectStore) in one readwrite transaction: all its
  // changes land or none do.
  async write(fn) {
    let end = Promise.resolve();
    try {
      const tx = this.db.transaction(RECORDS, 'readwrite');
      end = finished(tx);
      const value = await fn(tx.objectStore(RECORDS));
      await end;
      return value;
    } catch (err) {
      // A failed request aborts the transaction; the abort may carry the
      // real reason (the quota).
      const abort = await end.then(() => null, (e) => e);
      throw storeError(abort && abort.name === 'QuotaExceededError' ? abort : err);
    }
  }

  add(record) {
    return this.write((os) => done(os.add(record)));
  }

  // merge adds the records not in the store, in one transaction. A record
  // whose id is there with the same content is "present"; with other
  // content it is a "conflict" and the stored one is kept.
  merge(records) {
    return this.write(async (os) => {
      const counts = { added: 0, present: 0, conflicts: 0 };
      const existing = await Promise.all(records.map((r) => done(os.get(r.id))));
      records.forEach((record, i) => {
        if (!existing[i]) {
          os.add(record);
          counts.added++;
        } else if (same(existing[i], record)) counts.present++;
        else counts.conflicts++;
      });
      return counts;
    });
  }

  remove(ids) {
    return this.write((os) => Promise.all(ids.map((id) => done(os.delete(id)))));
  }

  // putBack stores records again (undo of a delete).
  putBack(records) {
    return this.write((os) => Promise.all(records.map((r) => done(os.put(r)))));
  }
}

// The in-memory store, when the browser refuses IndexedDB: the records
// last until the tab closes.
class TabStore {
  constructor() {
    this.records = new Map();
    this.kind = 'tab';
  }

  async all() {
    return [...this.records.values()].map((r) => structuredClone(r)).sort(newestFirst);
  }

  async get(id) {
    const r = this.records.get(id);
    return r && structuredClone(r);
  }

  async add(record) {
    if (this.records.has(record.id)) throw new StoreError('failed', `A record with id ${record.id} exists.`);
    this.records.set(record.id, structuredClone(record));
  }

  async merge(records) {
    const counts = { added: 0, present: 0, conflicts: 0 };
    for (const record of records) {
      const old = this.records.get(record.id);
      if (!old) {
        this.records.set(record.id, structuredClone(record));
        counts.added++;
      } else if (same(old, record)) counts.present++;
      else counts.conflicts++;
    }
    return counts;
  }

  async remove(ids) {
    for (const id of ids) this.records.delete(id);
  }

  async putBack(records) {
    for (const r of records) this.records.set(r.id, structuredClone(r));
  }
}

// openStore opens the record store: the device's IndexedDB when the browser
// allows it, else a store for this tab only. The result has kind "device"
// or "tab"; for "tab", reason says why.
export async function openStore() {
  try {
    return new DeviceStore(await openDatabase());
  } catch (err) {
    const store = new TabStore();
    store.reason = storeError(err);
    return store;
  }
}

// persistence asks the browser to keep this page's storage under pressure
// when ask is true (the browser may prompt; call it from a user action),
// else only reads whether it does. It gives "persistent", "best-effort"
// or "unknown" (no Storage API).
export async function persistence(ask) {
  const s = navigator.storage;
  if (!s || typeof s.persisted !== 'function') return 'unknown';
  try {
    if (await s.persisted()) return 'persistent';
    if (ask && typeof s.persist === 'function' && (await s.persist())) return 'persistent';
    return 'best-effort';
  } catch {
    return 'unknown';
  }
}

// usage gives {usage, quota} in bytes for this page's origin, or null.
export async function usage() {
  try {
    const e = await navigator.storage.estimate();
    return { usage: e.usage, quota: e.quota };
  } catch {
    return null;
  }
}

// newId gives a random record id (UUID version 4 form, RFC 9562), stable
// for the life of the record: export and import keep it, so importing a
// file twice adds nothing.
export function newId() {
  const b = crypto.getRandomValues(new Uint8Array(16));
  b[6] = (b[6] & 0x0f) | 0x40;
  b[8] = (b[8] & 0x3f) | 0x80;
  const h = [...b].map((x) => x.toString(16).padStart(2, '0')).join('');
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}

// remember keeps a small setting in localStorage; it returns false when the
// browser refuses or is full, and the caller says so.
export function remember(key, value) {
  try {
    localStorage.setItem(`clearkit.${key}`, JSON.stringify(value));
    return true;
  } catch {
    return false;
  }
}

// recall reads a setting kept by remember, or undefined.
export function recall(key) {
  try {
    const text = localStorage.getItem(`clearkit.${key}`);
    return text === null ? undefined : JSON.parse(text);
  } catch {
    return undefined;
  }
}
