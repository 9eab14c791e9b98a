// Traces a scenario in Web Workers with progressive refinement.
//
// One module worker per core (www/js/trace/worker.js), each a long-lived instance of the core,
// traces one batch (4096 rays) per message; this module hands out batch indices in ascending
// order to whichever worker is free. One more worker of the same kind merges: every traced batch
// goes to it straight from its tracing worker (a MessageChannel; the main thread never copies a
// batch), and when asked it reports the contiguous prefix 0..k merged in batch order. Only that
// order reproduces the native command line bit for bit (floating-point sums depend on grouping),
// so nothing is ever merged out of order. A merge costs about 1.5 ms per batch held (reading the
// batches into the core), ~0.4 s for a million rays: it runs off the main thread, at most once
// every MIN_MERGE_INTERVAL_MS (or three times the last merge's duration, if longer) plus always
// the final one, so a large trace spends its time tracing.
//
// Usage:
//   const pool = new TracePool({ onUpdate: (u) => show(u) });
//   await pool.ready();
//   const job = pool.start(scenarioJsonText);   // a new start() replaces the running job
//   (new TracePool({ study: true, … }) traces study documents instead: the sweep's report of
//   every point, as `tirtrace study` prints it, in place of a trace report; with tolerance: true,
//   tolerance studies: the tolerance report in its place; with find: true, one value of a search:
//   pool.start(studyJsonText, { x }) traces the search's study document at the value x, and the
//   report is that value's batches merged in batch order, for StudyFinder.record_merged)
//   pool.cancel();                               // or wait for the update with done: true
//
// onUpdate(u) gets, on the main thread:
//   { job, report, batchesDone, batchCount, raysDone, raysTotal, done, cancelled, error,
//     firstAnswerMs, elapsedMs, raysPerSecond }
// report: the merged report of batches 0..batchesDone-1 (null before the first);
// raysDone: the rays in that report; raysTotal: the scenario's `trace.rays` (when the document
// leaves it to the core's default: batchCount × the rays of batch 0 until every batch is in);
// done: true on a job's last update, whether it completed, was cancelled or failed;
// error: null, or a readable message (the core's, naming the field, for a bad scenario);
// firstAnswerMs: ms from start() to the first report (null before it);
// raysPerSecond: raysDone over the time since start().

import { messageOf } from '../errors.js';
import { deliverUpdate, mergeInterval, newJob, updateHandler } from './job.js';

/** Most tracing workers a pool starts by default (and the largest size accepted). */
const DEFAULT_MAX_WORKERS = 8;
const MAX_WORKERS = 32;

function defaultSize() {
  const cores = Number(globalThis.navigator?.hardwareConcurrency) || 1;
  return Math.min(DEFAULT_MAX_WORKERS, Math.max(1, Math.floor(cores)));
}

export class TracePool {
  #size;
  #onUpdate;
  #workerUrl;
  #workerType;
  #study;
  #tolerance;
  #find;
  #coreModule;
  /** Tracing workers: { worker, alive, loaded, job (id whose scenario it holds), busy }. */
  #tracers = [];
  /** The merging worker, same shape. */
  #merger = null;
  #ready;
  #job = null;
  #nextJob = 1;
  #disposed = false;

