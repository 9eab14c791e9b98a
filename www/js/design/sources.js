// Where the design page gets its examples and its trace workers.
//
// Served, the examples come from the server (www/demos/, listed in demos/index.json by
// scripts/build.sh; the service worker keeps them offline) and the trace workers run the workers'
// bundle, handed the core the page compiled. The single-file build (scripts/build_single.py)
// replaces this module by one that holds the examples' text and starts the workers from the
// worker's bundle embedded in the file.

import { coreModule } from '../load-core.js';

/** The examples for the "Start from" menu: [{ file, name }]. */
export async function demoList() {
  // Relative to the page (this runs on the page, not in a worker), as the service worker caches it.
  const res = await fetch('demos/index.json');
  if (!res.ok) throw new Error(`demos/index.json: ${res.status} ${res.statusText}`);
  return res.json();
}

/** The scenario text of one example, by its `file` from demoList(). */
export async function demoText(file) {
  const res = await fetch(`demos/${file}`);
  if (!res.ok) throw new Error(`demos/${file}: ${res.status} ${res.statusText}`);
  return res.text();
}

let workerUrl = null;

/**
 * TracePool options (call once the core has started on the page): the trace workers' bundle
 * (www/js/trace/worker-bundle.js, made by scripts/build.sh), fetched once by the page and started
 * from a blob: URL as a classic script, and the core the page compiled, handed to each worker.
 * The workers then fetch nothing themselves: they start the same online, offline through the
 * service worker, and in every engine (WebKit does not route the imports and fetches of several
 * module workers started together through the service worker).
 */
export async function traceWorker() {
  if (!workerUrl) {
    const res = await fetch('js/trace/worker-bundle.js');
    if (!res.ok) throw new Error(`js/trace/worker-bundle.js: ${res.status} ${res.statusText}`);
    workerUrl = URL.createObjectURL(new Blob([await res.text()], { type: 'text/javascript' }));
  }
  return { workerUrl, workerType: 'classic', coreModule: coreModule() };
}
