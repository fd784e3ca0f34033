// views.js: the registry of the page's views, for features that work
// across views (the service log, the last inputs, the report).
//
// Each view's mount function returns a handle, kept here under its name:
//   name        the view's name, as in its section's data-view
//   snapshot()  {view, inputs, result} for the last valid calculation, or
//               null while an input is in error. inputs is what restore
//               takes; result is the API response worth keeping in a record
//               (JSON, without chart series).
//   restore(inputs)  refills the inputs and recomputes.
//   inputs()    optional: the inputs as they stand, even in error (kept
//               across a reload); without it the last valid ones are kept.

import { remember, recall } from './store.js';

export const views = new Map();

// currentInputs is what a view's inputs are now: as they stand when the
// handle can say, else those of its last valid calculation (undefined
// while in error).
export function currentInputs(handle) {
  if (typeof handle.inputs === 'function') return handle.inputs();
  const snap = handle.snapshot();
  return snap ? snap.inputs : undefined;
}

// sectionOf is the section of the view called name.
export function sectionOf(name) {
  return document.querySelector(`section.view[data-view="${name}"]`);
}

// viewTitle is the name of a view as its tab shows it.
export function viewTitle(name) {
  const tab = document.querySelector(`.view-tab[data-view="${name}"]`);
  return tab ? tab.textContent.trim() : name;
}

// showView shows the view called name (hiding the others), remembers it
// as the open tab, and tells its section with a "viewshown" event.
export function showView(name) {
  const section = sectionOf(name);
  if (!section) return;
  for (const view of document.querySelectorAll('section.view')) view.hidden = view !== section;
  for (const tab of document.querySelectorAll('.view-tab')) tab.setAttribute('aria-pressed', String(tab.dataset.view === name));
  remember('view', name);
  section.dispatchEvent(new CustomEvent('viewshown'));
}

// reopenLastView opens the tab that was open last time.
export function reopenLastView() {
  const last = recall('view');
  if (typeof last === 'string' && sectionOf(last)) showView(last);
}