  /**
   * size: number of tracing workers (default: navigator.hardwareConcurrency clamped to 1..8);
   * onUpdate: called with every update (see the top of this file);
   * workerUrl: the worker script (default: ./worker.js beside this module; tests replace it);
   * workerType: 'module' (default) or 'classic' (a script that imports the modules itself, as the
   * single-file build's does: a file:// page may not start a module worker from a blob: URL);
   * study: true to trace study documents (sweeps) rather than scenarios;
   * tolerance: true to trace tolerance studies (study documents with `tolerances`);
   * find: true to trace one value of a search per job (study documents with `find`, start's x);
   * coreModule: the core's WebAssembly.Module compiled on the page, handed to every worker in its
   * first message (a bundled worker waits for it and fetches nothing; see wasm-from-page.js).
   */
  constructor({ size, onUpdate, workerUrl, workerType = 'module', study = false, tolerance = false, find = false, coreModule = null } = {}) {
    const n = size ?? defaultSize();
    if (!Number.isInteger(n) || n < 1 || n > MAX_WORKERS) {
      throw new RangeError(`TracePool size must be a whole number from 1 to ${MAX_WORKERS}, got ${size}`);
    }
    if (workerType !== 'module' && workerType !== 'classic') {
      throw new RangeError(`TracePool workerType must be 'module' or 'classic', got ${workerType}`);
    }
    this.#size = n;
    this.#onUpdate = updateHandler(onUpdate, 'TracePool');
    // Resolved only when needed: a module loaded from a blob: URL has no folder to resolve it in.
    this.#workerUrl = workerUrl ?? new URL('./worker.js', import.meta.url);
    this.#workerType = workerType;
    this.#study = study === true;
    this.#tolerance = tolerance === true;
    this.#find = find === true;
    this.#coreModule = coreModule;
    for (let i = 0; i < n; i += 1) this.#tracers.push(this.#spawn());
    this.#merger = this.#spawn();
    for (const t of this.#tracers) this.#connect(t);
    this.#ready = Promise.all([...this.#tracers, this.#merger].map((w) => w.loadedPromise)).then(() => {});
    this.#ready.catch(() => {}); // reported through ready(); not an unhandled rejection meanwhile
  }

  /** Number of tracing workers. */
  get size() {
    return this.#size;
  }

  /** Resolves when every worker has loaded the core, or rejects with a readable Error. */
  ready() {
    return this.#ready;
  }

  /**
   * Start tracing a scenario (JSON text); any job still running is replaced and its late
   * results are ignored (it gets no further update). keepPaths: ray paths to keep (only batch 0
   * records paths). Returns the job id that every update of this job carries. For a pool made
   * with find: true, x is the searched value to trace (a finite number; required).
   */
  start(scenarioJson, { keepPaths = 200, x } = {}) {
    if (this.#disposed) throw new Error('this TracePool has been disposed');
    if (this.#find && x === undefined) throw new RangeError('a search pool (find: true) needs start(study, { x })');
    const job = Object.assign(newJob(this.#nextJob, scenarioJson, keepPaths, this.#find ? x : undefined), {
      next: 0, // next batch index to hand out
      requested: 0, // prefix length of the last merge asked for
      merging: false,
      timer: null,
    });
    this.#nextJob += 1;
    this.#stop();
    const { scenario } = job;
    this.#job = job;
    // Replace workers that have stopped (a crash, or a core that failed to load).
    const newMerger = !this.#merger.alive;
    if (newMerger) this.#merger = this.#spawn();
    this.#tracers = this.#tracers.map((t) => {
      if (t.alive && !newMerger) return t;
      const fresh = t.alive ? t : this.#spawn();
      this.#connect(fresh);
      return fresh;
    });
    for (const w of [...this.#tracers, this.#merger]) {
      w.job = null;
      w.worker.postMessage({
        type: 'job', job: job.id, scenario, study: this.#study, tolerance: this.#tolerance, find: this.#find, x: job.x,
      });
    }
    // A worker that could not even be created sends no events: say so (after start() returns).
    if (!this.#merger.alive || this.#tracers.every((t) => !t.alive)) {
      const reason = (this.#merger.alive ? this.#tracers[0] : this.#merger).failure;
      queueMicrotask(() => {
        if (!job.finished) this.#fail(job, reason);
      });
    }
    return job.id;
  }

  /** Stop the running job; onUpdate gets one last update with cancelled: true (and done: true). */
  cancel() {
    const job = this.#job;
    if (!job || job.finished) return;
    this.#finish(job);
    this.#emit(job, { done: true, cancelled: true });
  }

  /** Terminate the workers; the pool cannot be used afterwards. */
  dispose() {
    if (this.#disposed) return;
    this.#disposed = true;
    if (this.#job) this.#finish(this.#job);
    for (const w of [...this.#tracers, this.#merger]) this.#retire(w, 'the pool was disposed');
  }

  // ------------------------------------------------------------------ workers

  #spawn() {
    const w = { worker: null, alive: true, loaded: false, job: null, busy: false };
    w.loadedPromise = new Promise((resolve, reject) => {
      w.resolveLoad = resolve;
      w.rejectLoad = reject;
    });
    w.loadedPromise.catch(() => {});
    try {
      w.worker = new Worker(this.#workerUrl, { type: this.#workerType });
    } catch (e) {
      w.alive = false;
      w.failure = `A trace worker could not start: ${messageOf(e)}`;
      w.worker = { postMessage() {}, terminate() {} };
      w.rejectLoad(new Error(w.failure));
      return w;
    }
    if (this.#coreModule) w.worker.postMessage({ type: 'core', module: this.#coreModule });
    w.worker.onmessage = (event) => this.#onMessage(w, event.data);
    w.worker.onerror = (event) => {
      event.preventDefault(); // handled here: becomes an error update, not a console error
      const detail = event.message || 'its script or the core could not be loaded';
      this.#onCrash(w, w.loaded ? `A trace worker stopped: ${detail}` : `A trace worker could not start: ${detail}`);
    };
    w.worker.onmessageerror = () => this.#onCrash(w, 'A trace worker sent a message that could not be read');
    return w;
  }

  /** A channel from a tracing worker to the merging worker, for the batches. */
  #connect(tracer) {
    const channel = new MessageChannel();
    tracer.worker.postMessage({ type: 'connect', role: 'to-merger', port: channel.port1 }, [channel.port1]);
    this.#merger.worker.postMessage({ type: 'connect', role: 'from-tracer', port: channel.port2 }, [channel.port2]);
  }

  #retire(w, reason) {
    if (!w.alive) return;
    w.alive = false;
    w.busy = false;
    w.worker.terminate();
    if (!w.loaded) w.rejectLoad(new Error(reason));
  }

  #onCrash(w, message) {
    const wasBusy = w.busy;
    this.#retire(w, message);
    const job = this.#job;
    if (!job || job.finished) return;
    // A crash loses the batch in hand or the merged batches, or leaves no worker to trace.
    const noneLeft = !this.#tracers.some((t) => t.alive);
    if (wasBusy || w === this.#merger || noneLeft) this.#fail(job, message);
  }

  #onMessage(w, msg) {
    if (!w.alive) return;
    switch (msg?.type) {
      case 'ready':
        w.loaded = true;
        w.resolveLoad();
        return;
      case 'init-error':
        this.#onCrash(w, `A trace worker could not load the core: ${msg.message}`);
        return;
      case 'worker-error':
        this.#onCrash(w, `A trace worker stopped: ${msg.message}`);
        return;
      case 'batch':
      case 'batch-error':
        w.busy = false;
        break;
      default:
    }
    const job = this.#job;
    if (!job || job.finished || msg.job !== job.id) {
      // Late news from a replaced or stopped job. A failed batch may have left the instance
      // unusable (a trap inside the core): replace it; a freed worker takes the current work.
      if (msg.type === 'batch-error') this.#onCrash(w, `A trace worker failed: ${msg.message}`);
      else if (job && !job.finished) this.#dispatch(w);
      return;
    }
    switch (msg.type) {
      case 'job-ready':
        w.job = job.id;
        if (job.batchCount === null) job.batchCount = msg.batchCount;
        this.#dispatch(w);
        break;
      case 'job-error':
        this.#fail(job, msg.message);
        break;
      case 'batch':
        this.#received(job, msg.index, msg.rays);
        this.#dispatch(w);
        break;
      case 'batch-error':
        // The instance may be left unusable (a trap inside the core): replace it next job.
        this.#retire(w, msg.message);
        this.#fail(job, `Tracing batch ${msg.index} failed: ${msg.message}`);
        break;
      case 'report':
        this.#reported(job, msg);
        break;
      case 'merge-error':
        this.#fail(job, `The traced batches could not be merged: ${msg.message}`);
        break;
      default:
    }
  }

  /** Give a free worker the next batch of the running job. */
  #dispatch(w) {
    const job = this.#job;
    if (!job || job.finished || !w.alive || w.busy || w.job !== job.id || w === this.#merger) return;
    if (job.next >= job.batchCount) return;
    w.busy = true;
    w.worker.postMessage({ type: 'batch', job: job.id, index: job.next, keepPaths: job.keepPaths });
    job.next += 1;
  }

  // ------------------------------------------------------------------ merging

  #received(job, index, rays) {
    job.rays[index] = rays;
    while (job.prefix < job.batchCount && job.rays[job.prefix] !== undefined) job.prefix += 1;
    this.#pump(job);
  }

  /**
   * Ask for a merge of the prefix when it has grown, no merge is running and it is time. Once
   * every batch has been handed out, only the final merge is made: it is less than a batch away,
   * and an intermediate one then would only hold it up.
   */
  #pump(job) {
    if (job !== this.#job || job.finished || job.merging || job.prefix <= job.requested) return;
    const final = job.prefix === job.batchCount;
    if (!final && job.requested > 0 && job.next === job.batchCount) return;
    const wait = job.requested === 0 || final ? 0 : job.lastMergeAt + mergeInterval(job) - performance.now();
    if (wait > 0) {
      job.timer ??= setTimeout(() => {
        job.timer = null;
        this.#pump(job);
      }, wait);
      return;
    }
    clearTimeout(job.timer);
    job.timer = null;
    job.merging = true;
    job.requested = job.prefix;
    job.lastMergeAt = performance.now();
    this.#merger.worker.postMessage({ type: 'merge', job: job.id, count: job.prefix });
  }

  #reported(job, msg) {
    job.merging = false;
    job.lastMergeMs = msg.ms;
    job.report = msg.report;
    job.reportBatches = msg.count;
    job.firstAnswerMs ??= performance.now() - job.startedAt;
    const done = msg.count === job.batchCount;
    if (done) this.#finish(job);
    else this.#pump(job);
    this.#emit(job, { done, cancelled: false });
  }

  // ------------------------------------------------------------------ job state and updates

  /** Mark a job finished: no more merges or batches for it; the workers forget it. */
  #finish(job) {
    job.finished = true;
    clearTimeout(job.timer);
    job.timer = null;
    for (const w of [...this.#tracers, this.#merger]) {
      if (w.alive) w.worker.postMessage({ type: 'drop', job: job.id });
    }
  }

  #fail(job, message) {
    this.#finish(job);
    this.#emit(job, { done: true, cancelled: false, error: message });
  }

  #stop() {
    const job = this.#job;
    if (job && !job.finished) this.#finish(job);
  }

  #emit(job, { done, cancelled, error = null }) {
    deliverUpdate(this.#onUpdate, job, { done, cancelled, error });
  }

}
