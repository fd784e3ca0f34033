// last-inputs.js: the inputs of every view survive a reload. Each view's
// inputs are kept in localStorage (store.js) as the user changes them, and
// put back when the page starts.

import { views, sectionOf, currentInputs } from './views.js';
import { remember, recall } from './store.js';

// keepInputs restores every registered view's last inputs and keeps them
// from now on. It calls onRefused once if the browser refuses to keep them.
export function keepInputs(onRefused) {
  let refused = !remember('inputs-kept', true);
  if (refused) onRefused();
  for (const [name, handle] of views) {
    const key = `inputs.${name}`;
    const saved = recall(key);
    if (saved && typeof saved === 'object') {
      try {
        handle.restore(saved);
      } catch {
        // Inputs kept by an older version that this one cannot take: the
        // view keeps its defaults.
      }
    }
    const save = () => {
      const inputs = currentInputs(handle);
      if (inputs === undefined || remember(key, inputs) || refused) return;
      refused = true;
      onRefused();
    };
    // soon saves 200 ms after the last input. One timer serves a burst of
    // keystrokes: each moves the time due, and the timer, when it fires
    // early, waits again for the rest (setting a timer at every keystroke
    // took 0.1 to 0.2 ms of it at 4x throttle).
    let timer = 0;
    let due = 0;
    const fire = () => {
      const wait = due - performance.now();
      if (wait > 0) {
        timer = setTimeout(fire, wait);
        return;
      }
      timer = 0;
      save();
    };
    const soon = () => {
      due = performance.now() + 200;
      if (!timer) timer = setTimeout(fire, 200);
    };
    const section = sectionOf(name);
    for (const type of ['input', 'change', 'click']) section.addEventListener(type, soon);
    // A reload within the delay still keeps the last key.
    window.addEventListener('pagehide', save);
  }
}
