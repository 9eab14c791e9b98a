// Coatings on a reflecting corner, and light coatings absorb along the route, on the design
// page in Chromium: the board indicator with a metal layer over its corner (face included) and
// black paint on its last straight draws both coatings in the 3D view, traces as the command line
// does, shows where the coatings absorb light in its own strip under the leakage line (bins
// where the CLI's report has them) and in the per-segment bars and figures; the same design
// without coatings shows the leakage line and the segment table as it always has. Screenshots
// at 1280×800 and 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/corner_coatings.test.mjs

import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertMatchesCli, assertNoJunk, cliTrace, closeDesignPage, designPage, openKept } from './design-helpers.mjs';
import { OUT, ROOT } from './harness.mjs';

const DEMO = JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', 'board_corner_indicator.json'), 'utf8'));
// The corner turns a 3 mm × 2 mm section by 90° across its width: legs of 1.5 mm each side.
const COATED = {
  ...DEMO,
  guide: {
    ...DEMO.guide,
    coatings: [
      { name: 'mirror over the corner', kind: { metal: { reflectance: 0.8 } }, segment: 1, from_mm: 0, to_mm: 3, sector_from_deg: 90, sector_to_deg: 270 },
      { name: 'mask', kind: 'black', segment: 2, from_mm: 4, to_mm: 9, sector_from_deg: 180, sector_to_deg: 360 },
    ],
  },
  trace: { ...DEMO.trace, rays: 20_000 },
};
const BARE = { ...DEMO, trace: { ...DEMO.trace, rays: 20_000 } };

/** The indices of the strip's bins that are coloured (not transparent). */
const colouredBins = (page, selector) =>
  page.$$eval(`${selector} .leak-bin`, (cells) => cells.flatMap((c, i) => (c.style.background && c.style.background !== 'transparent' ? [i] : [])));

/** The indices of a profile's non-zero bins. */
const nonZero = (shares) => shares.flatMap((s, i) => (s > 0 ? [i] : []));

/**
 * Pixels of the 3D view near the metal coating's fill over white (rgba(134,142,150,0.75)) whose
 * four neighbours are too — the inside of a filled area, not the antialiased edge of a ray's
 * line, whose colours can mix to the same grey where rays cross: their share of the view, and
 * their centre in CSS pixels from the canvas's top left.
 */
const metalPixels = (page) =>
  page.evaluate(() => {
    const canvas = document.getElementById('route-view');
    const { width, height } = canvas;
    const { data } = canvas.getContext('2d').getImageData(0, 0, width, height);
    const metal = (k) => {
      const [r, g, b] = [data[4 * k], data[4 * k + 1], data[4 * k + 2]];
      return Math.abs(r - 164) < 14 && Math.abs(g - 170) < 14 && Math.abs(b - 176) < 14 && b >= r;
    };
    let [n, sx, sy] = [0, 0, 0];
    for (let y = 1; y + 1 < height; y += 1) {
      for (let x = 1; x + 1 < width; x += 1) {
        const k = y * width + x;
        if (metal(k) && metal(k - 1) && metal(k + 1) && metal(k - width) && metal(k + width)) {
          n += 1;
          sx += x;
          sy += y;
        }
      }
    }
    const css = canvas.clientWidth / width;
    return { share: n / (width * height), x: n ? (css * sx) / n : 0, y: n ? (css * sy) / n : 0 };
  });
const metalInk = async (page) => (await metalPixels(page)).share;

