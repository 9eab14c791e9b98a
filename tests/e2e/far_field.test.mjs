// The far-field intensity map on the design page: its figure is drawn after a trace, its table
// holds every lit cell with the native CLI's figures (native = wasm bit for bit, so the texts
// agree), the inch switch leaves it whole, and nothing reads NaN.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT, OUT } from './harness.mjs';
import { assertNoJunk, closeDesignPage, cliTrace, designPage, inkShare, openKept, pageScenario } from './design-helpers.mjs';

const example = JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', 'thermostat_status_led.json'), 'utf8'));
const scenario = { ...example, trace: { ...example.trace, rays: 40_000 } };

for (const viewport of [{ width: 1280, height: 800 }, { width: 820, height: 1180 }]) {
  test(`far-field intensity map at ${viewport.width}×${viewport.height}`, async () => {
    const errors = [];
    const opened = await designPage(errors, { viewport, acceptDownloads: true });
    try {
      const { page } = opened;
      await openKept(page, scenario);
      const card = page.locator('#far-field-card');
      await card.scrollIntoViewIfNeeded();
      assert.equal(await page.$eval('#far-field-title', (e) => e.tagName), 'H2');
      assert.match(await page.locator('#far-field-title').innerText(), /Intensity map beyond the window/);
      // Drawn: coloured cells and axes, not a blank canvas.
      const ink = await inkShare(page, 'far-field');
      assert.ok(ink > 0.02, `the map is drawn (${ink} of the canvas inked)`);
      // Beside the other charts: as wide as the intensity chart.
      const [mine, theirs] = await Promise.all([card.boundingBox(), page.locator('#intensity').locator('xpath=..').boundingBox()]);
      assert.ok(Math.abs(mine.width - theirs.width) < 2, `${mine.width} vs ${theirs.width}`);
      await page.screenshot({ path: join(OUT, `far-field-${viewport.width}.png`) });
      // Saved as a picture, named after the design and the chart.
      const [png] = await Promise.all([page.waitForEvent('download'), page.click('button.png[data-canvas="far-field"]')]);
      assert.match(png.suggestedFilename(), /-far-field\.png$/);

      // The numbers behind it: a row per lit cell, as the command line reports them.
      const cli = cliTrace(await pageScenario(page)).far_field;
      assert.equal(cli.cells, 45);
      const lit = cli.share.map((v, k) => [v, k]).filter(([v]) => v > 0).map(([, k]) => k);
      await page.click('#far-field-data summary');
      await page.waitForFunction((n) => document.querySelectorAll('#far-field-rows tr').length === n, lit.length);
      const head = await page.locator('#far-field-head th').allInnerTexts();
      assert.deepEqual(head.slice(0, 4), ['Horizontal angle, °', 'Vertical angle, °', 'Intensity, % of the emitted light per sr', '± 95 %']);
      assert.equal(head[4], 'Intensity (± 95 %)', 'the source has a flux: cd');
      // The axis cell (0°, 0°): its intensity in % per sr and in cd as the CLI has it.
      const n = cli.cells;
      const axis = Math.floor(n / 2) * n + Math.floor(n / 2);
      const rowOfAxis = lit.filter((k) => Math.floor(k / n) > Math.floor(axis / n)).length + lit.filter((k) => Math.floor(k / n) === Math.floor(axis / n) && k < axis).length;
      const cells = await page.locator('#far-field-rows tr').nth(rowOfAxis).locator('td').allInnerTexts();
      assert.deepEqual(cells.slice(0, 2), ['0', '0']);
      const decimals = cells[2].split('.')[1]?.length ?? 0;
      assert.ok(Math.abs(Number(cells[2]) - 100 * cli.share_per_sr[axis]) <= 0.5 * 10 ** -decimals + 1e-12, `${cells[2]} vs ${100 * cli.share_per_sr[axis]}`);
      assert.match(cells[4], /^[0-9.]+ ± [0-9.<\s]+ m?cd$/);
      // Top row first: the highest lit vertical angle.
      const top = Math.max(...lit.map((k) => Math.floor(k / n)));
      const firstRow = await page.locator('#far-field-rows tr').first().locator('td').allInnerTexts();
      assert.equal(Number(firstRow[1].replace('\u2212', '-')), -90 + (top + 0.5) * cli.cell_deg);
      await assertNoJunk(page, 'far-field map');
      await page.screenshot({ path: join(OUT, `far-field-table-${viewport.width}.png`) });

      // The inch switch: the map (in angles) is drawn again, whole, and its table stays.
      await page.check('input[name="unit"][value="in"]');
      await page.waitForTimeout(200);
      assert.ok((await inkShare(page, 'far-field')) > 0.02);
      assert.equal(await page.locator('#far-field-rows tr').count(), lit.length);
      await assertNoJunk(page, 'far-field map in inches');
      await page.check('input[name="unit"][value="mm"]');
      assert.deepEqual(errors, []);
    } finally {
      await closeDesignPage(opened);
    }
  });
}
