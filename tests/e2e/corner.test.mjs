// The reflecting corner on the design page, in Chromium: the demo (a right-angle pipe on a board)
// shows its corner in the corner table with the core's closed-form verdict and the CLI's traced
// leak; "+ Corner" adds a corner card whose fields are labelled with their units; a coating's
// reflectance out of range is refused under its field, named as the form labels it, with the
// range. Screenshots at 1280×800 and 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/corner.test.mjs

import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertNoJunk, cliTrace, closeDesignPage, designPage, inkShare, openKept } from './design-helpers.mjs';
import { OUT, ROOT } from './harness.mjs';

const DEMO = JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', 'board_corner_indicator.json'), 'utf8'));

describe('the reflecting corner on the design page', { concurrency: false }, () => {
  let server;
  let browser;
  let page;
  const consoleErrors = [];

  before(async () => {
    ({ server, browser, page } = await designPage(consoleErrors));
  });
  after(async () => {
    await closeDesignPage({ server, browser });
    assert.deepEqual(consoleErrors, []);
  });

  test('the demo shows its corner: verdict and traced leak as the CLI traces it', async () => {
    const scenario = { ...DEMO, trace: { ...DEMO.trace, rays: 20_000 } };
    await openKept(page, scenario);
    await page.waitForFunction(() => !document.querySelector('#corner-rows td.corner-leak')?.textContent.includes('…'));
    const row = page.locator('#corner-rows tr');
    assert.equal(await row.count(), 1);
    assert.equal(await row.getAttribute('data-verdict'), 'leaks');
    assert.equal(await row.getAttribute('data-segment'), '1');
    assert.equal(await page.locator('#corners').isHidden(), false);
    const cells = await row.locator('td').allTextContents();
    assert.equal(cells[0], '90°');
    assert.equal(cells[1], '45.0°');
    // The traced leak is the CLI's, as the page formats a share.
    const native = cliTrace(scenario);
    const seg = native.segments[1];
    assert.equal(seg.kind, 'corner');
    const want = await page.evaluate(async (s) => (await import('./js/format.js')).formatShareCi(s.share, s.ci95), seg.leaked);
    assert.equal(cells[4].replaceAll('\u00a0', ' '), want.replaceAll('\u00a0', ' '));
    // The route card names the segment kind as the form does.
    assert.equal(await page.locator('#seg-1-kind').inputValue(), 'corner');
    assert.ok((await inkShare(page, 'route-view')) > 0.01, 'the 3D view draws the pipe');
    await assertNoJunk(page, 'corner demo');
    await page.screenshot({ path: join(OUT, 'corner-desktop.png'), fullPage: false });
    await page.locator('#route-view').scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(OUT, 'corner-view-desktop.png') });
    // Seen square to the turn's plane, the face cuts the outer side of the turn.
    await page.click('button[data-view="plan"]');
    await page.screenshot({ path: join(OUT, 'corner-view-plan-desktop.png') });
    await page.click('button[data-view="turned"]');
    await page.locator('#corners').scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(OUT, 'corner-table-desktop.png') });
  });

  test('a corner added on the form: its fields, and a coating out of range refused with its label and range', async () => {
    await page.click('#add-corner');
    const i = DEMO.route.length; // the new card's index
    const p = `route[${i}].corner`;
    const byPath = (path) => page.locator(`[data-path="${path}"]`);
    assert.equal(await byPath(`${p}.angle_deg`).inputValue(), '90');
    assert.equal(await byPath(`${p}.turn_deg`).inputValue(), '0');
    await byPath(`${p}.coating`).selectOption('coated');
    const reflectance = byPath(`${p}.coating.reflectance`);
    await reflectance.fill('1.5');
    await reflectance.press('Tab');
    const msg = page.locator(`.field-msg[data-for="${p}.coating.reflectance"]`);
    await msg.waitFor({ state: 'visible' });
    const text = await msg.textContent();
    assert.match(text, /Coating reflectance/);
    assert.match(text, /at most 1/);
    await page.locator(`[data-path="${p}.coating.reflectance"]`).scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(OUT, 'corner-form-desktop.png') });
  });

  test('tablet size', async () => {
    await page.setViewportSize({ width: 820, height: 1180 });
    await openKept(page, { ...DEMO, trace: { ...DEMO.trace, rays: 20_000 } });
    await page.screenshot({ path: join(OUT, 'corner-tablet.png') });
    await page.locator('#corners').scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(OUT, 'corner-table-tablet.png') });
    await page.locator('#seg-1-kind').scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(OUT, 'corner-form-tablet.png') });
  });
});
