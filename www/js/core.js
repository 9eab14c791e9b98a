// Loading the core (the wasm-bindgen glue and its WebAssembly), the same on both pages and in
// the trace workers. Where the WebAssembly comes from is wasm-source.js's business (served: the
// file beside the glue; the single-file build: the bytes embedded in the page).

import { wasmSource } from './wasm-source.js';

/**
 * The core's exports, once its WebAssembly is running on this thread. Rejects with the reason
 * when the glue or the WebAssembly cannot be loaded (the caller says so on its page).
 */
export async function loadCore() {
  const core = await import('../pkg/tirtrace.js');
  await core.default(wasmSource());
  return core;
}

/**
 * Have the service worker (sw.js beside the page) keep the page for offline use. Only a served
 * page (http or https) can; resolves to whether it registered.
 */
export async function registerServiceWorker() {
  if (!('serviceWorker' in navigator) || !/^https?:$/.test(location.protocol)) return false;
  try {
    await navigator.serviceWorker.register('./sw.js');
    return true;
  } catch {
    return false; // the page still works; it just will not open without the server
  }
}
