// Shaped end faces on the design page, in Chromium: the entry and exit face choices with their
// pictures and numbers, as the example with a domed lens at each end holds them; a cut angle out
// of range and a pocket deeper than its radius get their messages under the field, in the form's
// words; the page's answer for a cut, a pocket and a textured exit face is the CLI's, bit for bit. Screenshots of the pipe's part of the
// form and of the 3D view at 1280×800 and 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/faces.test.mjs

import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertMatchesCli, assertNoJunk, closeDesignPage, designPage, openKept, tracedAfter } from './design-helpers.mjs';
import { OUT, ROOT } from './harness.mjs';

const PANEL = JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', 'panel_indicator_domed_lens.json'), 'utf8'));
const small = (s) => ({ ...s, trace: { ...s.trace, rays: 20_000 } });

for (const viewport of [{ width: 1280, height: 800 }, { width: 820, height: 1180 }]) {
  describe(`shaped faces at ${viewport.width}×${viewport.height}`, () => {
    const errors = [];
    let opened;
    before(async () => {
      opened = await designPage(errors, { viewport });
    });
    after(async () => {
      await closeDesignPage(opened);
      assert.deepEqual(errors, []);
    });

    test('the faces of the example show with their pictures and numbers, and the page traces them as the CLI', async () => {
      const { page } = opened;
      await openKept(page, small(PANEL));
      const entry = page.locator('select[data-path="guide.entry_face"]');
      const exit = page.locator('select[data-path="guide.exit_face"]');
      assert.equal(await entry.inputValue(), 'dome');
      assert.equal(await exit.inputValue(), 'dome');
      assert.equal(await page.locator('.face-choice svg.face-picture').count(), 2);
      assert.equal(await page.locator('[data-path="guide.entry_face.dome.radius_mm"]').inputValue(), '4');
      assert.equal(await page.locator('[data-path="guide.exit_face.dome.radius_mm"]').inputValue(), '2.5');
      await assertMatchesCli(page, 'two domes');
      await page.locator('[data-path="guide.exit_face.dome.radius_mm"]').scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `faces-form-${viewport.width}.png`) });
      await page.locator('#route-view').scrollIntoViewIfNeeded();
      await page.locator('#route-view').screenshot({ path: join(OUT, `faces-view-${viewport.width}.png`) });
      await assertNoJunk(page, 'two domes');
    });

    test('a cut exit face: its angle out of range is named as the form labels it; in range, the CLI\'s answer', async () => {
      const { page } = opened;
      await openKept(page, small(PANEL));
      await tracedAfter(page, () => page.locator('select[data-path="guide.exit_face"]').selectOption('cut'));
      const angle = page.locator('[data-path="guide.exit_face.cut.angle_deg"]');
      assert.equal(await angle.inputValue(), '20');
      await assertMatchesCli(page, 'a cut exit');
      await angle.fill('70');
      await angle.press('Tab');
      const msg = page.locator('.field-msg[data-for="guide.exit_face.cut.angle_deg"]');
      await msg.waitFor({ state: 'visible' });
      assert.match(await msg.textContent(), /^Exit cut angle to the section must be at most 60°, got 70/);
      await tracedAfter(page, async () => {
        await angle.fill('30');
        await angle.press('Tab');
      });
      await assertMatchesCli(page, 'a 30° cut');
    });

    test('a pocket over the LED: its two numbers, a depth beyond the radius named, then the CLI\'s answer', async () => {
      const { page } = opened;
      await openKept(page, small(PANEL));
      await tracedAfter(page, () => page.locator('select[data-path="guide.entry_face"]').selectOption('pocket'));
      const radius = page.locator('[data-path="guide.entry_face.pocket.radius_mm"]');
      const depth = page.locator('[data-path="guide.entry_face.pocket.depth_mm"]');
      assert.equal(await radius.inputValue(), '1');
      assert.equal(await depth.inputValue(), '1');
      await assertMatchesCli(page, 'a pocket');
      await depth.fill('1.5');
      await depth.press('Tab');
      const msg = page.locator('.field-msg[data-for="guide.entry_face.pocket.depth_mm"]');
      await msg.waitFor({ state: 'visible' });
      assert.match(await msg.textContent(), /^Pocket depth must be at most 1 mm/);
      await depth.scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `faces-pocket-${viewport.width}.png`) });
    });

    test('an LED inside the pocket: a negative gap down to the depth traces as the CLI; deeper is named', async () => {
      const { page } = opened;
      const doc = structuredClone(small(PANEL));
      doc.guide.entry_face = { pocket: { radius_mm: 1.2, depth_mm: 0.9 } };
      doc.source.emitter = { led: { area: { square: { side_mm: 0.5 } }, pattern: 'lambertian' } };
      await openKept(page, doc);
      const gap = page.locator('[data-path="source.gap_mm"]');
      assert.match(await page.locator(`#${await gap.getAttribute('id')}-hint`).textContent(), /Below 0 the LED sits inside the pocket/);
      await tracedAfter(page, async () => {
        await gap.fill('-0.4');
        await gap.press('Tab');
      });
      await assertMatchesCli(page, 'an LED inside the pocket');
      await gap.fill('-1');
      await gap.press('Tab');
      const msg = page.locator('.field-msg[data-for="source.gap_mm"]');
      await msg.waitFor({ state: 'visible' });
      assert.match(await msg.textContent(), /^Gap to the entry face must be more than -0\.9 mm \(below 0 the LED sits inside the entry face's pocket/);
      await msg.evaluate((e) => e.scrollIntoView({ block: 'center' }));
      await page.screenshot({ path: join(OUT, `faces-led-in-pocket-${viewport.width}.png`) });
      await tracedAfter(page, async () => {
        await gap.fill('-0.4');
        await gap.press('Tab');
      });
      await page.locator('#route-view').scrollIntoViewIfNeeded();
      await page.locator('#route-view').screenshot({ path: join(OUT, `faces-led-in-pocket-view-${viewport.width}.png`) });
    });

    test('a textured exit face traces as the CLI', async () => {
      const { page } = opened;
      await openKept(page, small(PANEL));
      await tracedAfter(page, () => page.locator('select[data-path="guide.exit_face"]').selectOption('textured'));
      assert.equal(await page.locator('[data-path="guide.exit_face.textured.roughness"]').inputValue(), '0.3');
      await assertMatchesCli(page, 'a textured exit');
      await page.locator('[data-path="guide.exit_face.textured.roughness"]').scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `faces-textured-${viewport.width}.png`) });
    });
  });
}
