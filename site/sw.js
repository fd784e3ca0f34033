// sw.js: ClearKit's service worker. It stores every file of the page in one
// cache named after the build's content hash (precache.js, written by
// ./build.sh), answers from that cache first, and deletes the caches of
// earlier builds when it takes over. URLs are relative to this file, so the
// page works from any folder of any HTTPS host and from http://127.0.0.1.

importScripts('precache.js'); // defines self.PRECACHE = {version, files}

const BUILD = self.PRECACHE;
// One name per copy of the page: a second copy in another folder of the
// same host keeps its own cache.
const PREFIX = `clearkit:${self.registration.scope}:`;
const CACHE = PREFIX + BUILD.version;

self.addEventListener('install', (event) => {
  // cache: 'reload' skips the HTTP cache, so a host's caching headers
  // cannot mix files of an older build into this one.
  const requests = BUILD.files.map((file) => new Request(file, { cache: 'reload' }));
  event.waitUntil(caches.open(CACHE).then((cache) => cache.addAll(requests)));
});

self.addEventListener('activate', (event) => {
  event.waitUntil((async () => {
    for (const key of await caches.keys()) {
      if (key.startsWith(PREFIX) && key !== CACHE) await caches.delete(key);
    }
    await self.clients.claim();
  })());
});

// The page asks for the waiting worker to take over when the user chooses
// to reload into an update.
self.addEventListener('message', (event) => {
  if (event.data && event.data.type === 'activate-update') self.skipWaiting();
});

self.addEventListener('fetch', (event) => {
  const request = event.request;
  if (request.method !== 'GET' || new URL(request.url).origin !== self.location.origin) return;
  event.respondWith(answer(request));
});

// answer gives the cached copy; a page navigation inside the scope that is
// not cached under its own URL (./index.html, ./?from=bookmark) gets the
// page. Anything else not cached goes to the network.
async function answer(request) {
  const cache = await caches.open(CACHE);
  const hit = (await cache.match(request)) || (request.mode === 'navigate' ? await cache.match('./') : undefined);
  return hit || fetch(request);
}
