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

import { initSync, Tracer } from '../../www/pkg/tirtrace.js';
import { variantsOf } from './variants.mjs';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const CLI = join(ROOT, 'target', 'debug', 'tirtrace');
const SCENARIOS = join(ROOT, 'examples', 'scenarios');

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
    for (const key of ['delivered', 'budget', 'budget_sum', 'segments', 'contacts', 'receiver',
      'absolute', 'wall_interactions', 'exit_map', 'intensity', 'angular_map', 'leak_along_route']) {
      assert.deepStrictEqual(wasm[key] ?? null, native[key] ?? null, `${key} differs`);
    }
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
