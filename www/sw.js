// Service worker: keeps one build of every file the page serves (its pages, modules, the core's
// JS glue and WebAssembly, style sheets, icon, examples: the list precache.js that
// scripts/write_build.py writes with each file's SHA-256 and the build's id) so the page opens
// offline, and never hands a page files of two builds:
// - the cache is named after the build, and filled only when it installs, with every file fetched
//   from the server and checked against its SHA-256 in the list: a file of another build (the
//   server rebuilt while they were fetched) fails the install, and the last complete build stays;
// - the build's files are answered from that cache only (the network only for a file it lacks);
// - a newer build installs beside it and waits until the page asks for it (js/core.js offers a
//   reload) or every page of the older one is closed; then the older cache is deleted.

// self.BUILD_ID, self.PRECACHE (the files, './' first), self.PRECACHE_SHA256 (file → SHA-256).
importScripts('./precache.js');

const CACHE = `tirtrace-${self.BUILD_ID}`;

const hex = (buffer) => Array.from(new Uint8Array(buffer), (b) => b.toString(16).padStart(2, '0')).join('');

/** Every file of the build, fetched from the server and checked, in a fresh cache. */
async function keepBuild() {
  await caches.delete(CACHE); // what an earlier, failed install of this build left
  const checked = await Promise.all(
    self.PRECACHE.map(async (url) => {
      const response = await fetch(new Request(url, { cache: 'reload' }));
      if (!response.ok) throw new Error(`${url} could not be fetched (HTTP ${response.status})`);
      const sha256 = hex(await crypto.subtle.digest('SHA-256', await response.clone().arrayBuffer()));
      if (sha256 !== self.PRECACHE_SHA256[url]) {
        throw new Error(`${url} is not the file of build ${self.BUILD_ID} (the server's files changed meanwhile); the last complete build is kept`);
      }
      return [url, response];
    }),
  );
  const cache = await caches.open(CACHE);
  await Promise.all(checked.map(([url, response]) => cache.put(url, response)));
}

self.addEventListener('install', (event) => {
  event.waitUntil(
    keepBuild().then(() => {
      // The first build takes the page over at once (activate claims it); js/core.js reloads a
      // page of another build. A newer one waits for the page to ask (message 'activate').
      if (!self.registration.active) return self.skipWaiting();
      return undefined;
    }),
  );
});

self.addEventListener('activate', (event) => {
  event.waitUntil(
    caches
      .keys()
      .then((names) => Promise.all(names.filter((n) => n.startsWith('tirtrace-') && n !== CACHE).map((n) => caches.delete(n))))
      .then(() => self.clients.claim()),
  );
});

self.addEventListener('message', (event) => {
  const msg = event.data;
  if (msg?.type === 'activate') self.skipWaiting();
  // The build this worker answers with, for a page to compare with its own.
  if (msg?.type === 'build') event.ports[0]?.postMessage({ build: self.BUILD_ID });
});

/** The build's file name of a request's URL ('./' for the folder itself), or null. */
function listed(url) {
  const scope = new URL(self.registration.scope);
  if (url.origin !== scope.origin || !url.pathname.startsWith(scope.pathname)) return null;
  const name = `./${url.pathname.slice(scope.pathname.length)}`;
  return Object.hasOwn(self.PRECACHE_SHA256, name) ? name : null;
}

self.addEventListener('fetch', (event) => {
  const { request } = event;
  if (request.method !== 'GET') return;
  const name = listed(new URL(request.url));
  if (name === null) return; // not a file of the build: the network, as without a service worker
  event.respondWith(
    caches
      .open(CACHE)
      .then((cache) => cache.match(name))
      .then((kept) => kept || fetch(request)),
  );
});
