// The page's side of the core: starting it (load-core.js, the same in the trace workers; where
// the WebAssembly comes from is wasm-source.js's business: served, the file beside the glue; the
// single-file build, the bytes embedded in the page) and keeping the page for offline use.

import { BUILD_ID } from './build.js';

export { coreModule, loadCore } from './load-core.js';

/** The build of the service worker controlling this page (null when none answers within 5 s). */
function controllerBuild() {
  const controller = navigator.serviceWorker.controller;
  if (!controller) return Promise.resolve(null);
  return new Promise((resolve) => {
    const channel = new MessageChannel();
    const timer = setTimeout(() => resolve(null), 5000);
    channel.port1.onmessage = (event) => {
      clearTimeout(timer);
      resolve(event.data?.build ?? null);
    };
    controller.postMessage({ type: 'build' }, [channel.port2]);
  });
}

/**
 * Have the service worker (sw.js beside the page) keep the page for offline use. Only a served
 * page (http or https) can; resolves to whether it registered.
 *
 * The service worker answers with one build's files only (see sw.js). When a service worker of
 * another build takes this page over (the first one installed, or a newer one the page asked
 * for), the page reloads, so that its files all come from one build. When a newer build has
 * been kept and waits, `onNewBuild(use)` is called (at most once); `use()` switches to it (the
 * page, and every other page of the older build, reloads).
 */
export async function registerServiceWorker({ onNewBuild } = {}) {
  if (!('serviceWorker' in navigator) || !/^https?:$/.test(location.protocol)) return false;
  const sw = navigator.serviceWorker;
  sw.addEventListener('controllerchange', async () => {
    if ((await controllerBuild()) !== BUILD_ID) location.reload();
  });
  let reg;
  try {
    reg = await sw.register('./sw.js', { updateViaCache: 'none' });
  } catch {
    return false; // the page still works; it just will not open without the server
  }
  let offered = false;
  const offer = () => {
    const waiting = reg.waiting;
    if (!waiting || !sw.controller || offered || typeof onNewBuild !== 'function') return;
    offered = true;
    onNewBuild(() => waiting.postMessage({ type: 'activate' }));
  };
  const watch = (worker) =>
    worker?.addEventListener('statechange', () => {
      if (worker.state === 'installed') offer();
    });
  offer();
  watch(reg.installing);
  reg.addEventListener('updatefound', () => watch(reg.installing));
  return true;
}
