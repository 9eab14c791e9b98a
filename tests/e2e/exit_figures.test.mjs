// The rectangular chip in the form and the exit figures in the report's figure list, against the
// native CLI's report of the same scenario (native = wasm bit for bit, so the texts agree).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT, OUT } from './harness.mjs';
import { assertNoJunk, closeDesignPage, cliTrace, designPage, openKept, pageScenario, tracedAfter } from './design-helpers.mjs';

const example = JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', 'panel_status_bar_rectangular_chip.json'), 'utf8'));
const scenario = { ...example, trace: { ...example.trace, rays: 40_000 } };

for (const viewport of [{ width: 1280, height: 800 }, { width: 820, height: 1180 }]) {
  test(`rectangular chip and exit figures at ${viewport.width}×${viewport.height}`, async () => {
    const errors = [];
    const opened = await designPage(errors, { viewport });
    try {
      const { page } = opened;
      await openKept(page, scenario);
      // The form: the choice and both sizes, labelled.
      const area = page.locator('select[data-path="source.emitter.led.area"]');
      assert.equal(await area.inputValue(), 'rectangle');
      assert.ok((await area.locator('option').allTextContents()).includes('Rectangular chip'));
      for (const [path, label] of [['width_mm', 'Chip width'], ['height_mm', 'Chip height']]) {
        const input = page.locator(`input[data-path="source.emitter.led.area.rectangle.${path}"]`);
        assert.equal(await input.count(), 1, path);
        const id = await input.getAttribute('id');
        assert.match(await page.locator(`label[for="${id}"]`).innerText(), new RegExp(label));
      }
      // The figures, as the CLI reports them.
      const cli = cliTrace(await pageScenario(page)).exit_figures;
      const items = await page.$$eval('#extra .extra-item', (els) => els.map((e) => [e.querySelector('dt').textContent, e.querySelector('dd').textContent]));
      const find = (start) => items.find(([k]) => k.startsWith(start));
      const u = cli.exit_face_uniformity;
      const ratio = find('Exit face uniformity, least ÷ greatest');
      assert.ok(ratio, JSON.stringify(items));
      assert.ok(ratio[0].includes(`${u.blocks_counted} of ${u.blocks_on_face} blocks`), ratio[0]);
      const interval = (v, digits) => `${v.value.toFixed(digits)} (95 %: ${v.low95.toFixed(digits)} to ${v.high95.toFixed(digits)})`;
      assert.equal(ratio[1], interval(u.min_over_max, 2));
      const cv = find('Exit face variation');
      assert.equal(cv[1], interval(u.coefficient_of_variation, 3));
      // The design has a detector (a window): its uniformity after the exit face's, in the
      // words the page uses for the receiver.
      const d = cli.receiver_uniformity;
      assert.ok(d && d.min_over_max, JSON.stringify(cli));
      const keys = items.map(([k]) => k);
      const dRatio = find('On the detector: uniformity, least ÷ greatest');
      assert.ok(dRatio, JSON.stringify(items));
      assert.ok(dRatio[0].includes(`${d.blocks_counted} of ${d.blocks_on_face} blocks`), dRatio[0]);
      assert.equal(dRatio[1], interval(d.min_over_max, 2));
      const dCv = find('On the detector: variation');
      assert.equal(dCv[1], interval(d.coefficient_of_variation, 3));
      assert.ok(keys.indexOf(cv[0]) < keys.indexOf(dRatio[0]) && keys.indexOf(dCv[0]) < keys.indexOf(find('Half-intensity')[0]), keys.join(' | '));
      assert.match(await page.locator('#extra-note').innerText(), /exit face and the detector are each cut into 9 × 9 blocks/);
      const angle = find('Half-intensity full angle');
      assert.equal(angle[1], `${cli.half_intensity_full_angle_deg.value.toFixed(1)}° ± ${cli.half_intensity_full_angle_deg.ci95.toFixed(1)}°`);
      assert.match(await page.locator('#extra-note').innerText(), /9 × 9 blocks/);
      await assertNoJunk(page, 'exit figures');
      // One column (tablets): the figures open below the answer with one tap.
      if (viewport.width <= 1000) await page.click('.answer-card .more-figures');
      await page.locator('#extra').scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `exit-figures-${viewport.width}.png`) });
      // The detector's irradiance map: its card shown, the canvas drawn (in the unit shown), not
      // blank; a design without a detector hides the card.
      const card = page.locator('#receiver-map-card');
      assert.ok(await card.isVisible(), 'the detector map card is shown');
      assert.equal(await card.locator('.picture-title').innerText(), 'Light on the detector');
      assert.equal(await page.getAttribute('#receiver-map', 'data-unit'), 'mm');
      const colours = await page.$eval('#receiver-map', (c) => {
        const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
        const seen = new Set();
        for (let i = 0; i < d.length; i += 4 * 97) seen.add(`${d[i]},${d[i + 1]},${d[i + 2]}`);
        return seen.size;
      });
      assert.ok(colours > 20, `the detector map has ${colours} colours`);
      // The page's length switch redraws it in inches, and back.
      await page.check('input[name="unit"][value="in"]');
      await page.waitForFunction(() => document.getElementById('receiver-map').dataset.unit === 'in');
      await page.check('input[name="unit"][value="mm"]');
      await page.waitForFunction(() => document.getElementById('receiver-map').dataset.unit === 'mm');
      // One column: fold the figures again, so the answer card (kept on screen) is short.
      if (viewport.width <= 1000) await page.click('.answer-card .more-figures');
      await card.scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `detector-map-${viewport.width}.png`) });
      // A chip of no height: the message names the field and its range, under it.
      const height = page.locator('input[data-path="source.emitter.led.area.rectangle.height_mm"]');
      await height.fill('0');
      await height.dispatchEvent('change');
      const msg = page.locator('.field-msg[data-for="source.emitter.led.area.rectangle.height_mm"]');
      await msg.waitFor({ state: 'visible' });
      assert.match(await msg.innerText(), /Chip height.*at least 0\.001 mm/);
      await height.scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `rectangular-chip-${viewport.width}.png`) });
      // Without a detector: no detector figures and no detector map.
      const bare = structuredClone(scenario);
      delete bare.receiver;
      await openKept(page, bare);
      assert.ok(await page.locator('#receiver-map-card').isHidden(), 'no detector, no map');
      const keysBare = await page.$$eval('#extra .extra-item dt', (els) => els.map((e) => e.textContent));
      assert.ok(keysBare.some((k) => k.startsWith('Exit face uniformity')), keysBare.join(' | '));
      assert.ok(!keysBare.some((k) => k.includes('detector')), keysBare.join(' | '));
      assert.deepEqual(errors, []);
    } finally {
      await closeDesignPage(opened);
    }
  });
}
