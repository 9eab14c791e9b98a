// Where the core's WebAssembly comes from, for the page and for the trace workers.
//
// wasmSource() is the argument for the wasm-bindgen glue's init(). Served, it is the bytes of
// pkg/tirtrace_bg.wasm beside the glue, once checked against the SHA-256 that build.js records for
// this build (scripts/write_build.py): modules and WebAssembly of two builds (a browser's kept copy
// of one beside the files of the next) never run together. The single-file build
// (scripts/build_single.py) replaces this module by one that returns the embedded bytes, because a
// file opened from disk has no folder to fetch the wasm from.

import { BUILD_ID, WASM_SHA256 } from './build.js';

const hex = (buffer) => Array.from(new Uint8Array(buffer), (b) => b.toString(16).padStart(2, '0')).join('');

/** The WebAssembly's bytes, checked to be this build's; rejects with a readable Error. */
async function checkedWasm() {
  const url = new URL('../pkg/tirtrace_bg.wasm', import.meta.url);
  const response = await fetch(url);
  if (!response.ok) throw new Error(`${url.pathname} could not be loaded (HTTP ${response.status})`);
  const bytes = await response.arrayBuffer();
  // Only a secure context (https, or a local address) has SHA-256; elsewhere the check is left out.
  if (globalThis.crypto?.subtle) {
    const sha256 = hex(await crypto.subtle.digest('SHA-256', bytes));
    if (sha256 !== WASM_SHA256) {
      throw new Error(
        `its WebAssembly is not the one of this page's build (${BUILD_ID}): the page's files come from two versions. Reload the page`,
      );
    }
  }
  return bytes;
}

/** The argument for init(): the checked bytes (a promise of them, which init() awaits). */
export function wasmSource() {
  return { module_or_path: checkedWasm() };
}
