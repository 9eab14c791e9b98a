// Helpers shared by the tests of the designer's study panels (sweep, search, tolerances): open
// the designer on a fresh browser with few rays, read the kept state, set a field, and run
// `tirtrace study` on a study document.

import assert from 'node:assert/strict';
import { existsSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';

import { chromium } from 'playwright-core';

import { STATE_KEY, tracedAfter } from './design-helpers.mjs';
import { CHROMIUM, CHROMIUM_ARGS, CLI, OUT, WWW, cli, collectErrors, startServer, stopServer } from './harness.mjs';

/** `tirtrace study` on a study document (an object), on two threads; the parsed report. */
export function cliStudy(study) {
  return JSON.parse(cli(['study', '-', '--threads', '2'], JSON.stringify(study)));
}

/** The page's kept state (the design and every panel's set-up). */
export const keptState = (page) => page.evaluate((k) => JSON.parse(localStorage.getItem(k)), STATE_KEY);

/** Type `value` into the input `selector` and let the form take it (as leaving the field does). */
export async function setField(page, selector, value) {
  await page.fill(selector, String(value));
  await page.locator(selector).dispatchEvent('change');
}

/**
 * The designer on a fresh browser at 1280×800, its first trace done, then traced again with
 * `rays` (few, for quick studies). Resolves with { server, browser, context, page, errors }
 * (errors: the page's console errors, collected); close it with `closeDesigner`.
 */
export async function openDesigner({ rays, acceptDownloads = false }) {
  assert.ok(existsSync(join(WWW, 'pkg', 'tirtrace.js')), 'www/pkg is missing: run `bash scripts/build.sh` first');
  assert.ok(existsSync(CLI), 'target/debug/tirtrace is missing: run `cargo build` first');
  mkdirSync(OUT, { recursive: true });
  const server = await startServer();
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  const context = await browser.newContext({ viewport: { width: 1280, height: 800 }, acceptDownloads });
  const page = await context.newPage();
  const errors = [];
  collectErrors(page, errors);
  await page.goto(`${server.origin}/`);
  await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
  await page.waitForFunction(() => Number(document.body.dataset.traced || 0) > 0, null, { timeout: 60_000 });
  await tracedAfter(page, () => setField(page, '#f-trace-rays', rays));
  return { server, browser, context, page, errors };
}

/** Close what `openDesigner` opened (as much of it as was opened). */
export async function closeDesigner(d) {
  await d?.browser?.close();
  await stopServer(d?.server?.child);
}
