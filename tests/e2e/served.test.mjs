// The served page keeps to one build and to its Content-Security-Policy, in Debian's Chromium:
// - the server (scripts/serve.py) has the browser check every file (Cache-Control: no-cache);
// - every page (designer, quick look, speed check) and the single file opened from disk work
//   under their policies with no violation, and an inline script is refused;
// - the service worker keeps one build in a cache named after it; after a rebuild the open page
//   still gets its own build's files, is offered the new one, and switches to it whole; files of
//   two builds on the server are never kept;
// - WebAssembly of another build than the page's modules is refused with a message.
// Each test serves a copy of www/ (tests/e2e/out is git-ignored), so the real one is left alone.
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e. Run: node --test tests/e2e/served.test.mjs

import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { appendFileSync, cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';
import { pathToFileURL } from 'node:url';

import { chromium } from 'playwright-core';

import { firstTrace } from './design-helpers.mjs';
import {
  CHROMIUM, CHROMIUM_ARGS, OUT, ROOT, WWW, collectCspViolations, collectErrors, serviceWorkerControls, startServer, stopServer,
} from './harness.mjs';

/** Wait (up to 5 s) until a violation starting with `start` has been reported. */
async function reported(violations, start) {
  for (let i = 0; i < 250 && !violations.some((v) => v.startsWith(start)); i += 1) await new Promise((r) => setTimeout(r, 20));
  assert.ok(violations.some((v) => v.startsWith(start)), `no "${start}" violation reported: ${violations}`);
}

/** A copy of www/ to serve and change. */
function copyOfWww() {
  const dir = mkdtempSync(join(tmpdir(), 'tirtrace-served-'));
  cpSync(WWW, dir, { recursive: true });
  return dir;
}

/** Rewrite the copy's build files (js/build.js, precache.js) as scripts/build.sh does; its new id. */
function rebuild(dir) {
  const run = spawnSync('python3', [join(ROOT, 'scripts', 'write_build.py'), dir], { encoding: 'utf8' });
  assert.equal(run.status, 0, run.stderr);
  return buildIdOf(dir);
}

const buildIdOf = (dir) => readFileSync(join(dir, 'precache.js'), 'utf8').match(/self\.BUILD_ID = '([0-9a-f]+)'/)[1];

/** The page's own build (its js/build.js module), the service worker's caches, and a module's text as the page gets it. */
const pageView = (page) =>
  page.evaluate(async () => ({
    build: (await import('./js/build.js')).BUILD_ID,
    caches: await caches.keys(),
    dom: await (await fetch('js/dom.js')).text(),
  }));

describe('served pages: one build at a time, and a content security policy', { concurrency: false }, () => {
  let browser;
  const servers = [];
  const dirs = [];

  async function serve(dir) {
    const server = await startServer(dir);
    servers.push(server);
    return server;
  }

  /** A fresh browser context (its own storage and service workers) with a page watched for errors and violations. */
  async function freshPage(viewport = { width: 1280, height: 800 }) {
    const context = await browser.newContext({ viewport });
    const page = await context.newPage();
    const errors = [];
    const violations = [];
    collectErrors(page, errors);
    await collectCspViolations(page, violations);
    return { context, page, errors, violations };
  }

  before(async () => {
    assert.ok(existsSync(join(WWW, 'js', 'build.js')), 'www/js/build.js is missing: run `bash scripts/build.sh` first');
    mkdirSync(OUT, { recursive: true });
    browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  });

  after(async () => {
    await browser?.close();
    for (const s of servers) await stopServer(s.child);
    for (const d of dirs) rmSync(d, { recursive: true, force: true });
  });

  test('the server has the browser check every file with it (Cache-Control: no-cache)', async () => {
    const server = await serve(WWW);
    for (const file of ['', 'index.html', 'js/core.js', 'js/build.js', 'pkg/tirtrace.js', 'pkg/tirtrace_bg.wasm', 'precache.js', 'sw.js']) {
      const res = await fetch(`${server.origin}/${file}`);
      await res.arrayBuffer();
      assert.equal(res.status, 200, file);
      assert.equal(res.headers.get('cache-control'), 'no-cache', `${file || '/'}: Cache-Control`);
    }
  });

  test('every page works under its Content-Security-Policy, with no violation; an inline script is refused', async () => {
    const server = await serve(WWW);
    const pages = [
      ['index.html', async (page) => {
        await firstTrace(page);
        // Enter in a field does not send the form anywhere (the policy refuses form actions).
        await page.press('#f-trace-rays', 'Enter');
      }],
      ['quick.html', async (page) => {
        await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
        await page.waitForFunction(() => /\d/.test(document.querySelector('#fig-critical .value')?.textContent ?? ''));
        await page.press('#diameter', 'Enter');
      }],
      ['bench.html', async (page) => {
        await page.waitForSelector('body[data-state="ready"]', { timeout: 30_000 });
        await page.fill('#rays', '8192');
        await page.click('#run');
        await page.waitForSelector('body[data-state="done"]', { timeout: 120_000 });
      }],
    ];
    for (const [file, use] of pages) {
      const { context, page, errors, violations } = await freshPage();
      try {
        await page.goto(`${server.origin}/${file}`);
        const policy = await page.getAttribute('meta[http-equiv="Content-Security-Policy"]', 'content');
        assert.match(policy, /script-src 'self' 'wasm-unsafe-eval';/, `${file}: script-src`);
        assert.doesNotMatch(policy, /script-src [^;]*'unsafe-inline'|style-src [^;]*'unsafe-inline'/, `${file}: inline scripts or style sheets allowed`);
        await use(page);
        assert.equal(new URL(page.url()).pathname, `/${file}`, `${file}: the page went elsewhere`);
        assert.deepEqual(violations, [], `${file}: policy violations`);
        assert.deepEqual(errors, [], `${file}: console errors`);
        // An inline script (as an injected one would be) does not run, and is reported.
        const ran = await page.evaluate(() => {
          const s = document.createElement('script');
          s.textContent = 'window.injected = true;';
          document.body.append(s);
          return window.injected === true;
        });
        assert.equal(ran, false, `${file}: an inline script ran`);
        await reported(violations, 'script-src-elem inline');
      } finally {
        await context.close();
      }
    }
  });

  test('the single file works from disk under its own policy, with no violation', async () => {
    const { context, page, errors, violations } = await freshPage();
    try {
      await page.goto(pathToFileURL(join(ROOT, 'dist', 'tirtrace.html')).href);
      await firstTrace(page);
      assert.equal(await page.getAttribute('body', 'data-tracer'), 'workers', 'the trace did not run in workers');
      const policy = await page.getAttribute('meta[http-equiv="Content-Security-Policy"]', 'content');
      assert.match(policy, /^default-src 'none'; script-src 'sha256-[A-Za-z0-9+/]+=*' 'wasm-unsafe-eval'; /);
      assert.match(policy, /worker-src blob:/);
      await page.press('#f-trace-rays', 'Enter');
      assert.deepEqual(violations, []);
      assert.deepEqual(errors, []);
      const ran = await page.evaluate(() => {
        const s = document.createElement('script');
        s.textContent = 'window.injected = true;';
        document.body.append(s);
        return window.injected === true;
      });
      assert.equal(ran, false, 'an inline script ran in the single file');
      await reported(violations, 'script-src-elem inline');
    } finally {
      await context.close();
    }
  });

  test('the service worker keeps one build; an open page keeps its build until it switches whole', async () => {
    const dir = copyOfWww();
    dirs.push(dir);
    const first = buildIdOf(dir);
    const server = await serve(dir);
    const { context, page, errors, violations } = await freshPage();
    try {
      await page.goto(`${server.origin}/`);
      await firstTrace(page);
      assert.equal(await serviceWorkerControls(page), true, 'no service worker controls the page');
      let view = await pageView(page);
      assert.equal(view.build, first);
      assert.deepEqual(view.caches, [`tirtrace-${first}`], 'the cache is not named after the build');

      // A rebuild on the server: one module changes, and with it the build.
      appendFileSync(join(dir, 'js', 'dom.js'), '// rebuilt\n');
      const second = rebuild(dir);
      assert.notEqual(second, first);
      await page.reload();
      await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      view = await pageView(page);
      assert.equal(view.build, first, 'the reloaded page is not of the kept build');
      assert.ok(!view.dom.includes('// rebuilt'), 'the page was given a module of the new build');
      // The new build is kept beside the old one and offered; taking it reloads the page, whole.
      await page.waitForFunction(() => /newer version/.test(document.getElementById('toolbar-msg').textContent), null, { timeout: 30_000 });
      await page.screenshot({ path: join(OUT, 'served-newer-version-1280x800.png') });
      await page.setViewportSize({ width: 820, height: 1180 });
      await page.screenshot({ path: join(OUT, 'served-newer-version-820x1180.png') });
      await page.setViewportSize({ width: 1280, height: 800 });
      await Promise.all([page.waitForEvent('load', { timeout: 30_000 }), page.click('#toolbar-msg button')]);
      await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      view = await pageView(page);
      assert.equal(view.build, second);
      assert.ok(view.dom.includes('// rebuilt'), 'the page is not of the new build');
      assert.deepEqual(view.caches, [`tirtrace-${second}`], 'the old build was not let go');

      // The quick look is offered a newer build in its status line, and switches to it whole.
      await page.goto(`${server.origin}/quick.html`);
      await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      appendFileSync(join(dir, 'js', 'dom.js'), '// rebuilt again\n');
      const third = rebuild(dir);
      await page.reload();
      await page.waitForSelector('#status button', { timeout: 30_000 });
      assert.match(await page.locator('#status').innerText(), /A newer version is ready/);
      assert.equal((await pageView(page)).build, second);
      for (const [width, height] of [[1280, 800], [820, 1180]]) {
        await page.setViewportSize({ width, height });
        await page.screenshot({ path: join(OUT, `served-quick-newer-version-${width}x${height}.png`) });
      }
      await Promise.all([page.waitForEvent('load', { timeout: 30_000 }), page.click('#status button')]);
      await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      view = await pageView(page);
      assert.equal(view.build, third);
      assert.ok(view.dom.includes('// rebuilt again'));

      // Files of two builds on the server (a rebuild still being written): never kept.
      appendFileSync(join(dir, 'js', 'dom.js'), '// rebuilt once more\n');
      assert.notEqual(rebuild(dir), third);
      appendFileSync(join(dir, 'js', 'errors.js'), '// written after the list\n');
      const state = await page.evaluate(async () => {
        const reg = await navigator.serviceWorker.getRegistration();
        const timeout = (ms, what) => new Promise((resolve) => setTimeout(() => resolve(what), ms));
        const found = new Promise((resolve) => reg.addEventListener('updatefound', () => resolve(reg.installing), { once: true }));
        const updated = await reg.update().then(() => 'updated', (e) => `update failed: ${e.message}`);
        const worker = await Promise.race([found, timeout(20_000, null)]);
        if (!worker) return `no new service worker (${updated})`;
        const settled = () => ['installed', 'activated', 'redundant'].includes(worker.state);
        if (!settled()) await Promise.race([new Promise((resolve) => worker.addEventListener('statechange', () => settled() && resolve())), timeout(20_000)]);
        return worker.state;
      });
      assert.equal(state, 'redundant', 'a build with a file of another one was installed');
      view = await pageView(page);
      assert.deepEqual(view.caches, [`tirtrace-${third}`]);
      assert.deepEqual(violations, []);
      assert.deepEqual(errors, []);
    } finally {
      await context.close();
    }
  });

  test('WebAssembly of another build than the modules is refused with a message', async () => {
    const dir = copyOfWww();
    dirs.push(dir);
    // Another build's WebAssembly that would still load: the same module with a custom section
    // (id 0, 3 bytes: the name "x" and one byte) added at its end.
    appendFileSync(join(dir, 'pkg', 'tirtrace_bg.wasm'), Buffer.from([0x00, 0x03, 0x01, 0x78, 0x79]));
    const server = await serve(dir);
    const { context, page } = await freshPage();
    try {
      await page.goto(`${server.origin}/`);
      await page.waitForFunction(() => document.getElementById('status').dataset.kind === 'error', null, { timeout: 30_000 });
      assert.match(
        await page.locator('#status').innerText(),
        /could not start: its WebAssembly is not the one of this page's build \([0-9a-f]{16}\): the page's files come from two versions\. Reload the page/,
      );
    } finally {
      await context.close();
    }
  });
});
