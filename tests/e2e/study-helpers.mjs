// Helpers shared by the tests of the designer's study panels (sweep, search, tolerances): open
// the designer on a fresh browser with few rays, read the kept state, set a field, and run
// `tirtrace study` on a study document.

import assert from 'node:assert/strict';
import { existsSync } from 'node:fs';

import { STATE_KEY, closeDesignPage, designPage, tracedAfter } from './design-helpers.mjs';
import { CLI, cli } from './harness.mjs';

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
 * The designer on a fresh browser at 1280×800 (`designPage`), its first trace done, then traced
 * again with `rays` (few, for quick studies). Resolves with { server, browser, context, page,
 * errors } (errors: the page's console errors, collected); close it with `closeDesigner`.
 */
export async function openDesigner({ rays, acceptDownloads = false }) {
  assert.ok(existsSync(CLI), 'target/debug/tirtrace is missing: run `cargo build` first');
  const errors = [];
  const designer = await designPage(errors, { traced: true, acceptDownloads });
  try {
    await tracedAfter(designer.page, () => setField(designer.page, '#f-trace-rays', rays));
  } catch (e) {
    await closeDesignPage(designer);
    throw e;
  }
  return { ...designer, context: designer.page.context(), errors };
}

/** Close what `openDesigner` opened (as much of it as was opened). */
export const closeDesigner = (d) => closeDesignPage(d);
