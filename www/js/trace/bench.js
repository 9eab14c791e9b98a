// The speed check (www/bench.html): traces a scenario with one worker, then with one worker per
// core, and reports time to the first answer, rays per second and the delivered share.
// `window.tirtraceBench.measure(options)` runs it from a script (benches/page_speed.mjs) and
// `window.tirtraceBench.TracePool` gives tests the pool on a page of its own.
//
// Page address options: ?scenario=demos/x.json&rays=N&run=1 (run starts it at once).

import { $, setStatus } from '../dom.js';
import { messageOf } from '../errors.js';
import { formatCount } from '../format.js';
import { traceWorker } from '../design/sources.js';
import { loadCore } from '../load-core.js';
import { TracePool } from './pool.js';

/** Rays per batch in the core (src/trace.rs, BATCH_RAYS): sizes the warm-up trace. */
const BATCH_RAYS = 4096;
/** Warm-up batches per worker before a timed run (V8 first runs wasm on its baseline compiler). */
const WARM_BATCHES_PER_WORKER = 2;

/** Run one job on a pool; resolves with its final update, rejects with its error. */
function runJob(pool, listen, scenarioJson) {
  return new Promise((resolve, reject) => {
    let job = null;
    listen((u) => {
      if (u.job !== job || !u.done) return;
      if (u.error) reject(new Error(u.error));
      else if (u.cancelled) reject(new Error('the trace was cancelled'));
      else resolve(u);
    });
    job = pool.start(scenarioJson);
  });
}

/**
 * A fresh pool of `size` workers (null: one per core): a warm-up trace (`warmJson(poolSize)`),
 * then the timed one.
 */
async function timedRuns(size, warmJson, json, { study = false } = {}) {
  let listener = () => {};
  // The workers as the design page starts them: their bundle, handed the core compiled here.
  await loadCore();
  const pool = new TracePool({ size: size ?? undefined, study, onUpdate: (u) => listener(u), ...(await traceWorker()) });
  const listen = (f) => {
    listener = f;
  };
  try {
    await pool.ready();
    const warm = await runJob(pool, listen, warmJson(pool.size));
    const timed = await runJob(pool, listen, json);
    return { size: pool.size, warm, timed };
  } finally {
    pool.dispose();
  }
}

const perSecond = (u) => Math.round((u.raysTotal * 1000) / u.elapsedMs);

/**
 * Measure: `scenario` is a path or URL of a scenario document (relative to the page), `rays`
 * overrides its ray count. Resolves with the figures as a plain object.
 */
export async function measure({ scenario = 'demos/bench_three_bends.json', rays } = {}) {
  const response = await fetch(scenario);
  if (!response.ok) throw new Error(`${scenario} could not be read (HTTP ${response.status})`);
  const doc = await response.json();
  if (rays !== undefined) {
    if (!Number.isSafeInteger(rays) || rays < 1) throw new RangeError(`rays must be a whole number ≥ 1, got ${rays}`);
    doc.trace = { ...doc.trace, rays };
  }
  const json = JSON.stringify(doc);
  const warmJson = (size) => {
    const total = doc.trace?.rays ?? Infinity;
    return JSON.stringify({ ...doc, trace: { ...doc.trace, rays: Math.min(total, WARM_BATCHES_PER_WORKER * size * BATCH_RAYS) } });
  };
  const one = await timedRuns(1, warmJson, json);
  const all = await timedRuns(null, warmJson, json);
  const d = all.timed.report.delivered;
  return {
    scenario,
    rays: all.timed.raysTotal,
    workers: all.size,
    first_answer_ms: Math.round(all.timed.firstAnswerMs),
    first_answer_cold_ms: Math.round(all.warm.firstAnswerMs),
    rays_per_s_1_worker: perSecond(one.timed),
    rays_per_s_all_workers: perSecond(all.timed),
    all_vs_1_worker: Number((perSecond(all.timed) / perSecond(one.timed)).toFixed(2)),
    delivered_share: d.share,
    delivered_ci95: d.ci95,
    same_answer_1_and_all: JSON.stringify(one.timed.report) === JSON.stringify(all.timed.report),
  };
}

