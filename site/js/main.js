// main.js: starts the calculation module and mounts the views.

import { loadEngine } from './engine.js';
import { mountCompare } from './compare-view.js';
import { startOffline } from './offline.js';

const status = document.getElementById('engine-status');

// views maps a view name to the handle its mount function returned
// ({name, snapshot(), restore(inputs)}), for features that work across views.
export const views = new Map();

function showView(name) {
  for (const view of document.querySelectorAll('section.view')) view.hidden = view.dataset.view !== name;
  for (const tab of document.querySelectorAll('.view-tab')) tab.setAttribute('aria-pressed', String(tab.dataset.view === name));
}

async function start() {
  try {
    const engine = await loadEngine();
    document.getElementById('app-version').textContent = `version ${engine.version}`;
    views.set('compare', mountCompare(document.getElementById('view-compare'), engine));
    for (const tab of document.querySelectorAll('.view-tab')) {
      tab.addEventListener('click', () => showView(tab.dataset.view));
    }
    status.textContent = 'Ready';
    document.body.dataset.engine = 'ready';
  } catch (err) {
    status.textContent = `The calculator could not start: ${err.message}. Reload the page; if it persists, rebuild or reinstall ClearKit.`;
    document.body.dataset.engine = 'failed';
  }
}

// The service worker is registered once the calculator has started, so that
// storing the offline copy does not slow the first start.
start().finally(() => startOffline(document.getElementById('offline-status')));
