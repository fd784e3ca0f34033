// log-start.js: starts the service log for the registered views: opens the
// store, mounts the log view and the save dialog, and keeps the last
// inputs of every view. storeOpening is openStore()'s promise, which
// main.js starts before the calculation module loads so that the two
// overlap.

import { openStore } from './store.js';
import { mountLog } from './log-view.js';
import { mountSave } from './save.js';
import { keepInputs } from './last-inputs.js';

export async function startLog(version, storeOpening = openStore()) {
  let log = null;
  let inputsRefused = false;
  keepInputs(() => {
    inputsRefused = true;
    if (log) log.inputsRefused();
  });
  const store = await storeOpening;
  log = mountLog(document.getElementById('view-log'), { store, version });
  if (inputsRefused) log.inputsRefused();
  mountSave(document.getElementById('save-dialog'), {
    store,
    version,
    onSaved: () => log.refresh(),
    onPersistence: (state) => log.onPersistence(state),
    exportLog: () => log.exportLog(),
  });
  document.body.dataset.log = store.kind;
}