/**
 * Measure a sweep against one trace of the same total rays, both with one worker per core on
 * warmed pools: `study` is a study document (an object with `vary`), `rays` the rays per point.
 * Resolves with the figures as a plain object (times in ms, end to end: document in, report out).
 */
export async function measureSweep({ study, rays }) {
  if (!Number.isSafeInteger(rays) || rays < 1) throw new RangeError(`rays must be a whole number ≥ 1, got ${rays}`);
  const vary = study.vary;
  const points = Array.isArray(vary.values) ? vary.values.length : Array.isArray(vary.factors) ? vary.factors.length : vary.steps + 1;
  const withRays = (n) => ({ ...study, scenario: { ...study.scenario, trace: { ...study.scenario.trace, rays: n } } });
  const studyJson = JSON.stringify(withRays(rays));
  const warmStudy = (size) => JSON.stringify(withRays(WARM_BATCHES_PER_WORKER * size * BATCH_RAYS));
  const scenario = study.scenario;
  const traceJson = JSON.stringify({ ...scenario, trace: { ...scenario.trace, rays: points * rays } });
  const warmTrace = (size) => JSON.stringify({ ...scenario, trace: { ...scenario.trace, rays: WARM_BATCHES_PER_WORKER * size * BATCH_RAYS } });
  const sweep = await timedRuns(null, warmStudy, studyJson, { study: true });
  const trace = await timedRuns(null, warmTrace, traceJson);
  const ci = sweep.timed.report.points.filter((p) => p.result).map((p) => p.result.delivered.ci95);
  return {
    points,
    rays_per_point: rays,
    workers: sweep.size,
    sweep_ms: Math.round(sweep.timed.elapsedMs),
    one_trace_ms: Math.round(trace.timed.elapsedMs),
    sweep_vs_one_trace: Number((sweep.timed.elapsedMs / trace.timed.elapsedMs).toFixed(2)),
    delivered_ci95_max: Math.max(...ci),
  };
}

// ------------------------------------------------------------------ the page

function show(r) {
  const n = formatCount;
  $('first-answer').textContent = `${n(r.first_answer_ms)} ms (first trace on a new pool: ${n(r.first_answer_cold_ms)} ms)`;
  $('rate-one').textContent = n(r.rays_per_s_1_worker);
  $('worker-count').textContent = String(r.workers);
  $('rate-all').textContent = `${n(r.rays_per_s_all_workers)} (${r.all_vs_1_worker}× one worker)`;
  $('delivered').textContent = `${(100 * r.delivered_share).toFixed(2)} % ± ${(100 * r.delivered_ci95).toFixed(2)} % (95 %)`;
  $('same').textContent = r.same_answer_1_and_all ? 'yes, value for value' : 'NO: the reports differ';
  $('figures').hidden = false;
  $('result').textContent = JSON.stringify(r, null, 2);
  $('result').hidden = false;
}

async function runFromForm() {
  const raysText = $('rays').value.trim();
  const rays = raysText === '' ? undefined : Number(raysText);
  if (rays !== undefined && (!Number.isSafeInteger(rays) || rays < 1)) {
    setStatus(`Rays must be a whole number ≥ 1, got "${raysText}".`, 'error');
    return;
  }
  $('run').disabled = true;
  document.body.dataset.state = 'running';
  setStatus('Tracing…');
  try {
    const r = await measure({ scenario: $('scenario').value.trim(), rays });
    show(r);
    setStatus(`Done: ${formatCount(r.rays)} rays.`, 'ok');
    document.body.dataset.state = 'done';
  } catch (e) {
    setStatus(`The speed check failed: ${messageOf(e)}`, 'error');
    document.body.dataset.state = 'error';
  } finally {
    $('run').disabled = false;
  }
}

window.tirtraceBench = { measure, measureSweep, TracePool };

const params = new URLSearchParams(location.search);
if (params.has('scenario')) $('scenario').value = params.get('scenario');
if (params.has('rays')) $('rays').value = params.get('rays');
$('bench-form').addEventListener('submit', (e) => {
  e.preventDefault();
  runFromForm();
});
$('run').disabled = false;
setStatus('Ready.', 'ok');
document.body.dataset.state = 'ready';
if (params.get('run') === '1') runFromForm();
