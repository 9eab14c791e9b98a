// Speed of tracing in the page: serves www/, opens www/bench.html in headless Chromium (Debian's,
// driven by playwright-core from tests/e2e) and prints its measurement as one JSON line: time to
// the first answer, rays/s with one worker and with one worker per core, the delivered share.
//
// Usage: node benches/page_speed.mjs [SCENARIO (path under www/)] [RAYS]
// Before: bash scripts/build.sh (www/pkg) and npm ci --prefix tests/e2e.

import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import { CHROMIUM, CHROMIUM_ARGS, ROOT, WWW, startServer } from '../tests/e2e/harness.mjs';

const { chromium } = createRequire(join(ROOT, 'tests', 'e2e', 'package.json'))('playwright-core');

const [scenario = 'demos/bench_three_bends.json', raysArg] = process.argv.slice(2);
const rays = raysArg === undefined ? undefined : Number(raysArg);
if (rays !== undefined && (!Number.isSafeInteger(rays) || rays < 1)) {
  console.error(`page_speed: RAYS must be a whole number ≥ 1, got "${raysArg}"`);
  process.exit(2);
}
for (const [path, hint] of [[join(WWW, 'pkg', 'tirtrace.js'), 'run `bash scripts/build.sh`'], [CHROMIUM, 'set CHROMIUM']]) {
  if (!existsSync(path)) {
    console.error(`page_speed: ${path} is missing: ${hint}`);
    process.exit(2);
  }
}

const server = await startServer();
const profile = mkdtempSync(join(tmpdir(), 'tirtrace-page-speed-'));
let context;
try {
  context = await chromium.launchPersistentContext(profile, { executablePath: CHROMIUM, headless: true, args: CHROMIUM_ARGS });
  const page = context.pages()[0] ?? (await context.newPage());
  const problems = [];
  page.on('pageerror', (e) => problems.push(String(e)));
  page.on('console', (m) => m.type() === 'error' && problems.push(m.text()));
  await page.goto(`${server.origin}/bench.html`);
  await page.waitForSelector('body[data-state="ready"]', { timeout: 20_000 });
  const result = await page.evaluate((options) => window.tirtraceBench.measure(options), { scenario, rays });
  if (problems.length) throw new Error(`the page reported errors: ${problems.join('; ')}`);
  console.log(JSON.stringify({ runner: 'browser (Chromium, module workers)', ...result }));
} finally {
  await context?.close();
  server.child.kill('SIGTERM');
  rmSync(profile, { recursive: true, force: true });
}
