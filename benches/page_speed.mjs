// Speed of tracing in the page: serves www/, opens www/bench.html in headless Chromium (Debian's,
// driven by playwright-core from tests/e2e) and prints its measurement as one JSON line: time to
// the first answer, rays/s with one worker and with one worker per core, the delivered share.
//
// Usage: node benches/page_speed.mjs [SCENARIO (path under www/)] [RAYS]
// Before: bash scripts/build.sh (www/pkg) and npm ci --prefix tests/e2e.

import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
const WWW = join(ROOT, 'www');
const CHROMIUM = process.env.CHROMIUM || '/usr/bin/chromium';
const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--no-first-run',
  '--disable-quic',
];
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

function freePort() {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.unref();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address();
      srv.close(() => resolve(port));
    });
  });
}

/** `python3 -m http.server` on a free port, once it answers. */
async function startServer() {
  const port = await freePort();
  const child = spawn('python3', ['-m', 'http.server', String(port), '--bind', '127.0.0.1', '--directory', WWW], { stdio: 'ignore' });
  const origin = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`the static server exited with ${child.exitCode}`);
    try {
      const res = await fetch(`${origin}/bench.html`, { signal: AbortSignal.timeout(1000) });
      await res.arrayBuffer();
      if (res.ok) return { child, origin };
    } catch {
      // not up yet
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  child.kill('SIGTERM');
  throw new Error('the static server did not answer within 15 s');
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
