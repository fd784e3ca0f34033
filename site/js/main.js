// main.js: starts the calculation module and mounts the views.

import { loadEngine } from './engine.js';
import { mountCompare } from './compare-view.js';
import { mountSize } from './size-view.js';
import { mountCheck } from './check-view.js';
import { startOffline } from './offline.js';
import { views, showView, reopenLastView } from './views.js';
import { startLog } from './log-start.js';
import { openStore } from './store.js';

const status = document.getElementById('engine-status');

async function start() {
  let version = 'unknown';
  // The record store opens while the module compiles (openStore never
  // rejects: without IndexedDB it gives a store for this tab only).
  const storeOpening = openStore();
  try {
    const engine = await loadEngine();
    version = engine.version;
    document.getElementById('app-version').textContent = `version ${engine.version}`;
    // Every block of results says so, in words, while its inputs are in
    // error and it still shows the last values that could be used (.stale).
    for (const results of document.querySelectorAll('.results')) {
      const note = document.createElement('p');
      note.className = 'stale-note';
      note.textContent = 'Correct the field marked in red: the results below are for the last values that could be used.';
      results.prepend(note);
    }
    views.set('compare', mountCompare(document.getElementById('view-compare'), engine));
    views.set('size', mountSize(document.getElementById('view-size'), engine));
    views.set('check', mountCheck(document.getElementById('view-check'), engine));
    for (const tab of document.querySelectorAll('.view-tab')) {
      tab.addEventListener('click', () => showView(tab.dataset.view));
    }
    status.textContent = 'Ready';
    performance.mark('clearkit:views');
  } catch (err) {
    status.textContent = `The calculator could not start: ${err.message}. Reload the page; if it persists, rebuild or reinstall ClearKit.`;
    document.body.dataset.engine = 'failed';
  }
  // The service log, the last inputs and the open tab, for every view
  // registered above (the log works even when the calculator failed, so
  // that records can still be exported).
  try {
    await startLog(version, storeOpening);
  } catch (err) {
    document.querySelector('#view-log [data-log-storage]').textContent = `The service log could not start: ${err.message}. Reload the page.`;
    document.body.dataset.log = 'failed';
  }
  reopenLastView();
  if (document.body.dataset.engine !== 'failed') document.body.dataset.engine = 'ready';
  // Every view has computed and drawn its first result and the last view is
  // open: the end of the start-up that ./build.sh bench times
  // (site/bench_browser_test.go).
  performance.mark('clearkit:ready');
}

// The service worker is registered once the calculator has started, so that
// storing the offline copy does not slow the first start.
start().finally(() => startOffline(document.getElementById('offline-status'), document.getElementById('update-bar')));
