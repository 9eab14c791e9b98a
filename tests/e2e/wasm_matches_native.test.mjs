// The tracer compiled to wasm gives bit-identical results to the native command line for the
// same scenario and seed (both use libm for transcendental functions, and batches merge in
// order). Runs the wasm module in Node (V8, the engine of Chromium) and the native CLI.
//
// Before: cargo build (target/debug/tirtrace) and bash scripts/build.sh (www/pkg).

import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { readdirSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { test } from 'node:test';
import { fileURLToPath } from 'node:url';

import {
  FindValueTracer, initSync, StudyFinder, StudyTracer, sweep_report_csv, ToleranceTracer, tolerance_report_csv,
  Tracer,
} from '../../www/pkg/tirtrace.js';
import { variantsOf } from './variants.mjs';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const CLI = join(ROOT, 'target', 'debug', 'tirtrace');
const SCENARIOS = join(ROOT, 'examples', 'scenarios');
const STUDIES = join(ROOT, 'examples', 'studies');

initSync({ module: readFileSync(join(ROOT, 'www', 'pkg', 'tirtrace_bg.wasm')) });

const examples = readdirSync(SCENARIOS)
  .filter((f) => f.endsWith('.json'))
  .map((f) => [f, JSON.parse(readFileSync(join(SCENARIOS, f), 'utf8'))]);

const base = JSON.parse(readFileSync(join(SCENARIOS, 'thermostat_status_led.json'), 'utf8'));
const variants = variantsOf(base);

for (const [name, original] of [...examples, ...variants]) {
  test(`wasm and native agree bit for bit on ${name}`, () => {
    const scenario = structuredClone(original);
    scenario.trace = { ...(scenario.trace || {}), rays: 3 * 4096 + 17, seed: 99 };
    const text = JSON.stringify(scenario);
    const cli = spawnSync(CLI, ['trace', '-', '--threads', '2'], { input: text, encoding: 'utf8' });
    assert.equal(cli.status, 0, cli.stderr);
    const native = JSON.parse(cli.stdout);
    const tracer = new Tracer(text);
    const wasm = tracer.report(0, tracer.batch_count(), 0);
    tracer.free();
    assert.ok(native.delivered.share > 0, 'some light is delivered');
    // Every figure, compared as numbers (JSON printing is shortest round-trip on both sides).
    for (const key of ['delivered', 'budget', 'budget_sum', 'exit_turn_back', 'segments', 'contacts', 'receiver',
      'absolute', 'wall_interactions', 'exit_map', 'receiver_map', 'intensity', 'angular_map', 'leak_along_route', 'coating_along_route', 'exit_figures', 'far_field']) {
      if (key === 'far_field') assert.equal(native.far_field?.cells, 45, 'the far-field map is in the report');
      assert.deepStrictEqual(wasm[key] ?? null, native[key] ?? null, `${key} differs`);
    }
    // A design with a receiver has the detector's uniformity among its exit figures.
    assert.equal(Boolean(native.exit_figures.receiver_uniformity), Boolean(native.receiver), 'detector uniformity');
  });
}

test('batches traced apart (as by several workers) and merged in order give the same report', () => {
  const scenario = structuredClone(base);
  scenario.trace = { rays: 5 * 4096, seed: 5 };
  const tracer = new Tracer(JSON.stringify(scenario));
  const whole = tracer.report(0, 5, 0);
  // Three "workers" take consecutive ranges; their batch lists are joined in order.
  const parts = [tracer.batches(0, 2, 0), tracer.batches(2, 1, 0), tracer.batches(3, 2, 0)];
  const merged = tracer.report_merged(parts.flat());
  assert.deepStrictEqual(merged, whole);
  assert.throws(() => tracer.report(5, 1, 0), /first must be a whole batch index/);
  assert.throws(() => tracer.report_merged([]), /at least one/);
  tracer.free();
});

// A sweep: the example study at few rays, with a refused first value (below the smallest bend a
// 3 mm guide may have), so the reference is the second point.
function smallStudy() {
  const study = JSON.parse(readFileSync(join(STUDIES, 'thermostat_first_bend.json'), 'utf8'));
  study.scenario.trace = { ...study.scenario.trace, rays: 2 * 4096 + 33, seed: 11 };
  study.vary = { field: 'route[1].bend.radius_mm', values: [1, 4.5, 6, 9] };
  return JSON.stringify(study);
}

test('a sweep traced in wasm gives tirtrace study\'s report and CSV bit for bit', () => {
  const text = smallStudy();
  const run = (extra) => spawnSync(CLI, ['study', '-', '--threads', '2', ...extra],
    { input: text, encoding: 'utf8' });
  const cli = run([]);
  assert.equal(cli.status, 0, cli.stderr);
  const native = JSON.parse(cli.stdout);
  const tracer = new StudyTracer(text);
  const count = tracer.batch_count();
  assert.equal(count, 3);
  const whole = tracer.report(0, count);
  assert.deepStrictEqual(whole, native);
  assert.ok(native.points[0].problems.length > 0 && native.reference === 1, 'first point refused');
  // Batches traced apart (as by several workers), added out of order, merged in batch order.
  const parts = [tracer.batches(2, 1), tracer.batches(0, 2)];
  tracer.merger_add(2, parts[0][0]);
  assert.equal(tracer.merger_report(3), null, 'batches 0 and 1 are still on their way');
  tracer.merger_add(1, parts[1][1]);
  tracer.merger_add(0, parts[1][0]);
  const merged = tracer.merger_report(3);
  assert.deepStrictEqual(merged, native);
  const csv = run(['--csv']);
  assert.equal(csv.status, 0, csv.stderr);
  assert.equal(sweep_report_csv(merged), `${csv.stdout}\n`.replace(/\n\n$/, '\n'));
  // A batch of another study is refused; so is a broken one.
  const other = JSON.parse(text);
  other.vary.values = [6, 9];
  const otherTracer = new StudyTracer(JSON.stringify(other));
  assert.throws(() => tracer.merger_add(0, otherTracer.batches(0, 1)[0]), /different study/);
  assert.throws(() => tracer.merger_add(0, { batches: 3 }), /could not be read/);
  assert.throws(() => tracer.batches(3, 1), /first must be a whole batch index/);
  otherTracer.free();
  tracer.free();
});

test('a study that cannot be traced is refused with its problems, each by field', () => {
  const study = JSON.parse(smallStudy());
  study.vary = { field: 'route[1].bend.radius_mm', from: 4, to: 9, steps: 0.5 };
  try {
    new StudyTracer(JSON.stringify(study));
    assert.fail('the study was accepted');
  } catch (e) {
    assert.ok(e instanceof Error);
    assert.deepStrictEqual(e.problems.map((p) => p.field), ['vary.steps']);
    assert.match(e.message, /vary\.steps must be a whole number/);
  }
});

// A tolerance study: the example at few rays and variants, with a gap spread wide enough that
// some variants (and the one-at-a-time minus point) are refused.
function smallTolerances(variants = 8) {
  const study = JSON.parse(readFileSync(join(STUDIES, 'bike_light_tolerances.json'), 'utf8'));
  study.scenario.trace = { ...study.scenario.trace, rays: 2 * 4096 + 21, seed: 3 };
  study.tolerances = {
    spreads: [{ field: 'source.gap_mm', sigma: 0.3 },
      { field: 'route[2].bend.radius_mm', half_width: 0.2 }],
    variants,
  };
  return JSON.stringify(study);
}

test('a tolerance study traced in wasm gives tirtrace study\'s report and CSV bit for bit', () => {
  const text = smallTolerances();
  const run = (extra) => spawnSync(CLI, ['study', '-', '--threads', '2', ...extra],
    { input: text, encoding: 'utf8' });
  const cli = run([]);
  assert.equal(cli.status, 0, cli.stderr);
  const native = JSON.parse(cli.stdout);
  const tracer = new ToleranceTracer(text);
  const count = tracer.batch_count();
  assert.equal(count, 3);
  assert.deepStrictEqual(tracer.report(0, count), native);
  assert.ok(native.variants_refused > 0 && native.variants_traced > 0, 'some refused, some traced');
  // Batches traced apart (as by several workers), added out of order, merged in batch order.
  const parts = [tracer.batches(2, 1), tracer.batches(0, 2)];
  tracer.merger_add(2, parts[0][0]);
  assert.equal(tracer.merger_report(3), null, 'batches 0 and 1 are still on their way');
  tracer.merger_add(1, parts[1][1]);
  tracer.merger_add(0, parts[1][0]);
  const merged = tracer.merger_report(3);
  assert.deepStrictEqual(merged, native);
  const csv = run(['--csv']);
  assert.equal(csv.status, 0, csv.stderr);
  assert.equal(tolerance_report_csv(merged), `${csv.stdout}\n`.replace(/\n\n$/, '\n'));
  // A batch of another study is refused; so is a broken one.
  const other = new ToleranceTracer(smallTolerances(7));
  assert.throws(() => tracer.merger_add(0, other.batches(0, 1)[0]), /different study/);
  assert.throws(() => tracer.merger_add(0, { nominal: 3 }), /could not be read/);
  assert.throws(() => tracer.batches(3, 1), /first must be a whole batch index/);
  other.free();
  tracer.free();
});

test('a tolerance study that cannot be traced is refused with its problems, each by field', () => {
  const study = JSON.parse(smallTolerances());
  study.tolerances.spreads[1].half_width = -1;
  try {
    new ToleranceTracer(JSON.stringify(study));
    assert.fail('the study was accepted');
  } catch (e) {
    assert.ok(e instanceof Error);
    assert.deepStrictEqual(e.problems.map((p) => p.field), ['tolerances.spreads[1].half_width']);
    assert.match(e.message, /tolerances\.spreads\[1\]\.half_width must be/);
  }
});

// A search step by step, as the page runs it: each value's batches traced in two pieces (as by
// two workers), recorded in batch order; a range starting below the smallest bend a 3 mm guide
// may have, so some values are refused.
test('a search run step by step in wasm gives tirtrace study\'s report and CSV bit for bit', () => {
  const study = JSON.parse(readFileSync(join(STUDIES, 'thermostat_smallest_bend.json'), 'utf8'));
  study.scenario.trace = { ...study.scenario.trace, rays: 2 * 4096 + 33, seed: 11 };
  study.find = { ...study.find, from: 1, to: 30 };
  const text = JSON.stringify(study);
  const run = (extra) => spawnSync(CLI, ['study', '-', '--threads', '2', ...extra],
    { input: text, encoding: 'utf8' });
  const cli = run([]);
  assert.equal(cli.status, 0, cli.stderr);
  const native = JSON.parse(cli.stdout);
  const finder = new StudyFinder(text);
  const count = finder.batch_count();
  assert.equal(count, 3);
  assert.equal(finder.report(), null, 'not done before it starts');
  let asked = 0;
  for (let x = finder.next_value(); x !== undefined && x !== null; x = finder.next_value()) {
    asked += 1;
    const results = [...finder.trace_batches(x, 0, 2), ...finder.trace_batches(x, 2, 1)];
    assert.throws(() => finder.record(x + 1, results), /asked for/);
    finder.record(x, results);
  }
  const report = finder.report();
  assert.deepStrictEqual(report, native);
  assert.ok(native.evaluations.some((e) => e.problems), 'some values refused');
  assert.equal(asked, native.evaluations.filter((e) => !e.problems).length, 'each traced once');
  const csv = run(['--csv']);
  assert.equal(csv.status, 0, csv.stderr);
  assert.equal(finder.csv(), `${csv.stdout}\n`.replace(/\n\n$/, '\n'));
  assert.throws(() => finder.trace_batches(1, 0, 1), /route\[1\]\.bend\.radius_mm/);
  assert.throws(() => finder.trace_batches(9, 3, 1), /first must be a whole batch index/);
  finder.free();
  // A range inside the allowed radii: the scan and the bisections, the same way.
  study.find.from = 3;
  const text2 = JSON.stringify(study);
  const native2 = JSON.parse(spawnSync(CLI, ['study', '-'], { input: text2, encoding: 'utf8' }).stdout);
  const finder2 = new StudyFinder(text2);
  for (let x = finder2.next_value(); x !== undefined && x !== null; x = finder2.next_value()) {
    finder2.record(x, finder2.trace_batches(x, 0, finder2.batch_count()));
  }
  assert.deepStrictEqual(finder2.report(), native2);
  assert.equal(native2.verdict, 'found');
  assert.ok(native2.evaluations.length > 9, 'the scan and the bisections');
  finder2.free();
  study.find.to = 0.5;
  try {
    new StudyFinder(JSON.stringify(study));
    assert.fail('the search was accepted');
  } catch (e) {
    assert.deepStrictEqual(e.problems.map((p) => p.field), ['find.to']);
  }
});

// A search as the page's worker pool runs it: each value one job (FindValueTracer, as in every
// worker), its batches handed to the merger out of order (as from several workers), the merged
// batches recorded with StudyFinder.record_merged: tirtrace study's report bit for bit.
test('a search traced value by value in FindValueTracer and merged out of order gives tirtrace study\'s report', () => {
  const study = JSON.parse(readFileSync(join(STUDIES, 'thermostat_smallest_bend.json'), 'utf8'));
  study.scenario.trace = { ...study.scenario.trace, rays: 3 * 4096 + 21, seed: 5 };
  study.find = { ...study.find, from: 1, to: 30 };
  const text = JSON.stringify(study);
  const cli = spawnSync(CLI, ['study', '-', '--threads', '2'], { input: text, encoding: 'utf8' });
  assert.equal(cli.status, 0, cli.stderr);
  const native = JSON.parse(cli.stdout);
  const finder = new StudyFinder(text);
  let asked = 0;
  for (let x = finder.next_value(); x !== undefined && x !== null; x = finder.next_value()) {
    asked += 1;
    const tracer = new FindValueTracer(text, x);
    const merger = new FindValueTracer(text, x);
    const count = tracer.batch_count();
    assert.equal(count, 4);
    const batches = [...tracer.batches(0, 2), ...tracer.batches(2, 2)];
    assert.equal(batches.length, 4, 'one result per batch');
    merger.merger_add(3, batches[3]);
    merger.merger_add(1, batches[1]);
    assert.equal(merger.merger_report(count), null, 'batches 0 and 2 are still on their way');
    merger.merger_add(2, batches[2]);
    merger.merger_add(0, batches[0]);
    const merged = merger.merger_report(count);
    assert.equal(merged.delivered.n, 3 * 4096 + 21, 'every ray of the value');
    assert.throws(() => finder.record_merged(x + 1, merged), /asked for/);
    finder.record_merged(x, merged);
    tracer.free();
    merger.free();
  }
  assert.deepStrictEqual(finder.report(), native);
  assert.ok(native.evaluations.some((e) => e.problems), 'some values refused');
  assert.equal(asked, native.evaluations.filter((e) => !e.problems).length, 'each traced once');
  finder.free();

  // A batch of another value or another study is refused; a partial merge is not recorded.
  const at5 = new FindValueTracer(text, 5);
  const at6 = new FindValueTracer(text, 6);
  assert.throws(() => at5.merger_add(0, at6.batches(0, 1)[0]), /different study or value/);
  const other = JSON.parse(text);
  other.scenario.trace.seed = 6;
  const otherAt5 = new FindValueTracer(JSON.stringify(other), 5);
  assert.throws(() => at5.merger_add(0, otherAt5.batches(0, 1)[0]), /different study or value/);
  assert.throws(() => at5.merger_add(0, { value: 5 }), /could not be read/);
  at5.merger_add(0, at5.batches(0, 1)[0]);
  const part = at5.merger_report(1);
  const finder2 = new StudyFinder(text);
  const x = finder2.next_value();
  assert.throws(() => finder2.record_merged(x, part), /all 12309 rays/);
  for (const t of [at5, at6, otherAt5, finder2]) t.free();

  // The scenario's problems at a value, by field, as the other tracers throw them.
  try {
    new FindValueTracer(text, 1);
    assert.fail('a radius below half the diameter was accepted');
  } catch (e) {
    assert.ok(e.problems.some((p) => p.field === 'scenario.route[1].bend.radius_mm'), JSON.stringify(e.problems));
  }
});
