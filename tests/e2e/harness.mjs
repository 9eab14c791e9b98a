// Shared pieces of the browser tests: paths, a static server for www/ on a free port, and
// Chromium's launch settings (Debian's chromium, no network beyond the page's origin).

import { spawn, spawnSync } from 'node:child_process';
import { createServer } from 'node:net';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const HERE = dirname(fileURLToPath(import.meta.url));
export const ROOT = join(HERE, '..', '..');
export const WWW = join(ROOT, 'www');
export const OUT = join(HERE, 'out');
export const CLI = join(ROOT, 'target', 'debug', 'tirtrace');
export const CHROMIUM = process.env.CHROMIUM || '/usr/bin/chromium';

export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export function freePort() {
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

export async function reachable(url) {
  try {
    const res = await fetch(url, { signal: AbortSignal.timeout(1000) });
    await res.arrayBuffer();
    return res.ok;
  } catch {
    return false;
  }
}

/**
 * Start the page's server (scripts/serve.py: a static server sending `Cache-Control: no-cache`)
 * for `folder` (default www/) on a free port and wait until it answers.
 */
export async function startServer(folder = WWW) {
  const port = await freePort();
  const child = spawn('python3', [join(ROOT, 'scripts', 'serve.py'), String(port), folder], {
    stdio: 'ignore',
  });
  const origin = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`the static server exited with ${child.exitCode}`);
    if (await reachable(`${origin}/index.html`)) return { child, origin };
    await new Promise((r) => setTimeout(r, 100));
  }
  child.kill('SIGTERM');
  throw new Error('the static server did not answer within 15 s');
}

export function stopServer(child) {
  return new Promise((resolve) => {
    if (!child || child.exitCode !== null || child.signalCode !== null) return resolve();
    child.once('exit', () => resolve());
    child.kill('SIGTERM');
  });
}

/** Run the native CLI; returns stdout, throws with stderr on failure. */
export function cli(args, input) {
  const run = spawnSync(CLI, args, { input, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (run.status !== 0) throw new Error(`tirtrace ${args.join(' ')} failed: ${run.stderr}`);
  return run.stdout;
}

/** Share of a canvas's pixels that are not (near) white: 0 for a blank canvas. */
export async function inkShare(page, canvasId) {
  return page.evaluate((canvasId) => {
    const canvas = document.getElementById(canvasId);
    const { data } = canvas.getContext('2d').getImageData(0, 0, canvas.width, canvas.height);
    let ink = 0;
    for (let i = 0; i < data.length; i += 4) if (data[i] + data[i + 1] + data[i + 2] < 3 * 235) ink += 1;
    return ink / (data.length / 4);
  }, canvasId);
}

/** Whether a service worker controls the page within `ms` (it registered and claimed it). */
export function serviceWorkerControls(page, ms = 15_000) {
  return page.evaluate(async (ms) => {
    const sw = navigator.serviceWorker;
    const timeout = new Promise((resolve) => setTimeout(() => resolve(false), ms));
    const ready = (async () => {
      await sw.ready;
      if (!sw.controller) await new Promise((resolve) => sw.addEventListener('controllerchange', resolve, { once: true }));
      return true;
    })();
    return Promise.race([ready, timeout]);
  }, ms);
}

/**
 * Collect a page's and its workers' console errors and uncaught exceptions into `list`. Chromium
 * reports every Content-Security-Policy violation as a console error, so a test asserting an
 * empty list fails on one.
 */
export function collectErrors(page, list) {
  const onConsole = (m) => {
    if (m.type() === 'error') list.push(m.text());
  };
  page.on('console', onConsole);
  page.on('worker', (w) => w.on('console', onConsole));
  page.on('pageerror', (e) => list.push(String(e)));
}

/**
 * Record the Content-Security-Policy violations a page reports (its `securitypolicyviolation`
 * events) in `list`, as "directive blocked at source:line" (blocked: a URL, or `inline`); await it before the page loads.
 */
export async function collectCspViolations(page, list) {
  await page.exposeBinding('tirtraceCspViolation', (_source, text) => list.push(text));
  await page.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (e) => {
      window.tirtraceCspViolation(`${e.effectiveDirective} ${e.blockedURI} at ${e.sourceFile}:${e.lineNumber}`);
    });
  });
}
