// Starting the core (the wasm-bindgen glue and its WebAssembly) on this thread, from what
// wasm-source.js gives: the served file's checked bytes, the single file's embedded bytes, or, in
// a trace worker's bundle, the module the page compiled and handed over (wasm-from-page.js).
// Nothing else is imported here, so a worker's bundle holds no build-specific module.

import { wasmSource } from './wasm-source.js';

/** The WebAssembly module compiled here (null until the core has started, or when it was handed
 * over already compiled). */
let compiled = null;

/**
 * The core's exports, once its WebAssembly is running on this thread. Bytes are compiled here,
 * once, and the module kept (coreModule()) so that trace workers need not fetch or compile it
 * again. Rejects with the reason when the glue or the WebAssembly cannot be loaded.
 */
export async function loadCore() {
  const core = await import('../pkg/tirtrace.js');
  let source = await wasmSource().module_or_path;
  if (!(source instanceof WebAssembly.Module)) {
    source = await WebAssembly.compile(source);
    compiled = source;
  }
  await core.default({ module_or_path: source });
  return core;
}

/** The module this thread compiled in loadCore(), to hand to trace workers (null before). */
export const coreModule = () => compiled;
