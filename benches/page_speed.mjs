// Speed of tracing in the page: serves www/, opens www/bench.html in headless Chromium (Debian's,
// driven by playwright-core from tests/e2e) and prints its measurement as one JSON line: time to
// the first answer, rays/s with one worker and with one worker per core, the delivered share.
//
// Usage: node benches/page_speed.mjs [SCENARIO (path under www/)] [RAYS]
// Before: bash scripts/build.sh (www/pkg) and npm ci --prefix tests/e2e.

import { runInBenchPage } from './bench-page.mjs';

const [scenario = 'demos/bench_three_bends.json', raysArg] = process.argv.slice(2);
const rays = raysArg === undefined ? undefined : Number(raysArg);
if (rays !== undefined && (!Number.isSafeInteger(rays) || rays < 1)) {
  console.error(`page_speed: RAYS must be a whole number ≥ 1, got "${raysArg}"`);
  process.exit(2);
}
await runInBenchPage('page_speed', 'measure', { scenario, rays });
