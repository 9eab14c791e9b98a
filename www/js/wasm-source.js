// Where the core's WebAssembly comes from, for the page and for the trace workers.
//
// wasmSource() is the argument for the wasm-bindgen glue's init(). Served, it is undefined: init()
// then fetches pkg/tirtrace_bg.wasm beside the glue (and the service worker keeps it offline).
// The single-file build (scripts/build_single.py) replaces this module by one that returns
// `{ module_or_path: <promise of the embedded bytes> }`, because a file opened from disk has no
// folder to fetch the wasm from.

/** The argument for init(): undefined, so the glue loads tirtrace_bg.wasm beside itself. */
export function wasmSource() {
  return undefined;
}
