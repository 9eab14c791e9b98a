// What the two tracers share: the worker pool (pool.js) and the on-page tracer
// (main-thread-pool.js) set up a job, pace its progressive merges, count its rays and send its
// updates (described at the top of pool.js) the same way, so the page cannot tell them apart.

/** Shortest time between two progressive merges (ms); the first and the final are not held back. */
export const MIN_MERGE_INTERVAL_MS = 150;
/** A merge may take at most this share of the time between merges (so large traces keep tracing). */
export const MERGE_DUTY = 1 / 3;

/** The ray count a scenario document asks for, or null when it leaves it to the core's default. */
export function declaredRays(scenarioJson) {
  try {
    const rays = JSON.parse(scenarioJson)?.trace?.rays;
    return Number.isSafeInteger(rays) && rays > 0 ? rays : null;
  } catch {
    return null; // the core will say what is wrong with the text
  }
}

/**
 * The rays of a traced batch: a scenario's, a sweep's (those of each traced point), a tolerance
 * study's (those of the nominal, the same at every variant) or a search value's (`{ value, study,
 * sums }`: the rays its sums count).
 */
export function batchRays(batch) {
  if (batch.rays !== undefined) return batch.rays;
  if (batch.nominal?.n !== undefined) return batch.nominal.n;
  if (batch.sums?.delivered?.n !== undefined) return batch.sums.delivered.n;
  return batch.batches?.find((b) => b !== null)?.rays ?? 0;
}

/** The rays in a merged report: its `rays`, or for a search value's merged sums, theirs. */
const reportRays = (report) => report?.rays ?? report?.delivered?.n ?? 0;

/** The `onUpdate` option of a tracer (`owner` names it in the error): a function, or none. */
export function updateHandler(onUpdate, owner) {
  if (onUpdate !== undefined && typeof onUpdate !== 'function') {
    throw new TypeError(`${owner} onUpdate must be a function`);
  }
  return onUpdate ?? (() => {});
}

/**
 * A new job `id` tracing a scenario (JSON text), keeping `keepPaths` ray paths (only batch 0
 * records them); throws a RangeError for a `keepPaths` that is not a whole number ≥ 0. Holds
 * what both tracers track; each adds its own fields.
 */
export function newJob(id, scenarioJson, keepPaths, x) {
  if (!Number.isInteger(keepPaths) || keepPaths < 0 || keepPaths > 0xffffffff) {
    throw new RangeError(`keepPaths must be a whole number ≥ 0, got ${keepPaths}`);
  }
  if (x !== undefined && !Number.isFinite(x)) {
    throw new RangeError(`x must be a finite number (the searched value), got ${x}`);
  }
  const scenario = String(scenarioJson);
  return {
    id,
    scenario,
    x, // the searched value of a search's job (find: true), else undefined
    keepPaths,
    startedAt: performance.now(),
    declaredRays: declaredRays(scenario),
    batchCount: null,
    rays: [], // rays of each batch in, by index
    prefix: 0, // batches 0..prefix-1 are all in
    lastMergeAt: 0,
    lastMergeMs: 0,
    report: null,
    reportBatches: 0,
    firstAnswerMs: null,
    finished: false,
  };
}

/** How long after the last progressive merge the next may start (ms). */
export const mergeInterval = (job) => Math.max(MIN_MERGE_INTERVAL_MS, job.lastMergeMs / MERGE_DUTY);

/**
 * The rays the job traces in all: the scenario's `trace.rays`; when the document leaves it to the
 * core's default, batchCount × the rays of batch 0 until every batch is in, then their sum.
 */
function raysTotal(job) {
  if (job.declaredRays !== null) return job.declaredRays;
  if (job.batchCount === null) return 0;
  if (job.prefix === job.batchCount) return job.rays.reduce((a, b) => a + b, 0);
  return job.rays[0] === undefined ? 0 : job.batchCount * job.rays[0];
}

/**
 * Build the update of `job` (see the top of pool.js) and hand it to the page's `onUpdate`; a
 * handler that throws is reported as uncaught without stopping the tracer.
 */
export function deliverUpdate(onUpdate, job, { done, cancelled, error = null }) {
  const elapsedMs = performance.now() - job.startedAt;
  const raysDone = reportRays(job.report);
  const update = {
    job: job.id,
    report: job.report,
    batchesDone: job.reportBatches,
    batchCount: job.batchCount ?? 0,
    raysDone,
    raysTotal: raysTotal(job),
    done,
    cancelled,
    error,
    firstAnswerMs: job.firstAnswerMs,
    elapsedMs,
    raysPerSecond: elapsedMs > 0 ? (raysDone * 1000) / elapsedMs : 0,
  };
  try {
    onUpdate(update);
  } catch (e) {
    setTimeout(() => {
      throw e;
    });
  }
}
