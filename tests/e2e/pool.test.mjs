// Tracing in Web Workers (www/js/trace/pool.js) in a real browser: Debian's Chromium, headless,
// driven by playwright-core, on the speed-check page (www/bench.html exposes the pool to scripts
// as window.tirtraceBench.TracePool).
//
// Before:  cargo build                  (the native CLI, target/debug/tirtrace)
//          bash scripts/build.sh        (the wasm core into www/pkg)
//          npm ci --prefix tests/e2e
// Run:     node --test tests/e2e/pool.test.mjs
//
// Checks: a pooled run with 2 workers gives the native CLI's report field for field; updates
// come progressively (and an intermediate report equals a native run of that many rays); cancel
// stops a job; a new start() replaces the running job; a bad scenario gives the core's message
// naming the field; a worker that crashes or cannot start gives an error, not a hang; no request
// leaves the origin and nothing is logged as an error; a search's values traced as jobs of a
// find: true pool (and on the page) give `tirtrace study`'s report.

import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { chromium } from 'playwright-core';

import { CHROMIUM, CHROMIUM_ARGS, CLI, ROOT, WWW, cli, startServer, stopServer } from './harness.mjs';

const SCENARIOS = join(ROOT, 'examples', 'scenarios');
/** Rays per batch in the core (src/trace.rs, BATCH_RAYS). */
const BATCH_RAYS = 4096;

// ---------------------------------------------------------------- helpers

/** An example scenario with its trace settings replaced, as JSON text. */
function scenarioText(name, trace) {
  const doc = JSON.parse(readFileSync(join(SCENARIOS, `${name}.json`), 'utf8'));
  doc.trace = { ...doc.trace, ...trace };
  return JSON.stringify(doc);
}

/** The native CLI's report for a scenario (`tirtrace trace - [args]`). */
function cliReport(text, args = []) {
  // The harness's runner: a report with 200 kept paths can pass spawnSync's default 1 MB buffer
  // (one ray trapped for thousands of reflections is enough).
  return JSON.parse(cli(['trace', '-', ...args], text));
}

/** The delivered share, every budget entry, then the whole report: equal, value for value. */
function assertSameReport(pooled, native, what) {
  assert.ok(native.delivered.share > 0, `${what}: the native run delivers some light`);
  assert.equal(pooled.delivered.share, native.delivered.share, `${what}: delivered share`);
  assert.equal(pooled.delivered.ci95, native.delivered.ci95, `${what}: delivered ci95`);
  assert.deepEqual(Object.keys(pooled.budget).sort(), Object.keys(native.budget).sort(), `${what}: budget entries`);
  for (const [key, entry] of Object.entries(native.budget)) {
    assert.equal(pooled.budget[key].share, entry.share, `${what}: budget.${key}.share`);
    assert.equal(pooled.budget[key].ci95, entry.ci95, `${what}: budget.${key}.ci95`);
  }
  assert.deepStrictEqual(pooled, native, `${what}: the whole report`);
}

/**
 * Set up the page side: one pool of 2 workers whose updates are all recorded (with the time
 * they came), and helpers to wait for them.
 */
function installPageHelpers() {
  const { TracePool } = window.tirtraceBench;
  const t = { updates: [] };
  t.record = (u) => t.updates.push({ ...u, at: performance.now() });
  t.pool = new TracePool({ size: 2, onUpdate: t.record });
  t.summary = (u) => {
    const { report, ...rest } = u;
    return { ...rest, reportRays: report ? report.rays : null };
  };
  /** The first recorded update matching `pred`, waiting up to `ms`. */
  t.waitFor = async (pred, ms, what) => {
    const deadline = performance.now() + ms;
    for (;;) {
      const u = t.updates.find(pred);
      if (u) return u;
      if (performance.now() > deadline) throw new Error(`no update ${what} within ${ms} ms`);
      await new Promise((r) => setTimeout(r, 10));
    }
  };
  t.finalOf = (job, ms = 60_000) => t.waitFor((u) => u.job === job && u.done, ms, `ending job ${job}`);
  t.firstOf = (job, ms = 60_000) => t.waitFor((u) => u.job === job, ms, `for job ${job}`);
  t.sleep = (ms) => new Promise((r) => setTimeout(r, ms));
  window.poolTest = t;
  return t.pool.ready().then(() => t.pool.size);
}

