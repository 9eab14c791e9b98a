// Speed of a sweep in the page: serves www/, opens www/bench.html in headless Chromium (Debian's,
// driven by playwright-core from tests/e2e) and prints one JSON line: the time of a sweep with one
// worker per core against one trace of the same total rays on the same pool size, both warmed,
// end to end (document in, report out), and their ratio.
//
// Usage: node benches/page_sweep_speed.mjs STUDY.json RAYS_PER_POINT
// Before: bash scripts/build.sh (www/pkg) and npm ci --prefix tests/e2e.

import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import { CHROMIUM, CHROMIUM_ARGS, ROOT, WWW, startServer } from '../tests/e2e/harness.mjs';

const { chromium } = createRequire(join(ROOT, 'tests', 'e2e', 'package.json'))('playwright-core');

const [studyPath, raysArg] = process.argv.slice(2);
const rays = Number(raysArg);
if (!studyPath || !Number.isSafeInteger(rays) || rays < 1) {
  console.error('usage: node benches/page_sweep_speed.mjs STUDY.json RAYS_PER_POINT (a whole number ≥ 1)');
  process.exit(2);
}
for (const [path, hint] of [[join(WWW, 'pkg', 'tirtrace.js'), 'run `bash scripts/build.sh`'], [CHROMIUM, 'set CHROMIUM']]) {
  if (!existsSync(path)) {
    console.error(`page_sweep_speed: ${path} is missing: ${hint}`);
    process.exit(2);
  }
}
const study = JSON.parse(readFileSync(studyPath, 'utf8'));

const server = await startServer();
const profile = mkdtempSync(join(tmpdir(), 'tirtrace-page-sweep-'));
let context;
try {
  context = await chromium.launchPersistentContext(profile, { executablePath: CHROMIUM, headless: true, args: CHROMIUM_ARGS });
  const page = context.pages()[0] ?? (await context.newPage());
  const problems = [];
  page.on('pageerror', (e) => problems.push(String(e)));
  page.on('console', (m) => m.type() === 'error' && problems.push(m.text()));
  await page.goto(`${server.origin}/bench.html`);
  await page.waitForSelector('body[data-state="ready"]', { timeout: 20_000 });
  const result = await page.evaluate((options) => window.tirtraceBench.measureSweep(options), { study, rays });
  if (problems.length) throw new Error(`the page reported errors: ${problems.join('; ')}`);
  console.log(JSON.stringify({ runner: 'browser (Chromium, module workers)', ...result }));
} finally {
  await context?.close();
  server.child.kill('SIGTERM');
  rmSync(profile, { recursive: true, force: true });
}
