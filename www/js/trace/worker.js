// A trace worker: one long-lived instance of the core (WebAssembly) answering the pool
// (www/js/trace/pool.js). The same script has two roles. A tracing worker keeps one `Tracer` per
// job and traces one batch per message (so a cancel or a new job takes effect within one batch);
// it sends the batch straight to the merging worker over its own channel and tells the pool only
// that it is done. The merging worker folds the batches into the core's running merge and, when asked, reports the prefix
// 0..count-1 merged in batch order (the only order that reproduces a single run bit for bit).
//
// From the pool (all but `job` and `connect` are ignored unless they name the job loaded):
//   { type: 'core', module }                 first, to a bundled worker: the core the page
//                                            compiled (a WebAssembly.Module; wasm-from-page.js)
//   { type: 'connect', role: 'to-merger' | 'from-tracer', port }   a channel between the roles
//   { type: 'job', job, scenario, study, tolerance, find, x }   load a scenario (JSON text) for
//                                            job `job`; with study: true, a study document (a
//                                            sweep: StudyTracer); with tolerance: true, a
//                                            tolerance study (ToleranceTracer); with find: true, a
//                                            search's study document traced at its value x
//                                            (FindValueTracer)
//   { type: 'batch', job, index, keepPaths } trace batch `index`
//   { type: 'merge', job, count }            report batches 0..count-1 merged in batch order
//                                            (waits for batches still on their way)
//   { type: 'drop', job }                    forget the job (frees the batches kept for it)
// From a tracing worker to the merging worker: { type: 'add', job, index, batch }.
// To the pool:
//   { type: 'ready' } | { type: 'init-error', message }      once, when the core has loaded
//   { type: 'job-ready', job, batchCount } | { type: 'job-error', job, message }
//   { type: 'batch', job, index, rays } | { type: 'batch-error', job, index, message }
//   { type: 'report', job, count, report, ms } | { type: 'merge-error', job, message }
//   { type: 'worker-error', message }                        a message could not be handled

import { loadCore } from '../load-core.js';
import { messageOf } from '../errors.js';
import { batchRays } from './job.js';

/** The core's Tracer, StudyTracer, ToleranceTracer and FindValueTracer classes, once loaded. */
let Tracer = null;
let StudyTracer = null;
let ToleranceTracer = null;
let FindValueTracer = null;
/**
 * The job loaded: its id, its scenario (or study) text, its kind ('scenario', 'study',
 * 'tolerance' or 'find'), a search's value x (else undefined) and its tracer.
 */
const loaded = { job: null, scenario: null, kind: 'scenario', x: undefined, tracer: null };

/** A new tracer of a job's kind (a search's value tracer also takes the value x). */
function newTracer(kind, scenario, x) {
  if (kind === 'find') return new FindValueTracer(scenario, x);
  return new (({ study: StudyTracer, tolerance: ToleranceTracer })[kind] ?? Tracer)(scenario);
}
/** Tracing role: the channel to the merging worker. */
let mergerPort = null;
/** Merging role: batches received, by job then batch index; jobs below `openFrom` are over. */
const kept = new Map();
let openFrom = 0;
/** Merging role: the merge asked for, run once its batches are all in. */
let pending = null;

function loadJob(job, scenario, kind, x) {
  openFrom = Math.max(openFrom, job);
  for (const j of kept.keys()) if (j < job) kept.delete(j);
  if (pending && pending.job < job) pending = null;
  loaded.job = null;
  // A Tracer holds no trace state, so the same scenario again (a restart) keeps it.
  if (loaded.tracer === null || loaded.scenario !== scenario || loaded.kind !== kind || !Object.is(loaded.x, x)) {
    loaded.tracer?.free();
    loaded.tracer = null;
    loaded.scenario = null;
    try {
      loaded.tracer = newTracer(kind, scenario, x);
    } catch (e) {
      postMessage({ type: 'job-error', job, message: messageOf(e) });
      return;
    }
    loaded.scenario = scenario;
    loaded.kind = kind;
    loaded.x = x;
  }
  loaded.job = job;
  loaded.tracer.merger_reset();
  // Batches that reached this merging worker before the job did.
  const early = kept.get(job);
  kept.delete(job);
  if (early) early.forEach((batch, index) => batch !== undefined && keep(job, index, batch));
  postMessage({ type: 'job-ready', job, batchCount: loaded.tracer.batch_count() });
}

