// The speed page (www/bench.html) in headless Chromium (Debian's, driven by playwright-core from
// tests/e2e), for the page benchmarks: serve www/, open the page, run one measurement function of
// `window.tirtraceBench` with its options, print the result as one JSON line, close everything.
// Before: bash scripts/build.sh (www/pkg) and npm ci --prefix tests/e2e.

import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import { CHROMIUM, CHROMIUM_ARGS, ROOT, WWW, startServer } from '../tests/e2e/harness.mjs';

const { chromium } = createRequire(join(ROOT, 'tests', 'e2e', 'package.json'))('playwright-core');

/** Run `window.tirtraceBench[measure](options)` in the speed page; `who` names the caller in messages. */
export async function runInBenchPage(who, measure, options) {
  for (const [path, hint] of [[join(WWW, 'pkg', 'tirtrace.js'), 'run `bash scripts/build.sh`'], [CHROMIUM, 'set CHROMIUM']]) {
    if (!existsSync(path)) {
      console.error(`${who}: ${path} is missing: ${hint}`);
      process.exit(2);
    }
  }
  const server = await startServer();
  const profile = mkdtempSync(join(tmpdir(), `tirtrace-${who}-`));
  let context;
  try {
    context = await chromium.launchPersistentContext(profile, { executablePath: CHROMIUM, headless: true, args: CHROMIUM_ARGS });
    const page = context.pages()[0] ?? (await context.newPage());
    const problems = [];
    page.on('pageerror', (e) => problems.push(String(e)));
    page.on('console', (m) => m.type() === 'error' && problems.push(m.text()));
    await page.goto(`${server.origin}/bench.html`);
    await page.waitForSelector('body[data-state="ready"]', { timeout: 20_000 });
    const result = await page.evaluate(([name, opts]) => window.tirtraceBench[name](opts), [measure, options]);
    if (problems.length) throw new Error(`the page reported errors: ${problems.join('; ')}`);
    console.log(JSON.stringify({ runner: 'browser (Chromium, module workers)', ...result }));
  } finally {
    await context?.close();
    server.child.kill('SIGTERM');
    rmSync(profile, { recursive: true, force: true });
  }
}
