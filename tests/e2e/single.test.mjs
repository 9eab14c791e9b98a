// End-to-end test of the single-file page (dist/tirtrace.html, made by scripts/build_single.py)
// opened from disk as file://…, with no server running, in Debian's Chromium (fresh profile):
// it loads, traces in Web Workers, and the delivered share equals the native CLI's for the page's
// scenario; the examples come from inside the file; with workers refused it traces on the page
// itself (same answer, Stop works); nothing is requested but the file itself and blob:/data: URLs,
// and nothing goes to the console. Screenshot: tests/e2e/out/single-file.png (git-ignored).
//
// Before: cargo build; bash scripts/build.sh (it writes dist/); npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/single.test.mjs

import assert from 'node:assert/strict';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';
import { pathToFileURL } from 'node:url';

import { chromium } from 'playwright-core';

import { answer, assertMatchesCli, budgetRows, cliBudgetWords, firstTrace, pageScenario, tracedAfter } from './design-helpers.mjs';
import { CHROMIUM, CHROMIUM_ARGS, CLI, OUT, ROOT, WWW, collectErrors } from './harness.mjs';

const SINGLE = join(ROOT, 'dist', 'tirtrace.html');
const SINGLE_URL = pathToFileURL(SINGLE).href;
describe('the single-file page opened from disk', { concurrency: false }, () => {
  let profile;
  let context;
  let page;
  const requests = [];
  const consoleErrors = [];

  const watch = (p) => collectErrors(p, consoleErrors);

  before(async () => {
    assert.ok(existsSync(SINGLE), 'dist/tirtrace.html is missing: run `bash scripts/build.sh` first');
    assert.ok(existsSync(CLI), 'target/debug/tirtrace is missing: run `cargo build` first');
    mkdirSync(OUT, { recursive: true });
    profile = mkdtempSync(join(tmpdir(), 'tirtrace-single-profile-'));
    context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      args: CHROMIUM_ARGS,
      viewport: { width: 1280, height: 800 },
    });
    context.on('request', (r) => requests.push(r.url()));
    page = context.pages()[0] ?? (await context.newPage());
    watch(page);
    await page.goto(SINGLE_URL);
  });

  after(async () => {
    await context?.close();
    if (profile) rmSync(profile, { recursive: true, force: true });
  });

  test('loads, traces in Web Workers, and gives the CLI\'s answer', async () => {
    await firstTrace(page);
    assert.equal(new URL(page.url()).protocol, 'file:');
    assert.equal(await page.getAttribute('body', 'data-tracer'), 'workers', 'the trace did not run in workers');
    assert.ok((await page.evaluate(() => performance.getEntriesByType('resource').length)) === 0, 'the page fetched resources');
    const a = await answer(page);
    assert.ok(a.share > 0 && a.share < 1, `delivered ${a.share}`);
    await assertMatchesCli(page, 'starting design');
    assert.match(await page.locator('#status').innerText(), /Traced/);
  });

  test('the examples are inside the file, and one traces to the CLI\'s answer', async () => {
    const listed = JSON.parse(readFileSync(join(WWW, 'demos', 'index.json'), 'utf8'));
    const offered = await page.$$eval('#demo option', (os) => os.filter((o) => o.value).map((o) => ({ file: o.value, name: o.textContent })));
    assert.deepEqual(offered, listed);
    await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
    const expected = JSON.parse(readFileSync(join(WWW, 'demos', 'thermostat_status_led.json'), 'utf8'));
    assert.equal((await pageScenario(page)).name, expected.name);
    assert.match(await page.locator('#toolbar-msg').innerText(), /Opened the example/);
    await tracedAfter(page, () => page.fill('#f-trace-rays', '40000'));
    await assertMatchesCli(page, 'example');
    for (const id of ['route-view', 'exit-map', 'intensity']) {
      const ink = await page.evaluate((id) => {
        const c = document.getElementById(id);
        const { data } = c.getContext('2d').getImageData(0, 0, c.width, c.height);
        let n = 0;
        for (let i = 0; i < data.length; i += 4) if (data[i] + data[i + 1] + data[i + 2] < 3 * 235) n += 1;
        return n / (data.length / 4);
      }, id);
      assert.ok(ink > 0.01, `${id} is blank`);
    }
    await page.screenshot({ path: join(OUT, 'single-file.png'), fullPage: true });
  });

  test('from the file, where a share link cannot travel, the design\'s text is offered instead', async () => {
    assert.equal(await page.locator('#share').innerText(), 'Copy design text');
    await page.click('#share');
    await page.waitForFunction(() => /design text/i.test(document.getElementById('toolbar-msg').textContent));
    const msg = await page.locator('#toolbar-msg').innerText();
    // Copied (with “Paste a design…” named), or refused with the file offered: never a link.
    assert.match(msg, /Paste a design…|Save file/);
    assert.doesNotMatch(msg, /file:\/\/|#d=/);
  });

  test('a worker that cannot load the core is named once, with one full stop', async () => {
    const p2 = await context.newPage();
    watch(p2);
    try {
      // Workers that start but report the core unloadable with a message of their own that
      // ends in a full stop (as WebKit's read errors do).
      await p2.addInitScript(() => {
        globalThis.Worker = class {
          constructor() {
            setTimeout(() => this.onmessage?.({ data: { type: 'init-error', message: 'NotReadableError: The I/O read operation failed.' } }), 5);
          }

          postMessage() {}

          terminate() {}
        };
      });
      await p2.goto(SINGLE_URL);
      await firstTrace(p2);
      assert.equal(await p2.getAttribute('body', 'data-tracer'), 'page');
      assert.equal(await p2.locator('#toolbar-msg').innerText(),
        'Tracing on the page itself, more slowly: A trace worker could not load the core: NotReadableError: The I/O read operation failed.');
    } finally {
      await p2.close();
    }
  });

  test('where workers are refused it traces on the page: same answer, and Stop works', async () => {
    const p2 = await context.newPage();
    watch(p2);
    try {
      await p2.addInitScript(() => {
        delete globalThis.Worker;
      });
      await p2.goto(SINGLE_URL);
      await firstTrace(p2);
      assert.equal(await p2.getAttribute('body', 'data-tracer'), 'page');
      assert.match(await p2.locator('#toolbar-msg').innerText(), /Tracing on the page itself/);
      await tracedAfter(p2, () => p2.selectOption('#demo', 'clad_plastic_fibre.json'));
      await tracedAfter(p2, () => p2.fill('#f-trace-rays', '30000'));
      await assertMatchesCli(p2, 'on the page');
      await p2.fill('#f-trace-rays', '3000000');
      await p2.waitForFunction(() => document.body.dataset.tracing === 'true', null, { timeout: 20_000 });
      await p2.click('#cancel');
      await p2.waitForFunction(() => /Stopped at/.test(document.getElementById('progress-text').textContent));
      const stoppedAt = await p2.locator('#progress-text').innerText();
      await p2.waitForTimeout(500);
      assert.equal(await p2.locator('#progress-text').innerText(), stoppedAt, 'updates came after Stop');
      assert.ok(Number(await p2.getAttribute('#answer', 'data-rays')) < 3000000);
      await tracedAfter(p2, () => p2.fill('#f-trace-rays', '20000'));
    } finally {
      await p2.close();
    }
  });

  test('the loss budget shows the core\'s shares in its words, with workers and without', async () => {
    const words = cliBudgetWords();
    const shown = async (p) => {
      await firstTrace(p);
      const rows = await budgetRows(p);
      assert.deepEqual(rows.map((r) => r.words), words);
      assert.equal(new Set(rows.map((r) => r.colour)).size, rows.length, `colours repeat: ${JSON.stringify(rows)}`);
    };
    await shown(page);
    const p2 = await context.newPage();
    watch(p2);
    try {
      await p2.addInitScript(() => {
        delete globalThis.Worker;
      });
      await p2.goto(SINGLE_URL);
      await shown(p2);
      assert.equal(await p2.getAttribute('body', 'data-tracer'), 'page');
    } finally {
      await p2.close();
    }
  });

  test('asked for nothing but itself and blob:/data: URLs; nothing went to the console', () => {
    const other = requests.filter((u) => u !== SINGLE_URL && !u.startsWith('blob:') && !u.startsWith('data:'));
    assert.deepEqual(other, []);
    assert.ok(requests.includes(SINGLE_URL));
    assert.deepEqual(consoleErrors, []);
  });
});