// ---------------------------------------------------------------- the test

describe('tracing in Web Workers (www/js/trace/pool.js) in Chromium', { concurrency: false }, () => {
  let server;
  let browser;
  let page;
  const requests = [];
  const consoleErrors = [];
  const pageErrors = [];

  before(async () => {
    assert.ok(existsSync(join(WWW, 'pkg', 'tirtrace.js')), 'www/pkg is missing: run `bash scripts/build.sh` first');
    assert.ok(existsSync(CLI), 'target/debug/tirtrace is missing: run `cargo build` first');
    assert.ok(existsSync(CHROMIUM), `no Chromium at ${CHROMIUM}`);
    server = await startServer();
    browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
    const context = await browser.newContext();
    context.on('request', (r) => requests.push(r.url()));
    page = await context.newPage();
    const onConsole = (m) => {
      if (m.type() === 'error') consoleErrors.push(m.text());
    };
    page.on('console', onConsole);
    page.on('worker', (w) => w.on('console', onConsole));
    page.on('pageerror', (e) => pageErrors.push(String(e)));
    await page.goto(`${server.origin}/bench.html`);
    await page.waitForSelector('body[data-state="ready"]', { timeout: 20_000 });
    assert.equal(await page.evaluate(installPageHelpers), 2, 'the pool has 2 workers');
  });

  after(async () => {
    await browser?.close();
    await stopServer(server?.child);
  });

  for (const name of ['thermostat_status_led', 'bike_light_charge_indicator']) {
    test(`2 workers give the native CLI's report for ${name}`, async () => {
      const text = scenarioText(name, { rays: 20_000, seed: 11 });
      const final = await page.evaluate(async (text) => {
        const t = window.poolTest;
        return t.finalOf(t.pool.start(text, { keepPaths: 20 }));
      }, text);
      assert.equal(final.error, null);
      assert.equal(final.cancelled, false);
      assert.equal(final.batchCount, Math.ceil(20_000 / BATCH_RAYS));
      assert.equal(final.batchesDone, final.batchCount);
      assert.equal(final.raysDone, 20_000);
      assert.equal(final.raysTotal, 20_000);
      assert.ok(final.firstAnswerMs > 0 && final.firstAnswerMs <= final.elapsedMs, `first answer at ${final.firstAnswerMs} ms`);
      assert.ok(final.raysPerSecond > 0);
      assertSameReport(final.report, cliReport(text, ['--paths', '20']), name);
    });
  }

  test('updates arrive progressively, throttled, each a prefix of the native run', async () => {
    const batches = 40;
    const text = scenarioText('bench_three_bends', { rays: batches * BATCH_RAYS, seed: 3 });
    const { updates, intermediate } = await page.evaluate(async (text) => {
      const t = window.poolTest;
      const job = t.pool.start(text);
      await t.finalOf(job);
      const mine = t.updates.filter((u) => u.job === job);
      return { updates: mine.map(t.summary), intermediate: mine.find((u) => !u.done)?.report ?? null };
    }, text);
    assert.ok(updates.length > 1, `only ${updates.length} update(s)`);
    const first = updates[0];
    const last = updates.at(-1);
    assert.ok(first.batchesDone >= 1 && first.batchesDone < batches, `first update after ${first.batchesDone} batches`);
    assert.ok(first.at < last.at, 'the first update comes before the last');
    assert.ok(last.done && !last.cancelled && last.error === null);
    assert.equal(last.batchesDone, batches);
    assert.equal(last.raysDone, batches * BATCH_RAYS);
    assert.equal(updates.filter((u) => u.done).length, 1, 'exactly one final update');
    for (let i = 0; i < updates.length; i += 1) {
      const u = updates[i];
      assert.equal(u.reportRays, u.raysDone, `update ${i}: the report holds raysDone rays`);
      assert.equal(u.raysTotal, batches * BATCH_RAYS);
      assert.equal(u.firstAnswerMs, first.firstAnswerMs, `update ${i}: the time to the first answer stays`);
      if (i === 0) continue;
      const prev = updates[i - 1];
      assert.ok(u.raysDone > prev.raysDone && u.batchesDone > prev.batchesDone, `update ${i}: ${prev.raysDone} → ${u.raysDone} rays`);
    }
    // Merges are asked for at least max(150 ms, 3 × the last merge's time) apart (the final one
    // is never held back). Their reports may arrive bunched when the page's thread is busy, so
    // the check is on their number: over the time the intermediate ones span, no more than one
    // per 100 ms (150 less timer jitter), plus the first.
    const shown = updates.filter((u) => !u.done);
    const span = shown.at(-1).at - shown[0].at;
    assert.ok(shown.length <= 1 + Math.floor(span / 100), `${shown.length} intermediate updates within ${span.toFixed(0)} ms`);
    // Batches are merged in order only: an intermediate report is the native run of that many rays.
    assert.ok(intermediate, 'an intermediate report');
    const k = updates[0].batchesDone;
    assertSameReport(intermediate, cliReport(text, ['--rays', String(k * BATCH_RAYS), '--paths', '200']), `the first ${k} batches`);
  });

  test('the merging worker waits for every batch of a prefix, whatever order they arrive in', async () => {
    // Batch data go tracer → merger over their own channel and the "done" notes tracer → pool, so
    // the pool may ask for a merge before the merger holds every batch. Driven by hand here: the
    // merger is asked for batches 0..1, gets batch 1 first, and must wait for batch 0.
    const got = await page.evaluate(async () => {
      const url = new URL('js/trace/worker.js', location.href);
      const start = (w) => new Promise((resolve) => {
        w.onmessage = (e) => e.data.type === 'ready' && resolve();
      });
      const tracer = new Worker(url, { type: 'module' });
      const merger = new Worker(url, { type: 'module' });
      await Promise.all([start(tracer), start(merger)]);
      const doc = await (await fetch('demos/thermostat_status_led.json')).json();
      const json = JSON.stringify({ ...doc, trace: { ...doc.trace, rays: 2 * 4096 } });
      // The tracer's batches come to this page instead of the merger.
      const channel = new MessageChannel();
      const batches = [];
      channel.port2.onmessage = (e) => batches.push(e.data);
      tracer.postMessage({ type: 'connect', role: 'to-merger', port: channel.port1 }, [channel.port1]);
      const next = (w, type) => new Promise((resolve) => {
        w.onmessage = (e) => (e.data.type === type || e.data.type.endsWith('error')) && resolve(e.data);
      });
      for (const w of [tracer, merger]) {
        const ready = next(w, 'job-ready');
        w.postMessage({ type: 'job', job: 1, scenario: json });
        await ready;
      }
      for (const index of [0, 1]) {
        const done = next(tracer, 'batch');
        tracer.postMessage({ type: 'batch', job: 1, index, keepPaths: 0 });
        await done;
      }
      while (batches.length < 2) await new Promise((r) => setTimeout(r, 10));
      const early = [];
      merger.onmessage = (e) => early.push(e.data.type);
      merger.postMessage({ type: 'merge', job: 1, count: 2 });
      merger.postMessage(batches.find((b) => b.index === 1));
      await new Promise((r) => setTimeout(r, 300));
      const report = next(merger, 'report');
      merger.postMessage(batches.find((b) => b.index === 0));
      const last = await Promise.race([report, new Promise((r) => setTimeout(() => r({ type: 'no answer within 10 s' }), 10_000))]);
      tracer.terminate();
      merger.terminate();
      return { early, type: last.type, rays: last.report?.rays ?? null, message: last.message ?? null };
    });
    assert.deepEqual(got, { early: [], type: 'report', rays: 2 * 4096, message: null });
  });

  test('a search traced value by value in a find: true pool (and on the page) gives tirtrace study\'s report', async () => {
    const study = JSON.parse(readFileSync(join(ROOT, 'examples', 'studies', 'thermostat_smallest_bend.json'), 'utf8'));
    const rays = 2 * BATCH_RAYS + 50;
    study.scenario.trace = { ...study.scenario.trace, rays, seed: 3 };
    const text = JSON.stringify(study);
    const native = JSON.parse(cli(['study', '-', '--threads', '2'], text));
    const r = await page.evaluate(async ({ text }) => {
      const core = await import(new URL('js/core.js', location.href).href).then((m) => m.loadCore());
      const { MainThreadPool } = await import(new URL('js/trace/main-thread-pool.js', location.href).href);
      const { TracePool } = window.tirtraceBench;
      const search = async (pool, listen) => {
        const finder = new core.StudyFinder(text);
        const finals = [];
        for (let x = finder.next_value(); x !== undefined && x !== null; x = finder.next_value()) {
          const final = await new Promise((resolve) => {
            let id = null;
            listen((u) => u.job === id && u.done && resolve(u));
            id = pool.start(text, { x, keepPaths: 0 });
          });
          const { report, ...rest } = final;
          finals.push(rest);
          finder.record_merged(x, report);
        }
        const out = { report: finder.report(), finals };
        finder.free();
        return out;
      };
      let listener = () => {};
      const listen = (f) => {
        listener = f;
      };
      const pool = new TracePool({ size: 2, find: true, onUpdate: (u) => listener(u) });
      await pool.ready();
      const workers = await search(pool, listen);
      let noX = null;
      try {
        pool.start(text);
      } catch (e) {
        noX = e.message;
      }
      pool.dispose();
      const onPage = new MainThreadPool({ Tracer: core.FindValueTracer, find: true, onUpdate: (u) => listener(u) });
      const page = await search(onPage, listen);
      onPage.dispose();
      return { workers, page, noX };
    }, { text });
    for (const [what, run] of [['workers', r.workers], ['on the page', r.page]]) {
      assert.deepStrictEqual(run.report, native, `${what}: the search report`);
      assert.ok(run.finals.length > 9, `${what}: the scan and the bisections`);
      for (const u of run.finals) {
        assert.equal(u.error, null, what);
        assert.equal(u.cancelled, false, what);
        assert.equal(u.batchCount, 3, what);
        assert.equal(u.raysDone, rays, `${what}: the rays of the value counted`);
        assert.equal(u.raysTotal, rays, `${what}: every ray of the value`);
      }
    }
    assert.match(r.noX ?? '', /needs start\(study, \{ x \}\)/);
  });

  test('cancel() stops a job: one last update, cancelled, and nothing after it', async () => {
    const long = scenarioText('bench_three_bends', { rays: 2_000_000, seed: 5 });
    const small = scenarioText('bench_three_bends', { rays: BATCH_RAYS, seed: 5 });
    const r = await page.evaluate(async ({ long, small }) => {
      const t = window.poolTest;
      const job = t.pool.start(long);
      await t.firstOf(job);
      const mark = t.updates.length;
      t.pool.cancel();
      const atCancel = t.updates.slice(mark).map(t.summary);
      t.pool.cancel(); // a second cancel has nothing to stop
      // The workers are free again within a batch: a one-batch job runs to its end at once,
      // while the cancelled one still had seconds of work left.
      const next = t.pool.start(small);
      const nextFinal = t.summary(await t.finalOf(next, 20_000));
      await t.sleep(500);
      const later = t.updates.slice(mark).filter((u) => u.job === job).map(t.summary);
      return { job, atCancel, later, nextFinal };
    }, { long, small });
    assert.equal(r.atCancel.length, 1, 'cancel() gives exactly one update, at once');
    const u = r.atCancel[0];
    assert.equal(u.job, r.job);
    assert.equal(u.cancelled, true);
    assert.equal(u.done, true);
    assert.equal(u.error, null);
    assert.ok(u.batchesDone >= 1 && u.batchesDone < u.batchCount, `cancelled after ${u.batchesDone} of ${u.batchCount} batches`);
    assert.equal(u.reportRays, u.raysDone, 'the cancelled update keeps the report traced so far');
    assert.deepEqual(r.later, r.atCancel, 'no update for the cancelled job after its cancelled one');
    assert.equal(r.nextFinal.error, null);
    assert.equal(r.nextFinal.raysDone, BATCH_RAYS);
    assert.ok(r.nextFinal.elapsedMs < 5_000, `the next job took ${r.nextFinal.elapsedMs} ms`);
  });

  test('start() with a new scenario while one runs gives only the new job’s updates', async () => {
    const long = scenarioText('bench_three_bends', { rays: 2_000_000, seed: 6 });
    const next = scenarioText('thermostat_status_led', { rays: 20_000, seed: 12 });
    const r = await page.evaluate(async ({ long, next }) => {
      const t = window.poolTest;
      const first = t.pool.start(long);
      await t.firstOf(first);
      const mark = t.updates.length;
      const second = t.pool.start(next);
      const final = await t.finalOf(second);
      await t.sleep(500);
      return { first, second, after: t.updates.slice(mark).map(t.summary), report: final.report };
    }, { long, next });
    assert.notEqual(r.first, r.second);
    assert.ok(r.after.length >= 1);
    assert.deepEqual(r.after.filter((u) => u.job !== r.second), [], 'updates of the replaced job came after start()');
    assert.equal(r.after.at(-1).done, true);
    assert.equal(r.after.filter((u) => u.done).length, 1);
    assertSameReport(r.report, cliReport(next, ['--paths', '200']), 'the new job');
  });

  test('a bad scenario gives one error update with the core’s message naming the field', async () => {
    const doc = JSON.parse(scenarioText('thermostat_status_led', { rays: 20_000 }));
    doc.route[1].bend.radius_mm = -3;
    const bad = JSON.stringify(doc);
    const refused = spawnSync(CLI, ['trace', '-'], { input: bad, encoding: 'utf8' });
    assert.notEqual(refused.status, 0, 'the CLI refuses it too');
    const cliMessage = refused.stderr.trim().replace(/^tirtrace: /, '');
    const good = scenarioText('thermostat_status_led', { rays: BATCH_RAYS, seed: 1 });
    const r = await page.evaluate(async ({ bad, good }) => {
      const t = window.poolTest;
      const job = t.pool.start(bad);
      await t.finalOf(job, 20_000);
      const notJson = t.pool.start('{ "version": 1, ');
      const notJsonFinal = await t.finalOf(notJson, 20_000);
      await t.sleep(300);
      const mine = t.updates.filter((u) => u.job === job).map(t.summary);
      // The pool still works afterwards.
      const after = t.summary(await t.finalOf(t.pool.start(good), 20_000));
      return { mine, notJson: t.summary(notJsonFinal), after };
    }, { bad, good });
    assert.equal(r.mine.length, 1, 'exactly one update for the bad scenario');
    const u = r.mine[0];
    assert.equal(u.done, true);
    assert.equal(u.cancelled, false);
    assert.equal(u.reportRays, null);
    assert.equal(u.batchesDone, 0);
    assert.match(u.error, /route\[1\]\.bend\.radius_mm/);
    assert.match(u.error, /got -3/);
    assert.equal(u.error, cliMessage);
    assert.equal(typeof r.notJson.error, 'string');
    assert.ok(r.notJson.error.length > 10, `message for text that is not JSON: "${r.notJson.error}"`);
    assert.equal(r.after.error, null);
    assert.equal(r.after.raysDone, BATCH_RAYS);
  });

  test('a worker that crashes or cannot start gives an error, never a hang', async () => {
    const text = scenarioText('thermostat_status_led', { rays: 20_000, seed: 1 });
    const r = await page.evaluate(async (text) => {
      const { TracePool } = window.tirtraceBench;
      const blobUrl = (code) => URL.createObjectURL(new Blob([code], { type: 'text/javascript' }));
      const waitDone = (updates, ms) =>
        new Promise((resolve) => {
          const deadline = performance.now() + ms;
          const poll = () => {
            const u = updates.find((x) => x.done);
            if (u || performance.now() > deadline) resolve(u ?? null);
            else setTimeout(poll, 10);
          };
          poll();
        });
      // A worker that loads and takes the job, then throws while "tracing".
      const crashing = blobUrl(`
        postMessage({ type: 'ready' });
        onmessage = (e) => {
          const m = e.data;
          if (m.type === 'job') postMessage({ type: 'job-ready', job: m.job, batchCount: 5 });
          if (m.type === 'batch') throw new Error('simulated crash in batch ' + m.index);
        };`);
      const crashUpdates = [];
      const crashPool = new TracePool({ size: 2, workerUrl: crashing, onUpdate: (u) => crashUpdates.push(u) });
      await crashPool.ready();
      crashPool.start(text);
      const crashed = await waitDone(crashUpdates, 10_000);
      crashPool.dispose();
      // A worker whose script fails while loading.
      const broken = blobUrl(`throw new Error('simulated load failure');`);
      const brokenUpdates = [];
      const brokenPool = new TracePool({ size: 1, workerUrl: broken, onUpdate: (u) => brokenUpdates.push(u) });
      let readyError = null;
      await brokenPool.ready().catch((e) => {
        readyError = e instanceof Error ? e.message : `not an Error: ${e}`;
      });
      brokenPool.start(text);
      const brokenDone = await waitDone(brokenUpdates, 10_000);
      brokenPool.dispose();
      // A worker that cannot even be created (another origin's script is refused at once).
      const refusedUpdates = [];
      let refusedReady = null;
      const refusedPool = new TracePool({ size: 1, workerUrl: 'http://203.0.113.1/worker.js', onUpdate: (u) => refusedUpdates.push(u) });
      await refusedPool.ready().catch((e) => {
        refusedReady = e.message;
      });
      refusedPool.start(text);
      const refusedDone = await waitDone(refusedUpdates, 10_000);
      refusedPool.dispose();
      const strip = (u) => u && { error: u.error, done: u.done, cancelled: u.cancelled };
      return {
        crashed: strip(crashed), crashCount: crashUpdates.length, readyError, brokenDone: strip(brokenDone),
        refusedReady, refusedDone: strip(refusedDone), refusedCount: refusedUpdates.length,
      };
    }, text);
    assert.ok(r.crashed, 'no final update after a worker crashed');
    assert.match(r.crashed.error, /worker stopped.*simulated crash in batch/);
    assert.equal(r.crashCount, 1, 'one update: the error');
    assert.match(r.readyError ?? '', /could not start/, 'ready() rejects with a readable Error');
    assert.ok(r.brokenDone, 'no final update from a pool whose worker cannot start');
    assert.match(r.brokenDone.error, /could not start/);
    assert.match(r.refusedReady ?? '', /could not start/);
    assert.ok(r.refusedDone, 'no final update from a pool whose worker could not be created');
    assert.match(r.refusedDone.error, /could not start/);
    assert.equal(r.refusedCount, 1);
  });

  test('traces offline: the service worker keeps every file tracing needs', async () => {
    // Register the page's service worker here; it caches its list of files when it installs.
    const cached = await page.evaluate(async () => {
      const reg = await navigator.serviceWorker.register('./sw.js');
      const worker = reg.installing || reg.waiting || reg.active;
      if (worker.state !== 'activated') {
        await new Promise((resolve, reject) => {
          worker.addEventListener('statechange', () => {
            if (worker.state === 'activated') resolve();
            if (worker.state === 'redundant') reject(new Error('the service worker did not install'));
          });
        });
      }
      const keys = [];
      for (const name of await caches.keys()) {
        for (const r of await (await caches.open(name)).keys()) keys.push(new URL(r.url).pathname);
      }
      return keys;
    });
    for (const file of ['/js/trace/pool.js', '/js/trace/worker.js', '/pkg/tirtrace.js', '/pkg/tirtrace_bg.wasm', '/bench.html', '/js/trace/bench.js', '/demos/bench_three_bends.json']) {
      assert.ok(cached.includes(file), `${file} is not kept by the service worker`);
    }
    await page.reload(); // now controlled by the service worker
    await page.waitForSelector('body[data-state="ready"]', { timeout: 20_000 });
    await stopServer(server.child);
    const text = scenarioText('thermostat_status_led', { rays: 20_000, seed: 11 });
    const final = await page.evaluate(async (text) => {
      const { TracePool } = window.tirtraceBench;
      let resolveDone;
      const done = new Promise((resolve) => {
        resolveDone = resolve;
      });
      const pool = new TracePool({ size: 2, onUpdate: (u) => u.done && resolveDone(u) });
      await pool.ready();
      pool.start(text, { keepPaths: 20 });
      const u = await done;
      pool.dispose();
      return u;
    }, text);
    assert.equal(final.error, null);
    assertSameReport(final.report, cliReport(text, ['--paths', '20']), 'offline');
  });

  test('stayed on its own origin and logged no errors', () => {
    assert.ok(requests.some((u) => u.endsWith('/js/trace/worker.js')), 'the worker script was loaded');
    assert.ok(requests.some((u) => u.endsWith('/pkg/tirtrace_bg.wasm')), 'the wasm was loaded');
    const away = requests.filter((u) => new URL(u).origin !== server.origin);
    assert.deepEqual(away, [], 'requests left the origin');
    assert.deepEqual(pageErrors, [], 'page errors');
    assert.deepEqual(consoleErrors, [], 'console errors');
  });
});
