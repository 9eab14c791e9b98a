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

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const CLI = join(ROOT, 'target', 'debug', 'tirtrace');
const SCENARIOS = join(ROOT, 'examples', 'scenarios');

initSync({ module: readFileSync(join(ROOT, 'www', 'pkg', 'tirtrace_bg.wasm')) });

for (const file of readdirSync(SCENARIOS).filter((f) => f.endsWith('.json'))) {
  test(`wasm and native agree bit for bit on ${file}`, () => {
    const scenario = JSON.parse(readFileSync(join(SCENARIOS, file), 'utf8'));
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
      'wall_interactions', 'exit_map', 'intensity', 'leak_along_route']) {
      assert.deepStrictEqual(wasm[key] ?? null, native[key] ?? null, `${key} differs`);
    }
  });
}