for (const viewport of [{ width: 1280, height: 800 }, { width: 820, height: 1180 }]) {
  const size = `${viewport.width}x${viewport.height}`;
  describe(`coatings on a corner at ${size}`, { concurrency: false }, () => {
    let ctx;
    const consoleErrors = [];

    before(async () => {
      ctx = await designPage(consoleErrors, { viewport });
    });
    after(async () => {
      await closeDesignPage(ctx);
      assert.deepEqual(consoleErrors, []);
    });

    test('without coatings: the leakage line and segment table as they always were', async () => {
      const { page } = ctx;
      await openKept(page, BARE);
      await assertMatchesCli(page, 'bare corner');
      const theirs = cliTrace(BARE);
      assert.equal(theirs.coating_along_route, undefined);
      // The leakage line: its title, strip, ruler and ends, nothing more.
      assert.equal(await page.locator('#leak-line > *').count(), 4);
      assert.equal(await page.locator('#leak-line .coat-bins').count(), 0);
      assert.deepEqual(await colouredBins(page, '#leak-line .leak-bins'), nonZero(theirs.leak_along_route.share));
      // The segment table: three bars a row (leaks, absorbed, mounts), three keys, "Mounts".
      assert.equal(await page.locator('#segment-rows .seg-bar.coating').count(), 0);
      for (const tr of await page.locator('#segment-rows tr').all()) assert.equal(await tr.locator('.seg-bar').count(), 3);
      assert.equal(await page.locator('.segment-table .seg-key-item').count(), 3);
      assert.equal(await page.locator('.segment-table thead th').last().innerText(), 'Mounts');
      assert.equal(await page.locator('#route-view').getAttribute('data-coatings-drawn'), '0');
      assert.ok((await metalInk(page)) < 0.00002, 'no metal drawn');
    });

    test('a metal layer over the corner and a black mask: drawn, and where they absorb shown beside the leakage', async () => {
      const { page } = ctx;
      await openKept(page, COATED);
      await assertMatchesCli(page, 'coated corner');
      const theirs = cliTrace(COATED);
      // Both coatings drawn, the corner's metal to scale over its face.
      assert.equal(await page.locator('#route-view').getAttribute('data-coatings-drawn'), '2');
      // (The inside of the metal's fill, where no ray crosses it: 1.5–1.8·10⁻⁴ of the view when
      // this was written, none without coatings.)
      const ink = await metalInk(page);
      assert.ok(ink > 0.00005, `metal covers ${ink} of the view`);
      // The leakage strip is the CLI's leakage; the coatings' strip is the CLI's coating profile.
      assert.deepEqual(await colouredBins(page, '#leak-line .leak-bins:not(.coat-bins)'), nonZero(theirs.leak_along_route.share));
      const coated = theirs.coating_along_route;
      assert.ok(coated && coated.share.some((s) => s > 0));
      assert.deepEqual(await colouredBins(page, '#leak-line .coat-bins'), nonZero(coated.share));
      assert.match(await page.locator('#leak-line .coat-line-title').innerText(), /Absorbed by coatings along the route/);
      // Its words name the segment where coatings absorb most, as the CLI's bins say.
      let worst = 0;
      coated.share.forEach((s, i) => { if (s > coated.share[worst]) worst = i; });
      const at = (worst + 0.5) * coated.bin_mm;
      const seg = theirs.segments.find((s) => at >= s.start_mm && at <= s.start_mm + s.length_mm);
      assert.equal(await page.locator('#leak-line').getAttribute('data-worst-coated-segment'), String(seg.index));
      // The segment table: a coatings bar on the coated segments only, their figures named.
      const key = page.locator('.segment-table .seg-key-coating');
      assert.equal(await key.count(), 1);
      assert.equal(await page.locator('.segment-table thead th').last().innerText(), 'Mounts and coatings');
      const width = async (i) => Number((await page.locator(`#segment-rows tr[data-segment="${i}"] .seg-bar.coating`).getAttribute('style')).match(/width:([0-9.e-]+)%/)[1]);
      assert.equal(await width(0), 0);
      assert.ok((await width(1)) > 0 && (await width(2)) > 0);
      const cell = await page.locator('#segment-rows tr[data-segment="1"] td').last().innerText();
      assert.match(cell, /^mirror over the corner \(metal\) absorbs /);
      const want = await page.evaluate(async (s) => (await import('./js/format.js')).formatShareCi(s.share, s.ci95), theirs.coatings[0].lost);
      assert.ok(cell.replaceAll('\u00a0', ' ').endsWith(want.replaceAll('\u00a0', ' ')), `${cell} / ${want}`);
      // Bars to one scale: the longest row is the one losing most, coatings counted.
      await assertNoJunk(page, 'coated corner');

      await page.locator('#route-view').scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `corner-coatings-view-${size}.png`) });
      await page.click('button[data-view="plan"]');
      await page.screenshot({ path: join(OUT, `corner-coatings-plan-${size}.png`) });
      await page.click('button[data-view="side"]');
      await page.screenshot({ path: join(OUT, `corner-coatings-side-${size}.png`) });
      await page.click('button[data-view="turned"]');
      // Close up on the corner (where the metal is drawn), turned and seen along the width.
      for (const view of ['turned', 'plan']) {
        await page.click(`button[data-view="${view}"]`);
        await page.click('button:has-text("Fit")');
        await page.waitForTimeout(600);
        const { x, y } = await metalPixels(page);
        const box = await page.locator('#route-view').boundingBox();
        await page.mouse.move(box.x + x, box.y + y);
        for (let k = 0; k < 2; k += 1) await page.mouse.wheel(0, -300);
        await page.waitForTimeout(200);
        await page.locator('#route-view').screenshot({ path: join(OUT, `corner-coatings-close-${view}-${size}.png`) });
      }
      await page.click('button[data-view="turned"]');
      await page.click('button:has-text("Fit")');
      await page.locator('#leak-line').screenshot({ path: join(OUT, `corner-coatings-leak-line-${size}.png`) });
      await page.locator('.segment-table').screenshot({ path: join(OUT, `corner-coatings-segments-${size}.png`) });
      // The axes' names never overlap, in every preset view and turned by hand between.
      const overlaps = async (what) => {
        const labels = JSON.parse(await page.locator('#route-view').getAttribute('data-axis-labels'));
        assert.ok(labels.length >= 2, `${what}: ${labels.length} names`);
        for (let i = 0; i < labels.length; i += 1) {
          for (let j = i + 1; j < labels.length; j += 1) {
            const [a, b] = [labels[i], labels[j]];
            const apart = Math.abs(a.x - b.x) >= (a.w + b.w) / 2 || Math.abs(a.y - b.y) >= (a.h + b.h) / 2;
            assert.ok(apart, `${what}: “${a.name}” and “${b.name}” overlap: ${JSON.stringify([a, b])}`);
          }
        }
      };
      const box = await page.locator('#route-view').boundingBox();
      for (const view of ['turned', 'plan', 'side', 'board']) {
        await page.click(`button[data-view="${view}"]`);
        await page.waitForTimeout(600);
        await overlaps(view);
        for (const [dx, dy] of [[15, 0], [0, 20], [-40, 10], [25, -35]]) {
          await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
          await page.mouse.down();
          await page.mouse.move(box.x + box.width / 2 + dx, box.y + box.height / 2 + dy, { steps: 3 });
          await page.mouse.up();
          await overlaps(`${view} turned by ${dx}, ${dy}`);
        }
      }
      await page.click('button[data-view="turned"]');
      await page.waitForTimeout(600);
      await page.locator('#route-view').screenshot({ path: join(OUT, `corner-coatings-axes-${size}.png`) });
      // The rule itself: labels on top of each other, side by side or crossing, come apart.
      const parted = await page.evaluate(async () => {
        const { separateLabels } = await import('./js/design/route-view.js');
        return separateLabels([
          { x: 100, y: 50, w: 30, h: 13 }, { x: 102, y: 52, w: 40, h: 13 }, { x: 100, y: 50, w: 25, h: 13 },
        ]);
      });
      for (let i = 0; i < parted.length; i += 1) {
        for (let j = i + 1; j < parted.length; j += 1) {
          const [a, b] = [parted[i], parted[j]];
          assert.ok(Math.abs(a.x - b.x) >= (a.w + b.w) / 2 || Math.abs(a.y - b.y) >= (a.h + b.h) / 2, JSON.stringify(parted));
        }
      }
      // Taken off again: the table and line are as without.
      const bare = { ...COATED, guide: { ...COATED.guide, coatings: [] } };
      await openKept(page, bare);
      assert.equal(await page.locator('.segment-table .seg-key-item').count(), 3);
      assert.equal(await page.locator('#leak-line .coat-bins').count(), 0);
    });
  });
}
