// The coatings on the design page, in Debian's Chromium (playwright-core): the coated-bend
// example opens with its coating in the form's “Coatings” part, its trace equals the command
// line's (delivered and the coatings' share), the budget lists the coating under the coatings'
// share, the 3D view draws it (and marks where drawn rays left part of their light), a coating added with the form and given a bad reflectance is named
// by its label with the allowed end; screenshots at 1280×800 and 820×1180 in tests/e2e/out/.
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.

import assert from 'node:assert/strict';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { STATE_KEY, answer, assertNoJunk, cliTrace, closeDesignPage, designPage, inkShare, pageScenario, tracedAfter } from './design-helpers.mjs';
import { OUT } from './harness.mjs';

const EXAMPLE = 'right_angle_pipe_mirrored_bend.json';

for (const viewport of [{ width: 1280, height: 800 }, { width: 820, height: 1180 }]) {
  const size = `${viewport.width}x${viewport.height}`;
  describe(`coatings on the design page at ${size}`, { concurrency: false }, () => {
    let ctx;
    const consoleErrors = [];

    before(async () => {
      ctx = await designPage(consoleErrors, { viewport, traced: true });
    });
    after(() => closeDesignPage(ctx));

    test('the coated example traces as the command line does and shows its coating', async () => {
      const { page } = ctx;
      await tracedAfter(page, () => page.selectOption('#demo', EXAMPLE));
      // The form: one coating, metal, its reflectance and place.
      const items = page.locator('#part-coatings li.coating');
      assert.equal(await items.count(), 1);
      assert.equal(await page.locator('#f-guide-coatings-0-kind').inputValue(), 'metal');
      assert.equal(await page.locator('#f-guide-coatings-0-kind-metal-reflectance').inputValue(), '0.9');
      assert.equal(await page.locator('#f-guide-coatings-0-segment').inputValue(), '1');
      // The same answer as the CLI, and the same coatings' share.
      const scenario = await pageScenario(page);
      const theirs = cliTrace(scenario);
      const mine = await answer(page);
      assert.equal(mine.share, theirs.delivered.share);
      assert.ok(theirs.budget.coating.share > 0.05, `coatings take ${theirs.budget.coating.share}`);
      const row = page.locator('#budget-rows tr[data-mechanism="coating"]');
      assert.match(await row.locator('th').innerText(), /coatings/);
      const part = page.locator('#budget-rows tr.budget-part[data-coating="0"]');
      assert.match(await part.locator('th').innerText(), /^mirror on the back of the bend \(metal, segment 2\): absorbs/);
      const shown = Number((await part.locator('td.num').first().innerText()).replace(/[^0-9.]/g, ''));
      assert.ok(Math.abs(shown - 100 * theirs.coatings[0].lost.share) < 0.1, `${shown} % shown`);
      // The 3D view draws the coating: the outline the view holds has it, and the view has ink.
      assert.ok((await inkShare(page, 'route-view')) > 0.01);
      // Drawn rays that left part of their light at the bend (below the critical angle, or to the
      // metal) on their way are marked, and the legend says how many.
      const legend = await page.locator('#route-legend').innerText();
      const parted = Number(legend.match(/(\d+) left part of their light on the way/)?.[1]);
      assert.ok(parted > 0, legend);
      // Each part is drawn as a dot, at least one for each ray the legend counts.
      const dots = Number(await page.locator('#route-view').getAttribute('data-parts-drawn'));
      assert.ok(dots >= parted, `${dots} dots for ${parted} rays`);
      await assertNoJunk(page, 'coated example');
      await page.locator('#route-view').scrollIntoViewIfNeeded();
      await page.locator('#route-view').screenshot({ path: join(OUT, `coatings-view-${size}.png`) });
      await page.locator('#route-legend').screenshot({ path: join(OUT, `coatings-legend-${size}.png`) });
      await page.locator('#part-coatings').screenshot({ path: join(OUT, `coatings-form-${size}.png`) });
      await page.locator('#budget-rows').screenshot({ path: join(OUT, `coatings-budget-${size}.png`) });
    });

    test('a coating added with the form is checked by its label', async () => {
      const { page } = ctx;
      await tracedAfter(page, () => page.click('#add-coating'));
      assert.equal(await page.locator('#part-coatings li.coating').count(), 2);
      assert.equal(await page.locator('#f-guide-coatings-1-kind').inputValue(), 'white_paint');
      const field = page.locator('#f-guide-coatings-1-kind-white-paint-reflectance');
      await field.fill('1.5');
      await field.dispatchEvent('change');
      const msg = page.locator('#f-guide-coatings-1-kind-white-paint-reflectance-msg');
      await msg.waitFor({ state: 'visible', timeout: 10_000 });
      assert.equal(await msg.innerText(), 'Reflectance must be at most 1, got 1.5');
      // Black paint has no reflectance to give.
      await page.selectOption('#f-guide-coatings-1-kind', 'black');
      assert.equal(await page.locator('#f-guide-coatings-1-kind-white-paint-reflectance').count(), 0);
      // The page keeps the change (saved with the design).
      await page.waitForFunction((k) => JSON.parse(localStorage.getItem(k)).scenario.guide.coatings[1].kind === 'black', STATE_KEY, { timeout: 10_000 });
      assert.deepEqual(consoleErrors, []);
    });
  });
}
