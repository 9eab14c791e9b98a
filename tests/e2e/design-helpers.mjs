// Helpers shared by the tests of the design page (served, and the single file): read the page's
// scenario and answer, wait for a trace, and trace the same scenario with the native CLI.

import assert from 'node:assert/strict';
import { existsSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import { chromium } from 'playwright-core';

import { CHROMIUM, CHROMIUM_ARGS, OUT, ROOT, WWW, cli, collectErrors, startServer, stopServer } from './harness.mjs';

export const STATE_KEY = 'tirtrace.design.v1';

/** The scenario the page holds (its autosave). */
export const pageScenario = (page) => page.evaluate((k) => JSON.parse(localStorage.getItem(k)).scenario, STATE_KEY);

/** Run `action`, then wait until a trace started after it (a later job id) has finished. */
export async function tracedAfter(page, action, timeout = 60_000) {
  const before = Number((await page.getAttribute('body', 'data-job')) || 0);
  await action();
  try {
    await page.waitForFunction(
      (b) => {
        const job = Number(document.body.dataset.job || 0);
        return job > b && Number(document.body.dataset.traced || 0) === job;
      },
      before,
      { timeout },
    );
  } catch (e) {
    const state = await page.evaluate(() => ({
      ...document.body.dataset,
      status: document.getElementById('status').textContent,
      progress: document.getElementById('progress-text').textContent,
    }));
    throw new Error(`no finished trace after the action (job before: ${before}): ${JSON.stringify(state)}`, { cause: e });
  }
}

/**
 * The designer served and open in a fresh Chromium (1280×800 unless `viewport` says otherwise),
 * its console errors collected into `consoleErrors` (and, given `requests`, the URL of every
 * request of its browser context, workers' included), started (and, with `traced`, its first
 * trace done): `{ server, browser, page }`. Close it with `closeDesignPage`; when it cannot be
 * opened, what was started is closed before the error is thrown.
 */
export async function designPage(consoleErrors, { viewport = { width: 1280, height: 800 }, traced = false, acceptDownloads = false, requests } = {}) {
  assert.ok(existsSync(join(WWW, 'pkg', 'tirtrace.js')), 'www/pkg is missing: run `bash scripts/build.sh` first');
  mkdirSync(OUT, { recursive: true });
  const server = await startServer();
  let browser;
  try {
    browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
    const context = await browser.newContext({ viewport, acceptDownloads });
    if (requests) context.on('request', (r) => requests.push(r.url()));
    const page = await context.newPage();
    collectErrors(page, consoleErrors);
    await page.goto(`${server.origin}/`);
    if (traced) await firstTrace(page);
    else await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    return { server, browser, page };
  } catch (e) {
    await closeDesignPage({ server, browser });
    throw e;
  }
}

/** Close what `designPage` opened: its browser, then its server (either may be missing). */
export async function closeDesignPage({ server, browser } = {}) {
  await browser?.close();
  await stopServer(server?.child);
}

/** Keep `scenario` as the page's design in its storage, reload, and wait for the first trace. */
export async function openKept(page, scenario) {
  await page.evaluate(([k, s]) => localStorage.setItem(k, JSON.stringify({ scenario: s, drafts: {}, unit: 'mm' })), [STATE_KEY, scenario]);
  await page.reload();
  await firstTrace(page);
}

/** Wait until the page has started and its first trace has finished. */
export async function firstTrace(page) {
  await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
  await page.waitForFunction(() => Number(document.body.dataset.traced || 0) > 0, null, { timeout: 60_000 });
}

/** The finished answer: { share, ci95, rays }. */
export async function answer(page) {
  const a = page.locator('#answer');
  return {
    share: Number(await a.getAttribute('data-share')),
    ci95: Number(await a.getAttribute('data-ci95')),
    rays: Number(await a.getAttribute('data-rays')),
  };
}

/** The CLI's report for a scenario object. */
export function cliTrace(scenario) {
  const file = join(tmpdir(), `tirtrace-e2e-${process.pid}-${Date.now()}.json`);
  writeFileSync(file, JSON.stringify(scenario));
  try {
    return JSON.parse(cli(['trace', file]));
  } finally {
    rmSync(file, { force: true });
  }
}

/** The page's answer equals the CLI's for the scenario it holds. */
export async function assertMatchesCli(page, what) {
  const scenario = await pageScenario(page);
  const mine = await answer(page);
  const theirs = cliTrace(scenario);
  assert.equal(mine.rays, theirs.rays, `${what}: rays`);
  assert.equal(mine.share, theirs.delivered.share, `${what}: delivered share differs from the CLI`);
  assert.equal(mine.ci95, theirs.delivered.ci95, `${what}: its 95 % half-width differs from the CLI`);
  return { mine, theirs };
}

/** The loss budget's rows as shown: [{ key, words, colour }] in the table's order. */
export const budgetRows = (page) =>
  page.$$eval('#budget-rows tr[data-mechanism]', (rows) =>
    rows.map((tr) => ({ key: tr.dataset.mechanism, words: tr.querySelector('th').textContent, colour: tr.querySelector('.swatch').style.background })));

/** The loss budget's words in the order the native CLI's CSV lists them (the core's list). */
export function cliBudgetWords() {
  const csv = cli(['trace', join(ROOT, 'examples', 'scenarios', 'thermostat_status_led.json'), '--rays', '1000', '--csv']);
  const section = csv.split('\n\n').find((s) => s.startsWith('"What becomes of the light"'));
  assert.ok(section, `no budget in the CLI's CSV:\n${csv}`);
  // Each row starts with its words, quoted: "words",share,…
  return section.split('\n').slice(1).filter(Boolean).map((row) => JSON.parse(row.slice(0, row.indexOf('",') + 1)));
}

/** Page text must never show NaN, Infinity or undefined. */
export async function assertNoJunk(page, what) {
  const body = await page.locator('body').innerText();
  for (const junk of ['NaN', 'Infinity', 'undefined', '[object Object]']) {
    assert.ok(!body.includes(junk), `${what}: the page shows "${junk}"`);
  }
}

export { inkShare } from './harness.mjs';
