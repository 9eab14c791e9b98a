// End-to-end test of the designer's study panel in Debian's Chromium (playwright-core): pick the
// first bend's radius with the button beside its field, run a 4-point sweep at few rays (its first
// point refused: a radius the guide cannot bend to), read the table and compare every number with
// `tirtrace study` on the same document (identical), stop a longer sweep part-way (the partial
// table stays, no error), and keep the set-up with the design. Screenshots at 1280×800 and
// 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e. Run: node --test tests/e2e/

import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertNoJunk, inkShare, tracedAfter } from './design-helpers.mjs';
import { OUT, cli } from './harness.mjs';
import { cliStudy, closeDesigner, keptState, openDesigner, setField } from './study-helpers.mjs';

const BEND_RADIUS = 'route[1].bend.radius_mm';

/** The study table as numbers: per row the value, and each cell's share and ci95 (or null). */
function readTable(page) {
  return page.$$eval('#study-rows tr', (rows) => rows.map((tr) => {
    const cell = (key) => {
      const td = tr.querySelector(`td[data-key="${key}"]`);
      return td?.dataset.share === undefined ? null : { share: Number(td.dataset.share), ci95: Number(td.dataset.ci95) };
    };
    return {
      value: Number(tr.dataset.value),
      refused: tr.dataset.refused === 'true',
      delivered: cell('delivered'),
      difference: cell('difference'),
      bend: cell('bend'),
      problem: tr.querySelector('td.problem').textContent,
      text: tr.textContent,
    };
  }));
}

