// Where a trace worker's bundle gets the core's WebAssembly: the module the page compiled, handed
// over in the worker's first message { type: 'core', module } (TracePool's coreModule). The
// worker fetches nothing and compiles nothing, so it starts the same served, offline through the
// service worker, or from the single file opened from disk, in every browser engine.
// scripts/build_single.py puts this module in place of wasm-source.js in the workers' bundle.

let handOver;
const handed = new Promise((resolve) => {
  handOver = resolve;
});

self.addEventListener('message', (event) => {
  const msg = event.data;
  if (msg?.type !== 'core') return;
  if (msg.module instanceof WebAssembly.Module) handOver(msg.module);
  else handOver(Promise.reject(new Error('the page handed over no compiled calculator')));
});

/** The argument for init(): the module the page hands over (a promise of it). */
export function wasmSource() {
  return { module_or_path: handed };
}
