// Traces a scenario on the page's own thread, batch by batch, for a browser that will not start
// the trace workers (www/js/trace/pool.js). Same API and the same updates as TracePool (see the
// top of pool.js), so the page does not care which one it holds; the answers are identical, since
// both report the batches 0..k merged in batch order with the core's own Tracer.
//
// The page stays responsive by tracing for at most SLICE_MS before giving the thread back; the
// progressive merges follow the pool's pacing (job.js: MIN_MERGE_INTERVAL_MS, MERGE_DUTY). Slower than
// the workers: one thread, and the merges run on it too.
//
// Usage (the core already initialised on this thread):
//   import * as core from '../../pkg/tirtrace.js';
//   const pool = new MainThreadPool({ Tracer: core.Tracer, onUpdate: (u) => show(u) });
//   (Tracer: core.StudyTracer, core.ToleranceTracer as well; core.FindValueTracer with find: true,
//   for a search's values: pool.start(studyJsonText, { x }), as TracePool's find pools)

import { messageOf } from '../errors.js';
import { batchRays, deliverUpdate, mergeInterval, newJob, updateHandler } from './job.js';

/** Longest stretch of tracing before the page gets its thread back (ms); one batch may exceed it. */
const SLICE_MS = 40;

// The next task, without the 4 ms clamp nested timers get: one shared channel, resolved in order.
const wakeUps = [];
let channel = null;
function nextTask() {
  if (channel === null) {
    channel = new MessageChannel();
    channel.port1.onmessage = () => wakeUps.shift()?.();
  }
  return new Promise((resolve) => {
    wakeUps.push(resolve);
    channel.port2.postMessage(null);
  });
}

export class MainThreadPool {
  #Tracer;
  #find;
  #onUpdate;
  #job = null;
  #nextJob = 1;
  #disposed = false;

  /**
   * Tracer: the core's Tracer class (the core initialised on this thread);
   * onUpdate: called with every update, as TracePool's;
   * find: true when Tracer is the core's FindValueTracer (each job one value x of a search).
   */
  constructor({ Tracer, onUpdate, find = false } = {}) {
    if (typeof Tracer !== 'function') throw new TypeError('MainThreadPool needs the core\'s Tracer class');
    this.#Tracer = Tracer;
    this.#find = find === true;
    this.#onUpdate = updateHandler(onUpdate, 'MainThreadPool');
  }

  /** Number of tracing workers: none, it traces on this thread. */
  get size() {
    return 0;
  }

  /** Nothing to load: resolves at once. */
  ready() {
    return Promise.resolve();
  }

  /** As TracePool.start: replaces any running job; updates come after it returns. */
  start(scenarioJson, { keepPaths = 200, x } = {}) {
    if (this.#disposed) throw new Error('this MainThreadPool has been disposed');
    if (this.#find && x === undefined) throw new RangeError('a search pool (find: true) needs start(study, { x })');
    const job = newJob(this.#nextJob, scenarioJson, keepPaths, this.#find ? x : undefined);
    this.#nextJob += 1;
    this.#stop();
    this.#job = job;
    this.#run(job);
    return job.id;
  }

  /** As TracePool.cancel. */
  cancel() {
    const job = this.#job;
    if (!job || job.finished) return;
    job.finished = true;
    this.#emit(job, { done: true, cancelled: true });
  }

  /** Stop tracing; the pool cannot be used afterwards. */
  dispose() {
    this.#disposed = true;
    this.#stop();
  }

  #stop() {
    if (this.#job) this.#job.finished = true;
  }

  async #run(job) {
    await nextTask(); // updates never arrive before start() has returned
    if (job.finished) return;
    let tracer;
    try {
      tracer = job.x === undefined ? new this.#Tracer(job.scenario) : new this.#Tracer(job.scenario, job.x);
    } catch (e) {
      this.#fail(job, messageOf(e));
      return;
    }
    try {
      job.batchCount = tracer.batch_count();
      while (!job.finished) {
        const sliceStart = performance.now();
        while (job.prefix < job.batchCount && performance.now() - sliceStart < SLICE_MS) {
          const index = job.prefix;
          try {
            const [batch] = tracer.batches(index, 1, job.keepPaths);
            tracer.merger_add(index, batch);
            job.rays.push(batchRays(batch));
            job.prefix += 1;
          } catch (e) {
            this.#fail(job, `Tracing batch ${index} failed: ${messageOf(e)}`);
            return;
          }
        }
        const final = job.prefix === job.batchCount;
        if (final || job.reportBatches === 0 || performance.now() - job.lastMergeAt >= mergeInterval(job)) {
          if (!this.#merge(job, tracer)) return;
          if (final) job.finished = true;
          this.#emit(job, { done: final, cancelled: false });
          if (final) return;
        }
        await nextTask();
      }
    } catch (e) {
      if (!job.finished) this.#fail(job, `Tracing failed: ${messageOf(e)}`);
    } finally {
      tracer.free();
    }
  }

  /** Report batches 0..traced-1 merged in batch order; false when that failed (and was reported). */
  #merge(job, tracer) {
    const start = performance.now();
    try {
      job.report = tracer.merger_report(job.prefix);
    } catch (e) {
      this.#fail(job, `The traced batches could not be merged: ${messageOf(e)}`);
      return false;
    }
    job.lastMergeAt = performance.now();
    job.lastMergeMs = job.lastMergeAt - start;
    job.reportBatches = job.prefix;
    job.firstAnswerMs ??= job.lastMergeAt - job.startedAt;
    return true;
  }

  #fail(job, message) {
    job.finished = true;
    this.#emit(job, { done: true, cancelled: false, error: message });
  }

  #emit(job, { done, cancelled, error = null }) {
    deliverUpdate(this.#onUpdate, job, { done, cancelled, error });
  }

}
