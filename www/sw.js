// Service worker: keeps the page, its modules, the core (JS glue and WebAssembly), the style
// sheet and the icon in a cache. Network first, so a running server always gives the newest
// files; the cache answers when the server cannot be reached, so the page opens offline.

const CACHE = 'tirtrace-page-v2';

const PAGE_FILES = [
  './',
  './index.html',
  './css/page.css',
  './quick.html',
  './js/quick-main.js',
  './js/state.js',
  './js/numbers.js',
  './js/form.js',
  './js/format.js',
  './js/results.js',
  './js/drawing.js',
  './pkg/tirtrace.js',
  './pkg/tirtrace_bg.wasm',
  './icon.svg',
  './manifest.webmanifest',
  './js/trace/pool.js',
  './js/trace/worker.js',
  './bench.html',
  './js/trace/bench.js',
  './css/design.css',
  './js/design/main.js',
  './js/design/editor.js',
  './js/design/scenario.js',
  './js/design/route-view.js',
  './js/design/report-view.js',
  './js/design/sources.js',
  './js/wasm-source.js',
  './js/trace/main-thread-pool.js',
  './js/trace/job.js',
  './js/core.js',
  './js/dom.js',
  './js/errors.js',
  './js/storage.js',
  './demos/index.json',
];

/** The examples listed in demos/index.json (made by scripts/build.sh), for the "start from" menu. */
async function demoFiles() {
  const res = await fetch('./demos/index.json', { cache: 'reload' });
  const list = await res.json();
  return list.map((d) => `./demos/${d.file}`);
}

self.addEventListener('install', (event) => {
  event.waitUntil(
    caches
      .open(CACHE)
      .then(async (cache) => {
        const files = [...PAGE_FILES, ...(await demoFiles())];
        return cache.addAll(files.map((url) => new Request(url, { cache: 'reload' })));
      })
      .then(() => self.skipWaiting()),
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

async function networkFirst(event) {
  const request = event.request;
  const cache = await caches.open(CACHE);
  try {
    const response = await fetch(request);
    if (response.ok && response.type === 'basic') {
      event.waitUntil(cache.put(request, response.clone()));
    }
    return response;
  } catch (error) {
    const cached =
      (await cache.match(request, { ignoreSearch: true })) ||
      (request.mode === 'navigate' ? await cache.match('./index.html') : undefined);
    if (cached) return cached;
    throw error;
  }
}

self.addEventListener('fetch', (event) => {
  const { request } = event;
  if (request.method !== 'GET' || new URL(request.url).origin !== self.location.origin) return;
  event.respondWith(networkFirst(event));
});
