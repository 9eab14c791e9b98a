// Speed of a sweep in the page: serves www/, opens www/bench.html in headless Chromium (Debian's,
// driven by playwright-core from tests/e2e) and prints one JSON line: the time of a sweep with one
// worker per core against one trace of the same total rays on the same pool size, both warmed,
// end to end (document in, report out), and their ratio.
//
// Usage: node benches/page_sweep_speed.mjs STUDY.json RAYS_PER_POINT
// Before: bash scripts/build.sh (www/pkg) and npm ci --prefix tests/e2e.

import { readFileSync } from 'node:fs';

import { runInBenchPage } from './bench-page.mjs';

const [studyPath, raysArg] = process.argv.slice(2);
const rays = Number(raysArg);
if (!studyPath || !Number.isSafeInteger(rays) || rays < 1) {
  console.error('usage: node benches/page_sweep_speed.mjs STUDY.json RAYS_PER_POINT (a whole number ≥ 1)');
  process.exit(2);
}
const study = JSON.parse(readFileSync(studyPath, 'utf8'));
await runInBenchPage('page_sweep_speed', 'measureSweep', { study, rays });
