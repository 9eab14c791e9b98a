// Where the design page gets its examples and its trace workers.
//
// Served, the examples come from the server (www/demos/, listed in demos/index.json by
// scripts/build.sh; the service worker keeps them offline) and the trace pool starts its own
// module workers (www/js/trace/worker.js). The single-file build (scripts/build_single.py)
// replaces this module by one that holds the examples' text and starts the workers from the
// worker's bundle embedded in the file.

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

/** Extra TracePool options that choose its worker script: none, the pool's own module worker. */
export function traceWorker() {
  return {};
}