function dropJob(job) {
  openFrom = Math.max(openFrom, job + 1);
  kept.delete(job);
  if (pending?.job === job) pending = null;
  if (loaded.job === job) loaded.job = null;
}

function traceBatch(job, index, keepPaths) {
  if (mergerPort === null) {
    postMessage({ type: 'batch-error', job, index, message: 'no channel to the merging worker' });
    return;
  }
  let batch;
  try {
    [batch] = loaded.tracer.batches(index, 1, keepPaths);
  } catch (e) {
    postMessage({ type: 'batch-error', job, index, message: messageOf(e) });
    return;
  }
  mergerPort.postMessage({ type: 'add', job, index, batch });
  postMessage({ type: 'batch', job, index, rays: batchRays(batch) });
}

function keep(job, index, batch) {
  if (job < openFrom) return; // a job that is over
  if (job === loaded.job && loaded.tracer !== null) {
    // Read into the core's running merge at once: it holds only the batches ahead of their
    // turn and folds the rest in batch order, so memory does not grow with the ray count.
    try {
      loaded.tracer.merger_add(index, batch);
    } catch (e) {
      postMessage({ type: 'merge-error', job, message: messageOf(e) });
      return;
    }
    mergeIfComplete();
    return;
  }
  // The job's scenario has not reached this worker yet: keep the batch until it does.
  if (!kept.has(job)) kept.set(job, []);
  kept.get(job)[index] = batch;
}

function mergeIfComplete() {
  if (pending === null || pending.job !== loaded.job) return;
  const { job, count } = pending;
  try {
    const start = performance.now();
    // null while a batch of 0..count-1 is still on its way.
    const report = loaded.tracer.merger_report(count);
    if (report === null) return;
    pending = null;
    postMessage({ type: 'report', job, count, report, ms: performance.now() - start });
  } catch (e) {
    pending = null;
    postMessage({ type: 'merge-error', job, message: messageOf(e) });
  }
}

/** The kind of a job message: 'find', 'tolerance', 'study' or 'scenario'. */
function kindOf(msg) {
  if (msg.find === true) return 'find';
  if (msg.tolerance === true) return 'tolerance';
  return msg.study === true ? 'study' : 'scenario';
}

function handle(msg) {
  switch (msg.type) {
    case 'connect':
      if (msg.role === 'to-merger') {
        mergerPort?.close();
        mergerPort = msg.port;
      } else {
        msg.port.onmessage = (event) => enqueue(event.data);
      }
      return;
    case 'job':
      loadJob(msg.job, msg.scenario, kindOf(msg), msg.find === true ? msg.x : undefined);
      return;
    case 'add':
      keep(msg.job, msg.index, msg.batch);
      return;
    case 'drop':
      dropJob(msg.job);
      return;
    case 'core':
      return; // the page's compiled core, for a bundled worker (wasm-from-page.js took it)
    default:
  }
  if (msg.job !== loaded.job || loaded.tracer === null) {
    // A request for a job this worker does not hold: only a batch request needs an answer.
    if (msg.type === 'batch') {
      postMessage({ type: 'batch-error', job: msg.job, index: msg.index, message: 'no scenario is loaded for this job' });
    }
    return;
  }
  switch (msg.type) {
    case 'batch':
      traceBatch(msg.job, msg.index, msg.keepPaths);
      break;
    case 'merge':
      pending = { job: msg.job, count: msg.count };
      mergeIfComplete();
      break;
    default:
      postMessage({ type: 'worker-error', message: `unknown message type "${msg.type}"` });
  }
}

// Messages that arrive while the core is loading wait for it; all run in arrival order.
let failed = false;
let queue = loadCore().then(
  (core) => {
    Tracer = core.Tracer;
    StudyTracer = core.StudyTracer;
    ToleranceTracer = core.ToleranceTracer;
    FindValueTracer = core.FindValueTracer;
    postMessage({ type: 'ready' });
  },
  (e) => {
    failed = true;
    postMessage({ type: 'init-error', message: messageOf(e) });
  },
);

function enqueue(msg) {
  queue = queue.then(() => {
    if (failed) return;
    try {
      handle(msg);
    } catch (e) {
      postMessage({ type: 'worker-error', message: messageOf(e) });
    }
  });
}

self.onmessage = (event) => enqueue(event.data);