describe('the study panel of the designer', { concurrency: false }, () => {
  let designer;
  let page;
  let consoleErrors = [];

  before(async () => {
    designer = await openDesigner({ rays: 8202, acceptDownloads: true });
    ({ page, errors: consoleErrors } = designer);
  });

  after(() => closeDesigner(designer));

  test('a sweep of the first bend\'s radius shows the same numbers as tirtrace study', async () => {
    const pick = page.locator(`button.vary-pick[data-vary-path="${BEND_RADIUS}"]`);
    await pick.click();
    assert.equal(await pick.getAttribute('aria-pressed'), 'true');
    const label = await page.locator(`button.vary-pick[data-vary-path="${BEND_RADIUS}"]`).getAttribute('data-vary-label');
    assert.equal(await page.locator('#study-field').innerText(), label, 'the field named as the form labels it');
    // Prefilled around the current value (8 mm).
    const from = Number(await page.inputValue('#study-from'));
    const to = Number(await page.inputValue('#study-to'));
    assert.ok(from < 8 && to > 8, `prefilled ${from}…${to}`);
    await page.fill('#study-from', '1');
    await page.fill('#study-to', '7');
    await page.fill('#study-steps', '3');
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 120_000 });
    assert.match(await page.locator('#study-msg').innerText(), /^Done/);
    const rows = await readTable(page);
    assert.deepStrictEqual(rows.map((r) => r.value), [1, 3, 5, 7]);
    // The refused point: its problem in the designer's words (the form's label, not the path).
    assert.ok(rows[0].refused && rows[0].delivered === null);
    assert.ok(rows[0].problem.includes(label), rows[0].problem);
    assert.ok(!rows[0].problem.includes(BEND_RADIUS), rows[0].problem);
    // Every number equals the native command line's on the same document.
    const state = await keptState(page);
    assert.deepStrictEqual(state.study.field, BEND_RADIUS);
    const native = cliStudy({ version: 1, scenario: state.scenario, vary: { field: BEND_RADIUS, from: 1, to: 7, steps: 3 } });
    assert.equal(native.reference, 1);
    native.points.forEach((p, i) => {
      assert.equal(rows[i].value, p.value);
      if (!p.result) {
        assert.ok(rows[i].refused);
        return;
      }
      assert.deepStrictEqual(rows[i].delivered, p.result.delivered, `point ${i}: delivered`);
      assert.deepStrictEqual(rows[i].difference, p.result.difference, `point ${i}: difference`);
      assert.deepStrictEqual(rows[i].bend, p.result.segments_leaked[1], `point ${i}: the bend's leak`);
    });
    // A tighter bend leaks more: the design change, not noise (same rays at every point).
    assert.ok(rows[1].bend.share > rows[3].bend.share, 'a 3 mm bend leaks more than a 7 mm one');
    assert.ok(await inkShare(page, 'study-chart') > 0.02, 'the chart is drawn');
    await assertNoJunk(page, 'after the sweep');
    await page.locator('#study').screenshot({ path: join(OUT, 'study-1280.png') });
    await page.screenshot({ path: join(OUT, 'study-page-1280.png'), fullPage: false });
  });

  test('the inch switch redraws the sweep\'s chart and table in inches (and back)', async () => {
    const chart = page.locator('#study-chart');
    const pixels = () => page.evaluate(() => document.getElementById('study-chart').toDataURL('image/png'));
    assert.equal(await chart.getAttribute('data-unit'), 'mm');
    const inMm = await pixels();
    assert.match(await page.locator('#study-head th').first().innerText(), /\(mm\)$/);
    // A range typed but not run yet keeps its length: 2 mm reads 0.0787 in.
    await page.fill('#study-from', '2');
    await page.check('input[name="unit"][value="in"]');
    await page.waitForSelector('#study-chart[data-unit="in"]');
    assert.equal(await page.locator('#study-from-unit').innerText(), 'in');
    assert.equal(await page.inputValue('#study-from'), '0.0787');
    assert.equal(await page.inputValue('#study-to'), '0.2756', '7 mm');
    assert.notEqual(await pixels(), inMm, 'the chart is drawn again, its radius axis in inches');
    // The table follows: 1 mm is 0.0394 in.
    assert.match(await page.locator('#study-head th').first().innerText(), /\(in\)$/);
    assert.equal(await page.locator('#study-rows tr').first().locator('th').innerText(), '0.0394');
    assert.ok(await inkShare(page, 'study-chart') > 0.02, 'the chart is drawn');
    await page.locator('#study').screenshot({ path: join(OUT, 'study-inch-1280.png') });
    await page.setViewportSize({ width: 820, height: 1180 });
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
    await page.locator('#study-chart').scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(OUT, 'study-inch-820.png') });
    await page.setViewportSize({ width: 1280, height: 800 });
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
    await page.check('input[name="unit"][value="mm"]');
    await page.waitForSelector('#study-chart[data-unit="mm"]');
    assert.equal(await pixels(), inMm, 'back in millimetres, the same picture');
    assert.equal(await page.locator('#study-from-unit').innerText(), 'mm');
    assert.equal(await page.inputValue('#study-from'), '2', 'back as typed');
    assert.equal(await page.inputValue('#study-to'), '7');
    assert.deepStrictEqual(consoleErrors, []);
  });

  test('Stop during a longer sweep keeps the partial table and shows no error', async () => {
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 400_000));
    await page.fill('#study-from', '4');
    await page.fill('#study-to', '12');
    await page.fill('#study-steps', '8');
    await page.click('#study-run');
    await page.waitForFunction(() => document.querySelectorAll('#study-rows td[data-share]').length > 0, null, { timeout: 60_000 });
    await page.click('#study-stop');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 30_000 });
    const msg = page.locator('#study-msg');
    assert.match(await msg.innerText(), /^Stopped/);
    assert.notEqual(await msg.getAttribute('data-kind'), 'error');
    const rows = await readTable(page);
    assert.equal(rows.length, 9);
    assert.ok(rows.every((r) => r.delivered !== null), 'every point has its partial answer');
    assert.equal(await page.locator('#study-run').isDisabled(), false);
  });

  test('the set-up is kept with the design; a bad range is named by its input', async () => {
    const state = await keptState(page);
    assert.deepStrictEqual(
      { field: state.study.field, from: state.study.from, to: state.study.to, steps: state.study.steps },
      { field: BEND_RADIUS, from: 4, to: 12, steps: 8 },
    );
    await page.reload();
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    assert.equal(await page.inputValue('#study-steps'), '8');
    assert.equal(await page.locator(`button.vary-pick[data-vary-path="${BEND_RADIUS}"]`).getAttribute('aria-pressed'), 'true');
    await page.fill('#study-steps', '2.5');
    await page.click('#study-run');
    const msg = page.locator('#study-msg');
    await page.waitForFunction(() => document.getElementById('study-msg').dataset.kind === 'error');
    assert.match(await msg.innerText(), /^Steps must be a whole number/);
    assert.deepStrictEqual(consoleErrors, []);
  });

  test('a saved study file is the document tirtrace study reads, and opens again', async () => {
    await page.fill('#study-from', '4');
    await page.fill('#study-to', '10');
    await page.fill('#study-steps', '3');
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 120_000 });
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('#study-save')]);
    assert.match(download.suggestedFilename(), /\.study\.json$/);
    const file = join(OUT, 'saved.study.json');
    await download.saveAs(file);
    const saved = JSON.parse(readFileSync(file, 'utf8'));
    assert.deepStrictEqual(saved.vary, { field: BEND_RADIUS, from: 4, to: 10, steps: 3 });
    // The command line reads it and gives the numbers the table shows.
    const native = JSON.parse(cli(['study', file]));
    const rows = await readTable(page);
    assert.deepStrictEqual(rows.map((r) => r.delivered), native.points.map((p) => p.result.delivered));
    // A study file with its own values opens into the panel and runs them.
    saved.vary = { field: BEND_RADIUS, values: [5, 6.5] };
    await page.setInputFiles('#study-file', { name: 'two.study.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(saved)) });
    await page.waitForFunction(() => /opened/.test(document.getElementById('study-msg').textContent));
    assert.equal(await page.inputValue('#study-from'), '5');
    assert.equal(await page.inputValue('#study-to'), '6.5');
    assert.equal(await page.locator('#study-values-note').isHidden(), false);
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 120_000 });
    assert.deepStrictEqual((await readTable(page)).map((r) => r.value), [5, 6.5]);
  });

  test('editing the design after a study says the table is of the earlier design', async () => {
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 2 * 4096 + 11));
    assert.match(await page.locator('#study-msg').innerText(), /design has changed since this study ran/);
    assert.ok((await readTable(page)).length > 0, 'the table stays');
  });

  test('the panel at tablet size (820×1180)', async () => {
    await page.setViewportSize({ width: 820, height: 1180 });
    await page.fill('#study-steps', '3');
    await page.fill('#study-from', '3');
    await page.fill('#study-to', '9');
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 2 * 4096 + 10));
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 120_000 });
    const box = await page.locator('#study-run').boundingBox();
    assert.ok(box.height >= 44 && box.width >= 44, 'Run is a touch-sized target');
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    assert.ok(overflow <= 0, `no sideways scrolling (${overflow} px)`);
    await page.locator('#study').scrollIntoViewIfNeeded();
    await page.locator('#study').screenshot({ path: join(OUT, 'study-820.png') });
    await page.locator('.part-route').screenshot({ path: join(OUT, 'study-route-form-820.png') });
  });
});
