// Mounts and coatings are placed on the wall by the same rows of the form (one builder,
// www/js/design/zones.js), in Chromium: a mount and a coating on the same segment show the same
// place fields in the same order, with the same labels and units; both follow their segment when
// it moves up the route, and both go with it when it is removed; each is removed by its own
// button, named by its kind and label.
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/zone_rows.test.mjs

import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { closeDesignPage, designPage, openKept, pageScenario, STATE_KEY } from './design-helpers.mjs';
import { ROOT } from './harness.mjs';

const BASE = JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', 'right_angle_pipe_mirrored_bend.json'), 'utf8'));
const DESIGN = {
  ...BASE,
  guide: {
    ...BASE.guide,
    contacts: [{ name: 'snap clip', segment: 1, from_mm: 0.5, to_mm: 1.5, sector_from_deg: 0, sector_to_deg: 90, medium: { library: 'polycarbonate' } }],
  },
  trace: { ...BASE.trace, rays: 5000 },
};

/** The labels (with units) of the place rows of a zone's list item, in order. */
const placeLabels = (page, list, k) =>
  page.$$eval(`[data-path^="guide.${list}[${k}]."]`, (els) => els
    .filter((el) => /\.(segment|from_mm|to_mm|sector_from_deg|sector_to_deg)$/.test(el.dataset.path))
    .map((el) => [el.dataset.path.replace(/^guide\.\w+\[\d+\]\./, ''), document.querySelector(`label[for="${el.id}"]`)?.textContent.trim()]));

describe('zone rows shared by mounts and coatings', { concurrency: false }, () => {
  let ctx;
  const consoleErrors = [];

  before(async () => {
    ctx = await designPage(consoleErrors);
    await openKept(ctx.page, DESIGN);
  });
  after(async () => {
    await closeDesignPage(ctx);
    assert.deepEqual(consoleErrors, []);
  });

  test('a mount and a coating show the same place fields', async () => {
    const { page } = ctx;
    const mount = await placeLabels(page, 'contacts', 0);
    const coating = await placeLabels(page, 'coatings', 0);
    assert.deepEqual(mount.map(([f]) => f), ['segment', 'from_mm', 'to_mm', 'sector_from_deg', 'sector_to_deg']);
    assert.deepEqual(mount, coating);
    assert.equal(await page.locator('#f-guide-contacts-0-segment').inputValue(), '1');
    assert.equal(await page.locator('#f-guide-coatings-0-segment').inputValue(), '1');
    assert.equal(await page.locator('#contact-0-remove').getAttribute('aria-label'), 'Remove mount 1 (snap clip)');
    assert.equal(await page.locator('#coating-0-remove').getAttribute('aria-label'), 'Remove coating 1 (mirror on the back of the bend)');
  });

  test('both follow their segment up the route, and go with it', async () => {
    const { page } = ctx;
    await page.click('#seg-1-up');
    await page.waitForFunction((k) => JSON.parse(localStorage.getItem(k)).scenario.route[0].bend, STATE_KEY);
    let s = await pageScenario(page);
    assert.equal(s.guide.contacts[0].segment, 0);
    assert.equal(s.guide.coatings[0].segment, 0);
    assert.equal(await page.locator('#f-guide-contacts-0-segment').inputValue(), '0');
    assert.equal(await page.locator('#f-guide-coatings-0-segment').inputValue(), '0');
    // A zone on another segment stays with that one when the first goes.
    await page.click('#seg-0-remove');
    await page.waitForFunction((k) => JSON.parse(localStorage.getItem(k)).scenario.route.length === 2, STATE_KEY);
    s = await pageScenario(page);
    assert.equal(s.guide.contacts, undefined);
    assert.equal(s.guide.coatings, undefined);
    assert.equal(await page.locator('#part-coatings li.coating').count(), 0);
  });

  test('each is removed by its own button', async () => {
    const { page } = ctx;
    await openKept(page, DESIGN);
    await page.click('#contact-0-remove');
    await page.waitForFunction((k) => !JSON.parse(localStorage.getItem(k)).scenario.guide.contacts, STATE_KEY);
    assert.equal((await pageScenario(page)).guide.coatings.length, 1);
    await page.click('#coating-0-remove');
    await page.waitForFunction((k) => !JSON.parse(localStorage.getItem(k)).scenario.guide.coatings, STATE_KEY);
  });
});
