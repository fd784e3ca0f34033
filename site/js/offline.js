// offline.js: installs the service worker (sw.js) and tells the user, in
// the element it is given, whether the page is ready to work offline and
// when an update is waiting (with a button that reloads into it).

// startOffline registers the worker. box holds a text element
// [data-offline-text]; box.dataset.state is one of: unsupported,
// installing, ready, update, failed. bar is shown while an update waits and
// holds the button [data-offline-update] that reloads into it.
export function startOffline(box, bar) {
  const text = box.querySelector('[data-offline-text]');
  const button = bar.querySelector('[data-offline-update]');
  const say = (state, message) => {
    box.dataset.state = state;
    text.textContent = message;
    bar.hidden = state !== 'update';
  };

  if (!('serviceWorker' in navigator)) {
    say('unsupported', window.isSecureContext
      ? 'This browser cannot keep ClearKit for offline use.'
      : `Offline use needs the page served over HTTPS or from 127.0.0.1; this copy comes from ${location.origin}.`);
    return;
  }
  const sw = navigator.serviceWorker;
  let waiting = null;
  let updating = false;

  button.addEventListener('click', () => {
    if (!waiting) return;
    updating = true;
    button.disabled = true;
    button.textContent = 'Updating…';
    waiting.postMessage({ type: 'activate-update' });
  });
  // The page reloads only when the user asked for the update: the first
  // install also changes the controller, and must not reload the page.
  sw.addEventListener('controllerchange', () => {
    if (updating) location.reload();
  });

  const offerUpdate = (worker) => {
    waiting = worker;
    say('update', 'Ready to work offline; an update waits');
  };
  const watch = (reg, worker) => {
    // An update downloads quietly; only the first install is news.
    if (!sw.controller && !reg.active) say('installing', 'Saving for offline use…');
    worker.addEventListener('statechange', () => {
      if (worker.state === 'installed' && sw.controller) offerUpdate(worker);
      else if (worker.state === 'activated' && !updating) say('ready', 'Ready to work offline');
      else if (worker.state === 'redundant' && !reg.active) {
        say('failed', 'ClearKit could not be stored for offline use (was the network lost?). It tries again the next time the page opens online.');
      }
    });
  };

  sw.register('sw.js', { updateViaCache: 'none' }).then((reg) => {
    if (reg.active) say('ready', 'Ready to work offline');
    if (reg.waiting && sw.controller) offerUpdate(reg.waiting);
    if (reg.installing) watch(reg, reg.installing);
    reg.addEventListener('updatefound', () => watch(reg, reg.installing));
  }, (err) => {
    // Offline, the browser cannot check for an update; an installed copy
    // keeps working, so that is no failure.
    if (sw.controller) say('ready', 'Ready to work offline');
    else say('failed', `ClearKit could not be stored for offline use: ${err.message}`);
  });
}
