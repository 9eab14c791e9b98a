// End-to-end test of the study panel's "Find the limit" in Debian's Chromium (playwright-core):
// pick the first bend's radius, search for the smallest radius leaking at most 1 % at few rays,
// compare the answer and its interval with `tirtrace study` on the same document (identical),
// stop a longer search, name a bad range in the form's words, and stop a search when the design is
// edited. Screenshots at 1280×800 and 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e. Run: node --test tests/e2e/

import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { inkShare, tracedAfter } from './design-helpers.mjs';
import { OUT } from './harness.mjs';
import { cliStudy, closeDesigner, keptState, openDesigner, setField } from './study-helpers.mjs';

const BEND_RADIUS = 'route[1].bend.radius_mm';

describe('find the limit in the study panel', { concurrency: false }, () => {
  let designer;
  let page;
  let consoleErrors = [];

  before(async () => {
    designer = await openDesigner({ rays: 4106, acceptDownloads: true });
    ({ page, errors: consoleErrors } = designer);
  });

  after(() => closeDesigner(designer));

  test('the smallest radius for 1 % leak equals tirtrace study on the same document', async () => {
    await page.locator(`button.vary-pick[data-vary-path="${BEND_RADIUS}"]`).click();
    await page.check('input[name="study-mode"][value="find"]');
    assert.equal(await page.locator('#find-setup').isVisible(), true);
    assert.equal(await page.locator('#study-run').isVisible(), false, 'the sweep controls are hidden');
    assert.equal(await page.inputValue('#find-percent'), '1');
    await page.fill('#find-from', '3');
    await page.fill('#find-to', '30');
    await page.click('#find-run');
    await page.waitForSelector('#study[data-find-state="done"]', { timeout: 300_000 });
    assert.match(await page.locator('#find-msg').innerText(), /^Done/);
    const answer = page.locator('#find-answer');
    const text = await answer.innerText();
    const state = await keptState(page);
    const native = cliStudy({
      version: 1,
      scenario: state.scenario,
      find: { smallest: BEND_RADIUS, from: 3, to: 30, bend_leak_at_most_percent: 1 },
    });
    assert.equal(await answer.getAttribute('data-verdict'), native.verdict);
    assert.equal(await answer.getAttribute('data-answer'), String(native.answer ?? ''));
    assert.equal(await answer.getAttribute('data-low'), String(native.interval?.low ?? ''));
    assert.equal(await answer.getAttribute('data-high'), String(native.interval?.high ?? ''));
    const values = await page.$$eval('#find-rows tr', (rows) => rows.map((r) => Number(r.dataset.value)));
    assert.deepStrictEqual(values, native.evaluations.map((e) => e.value));
    if (native.verdict === 'found') {
      assert.match(text, /^Smallest centre-line radius for ≤ 1 % leak in bend 2: /);
      assert.match(text, /closed form/);
    }
    assert.ok(await inkShare(page, 'find-chart') > 0.02, 'the chart is drawn');
    // The chart saves as a PNG (its signature: 0x89 "PNG").
    const [png] = await Promise.all([page.waitForEvent('download'), page.click('#find-png')]);
    assert.match(png.suggestedFilename(), /-search\.png$/);
    const bytes = readFileSync(await png.path());
    assert.deepStrictEqual([...bytes.subarray(0, 4)], [0x89, 0x50, 0x4e, 0x47]);
    await page.locator('#study').screenshot({ path: join(OUT, 'find-1280.png') });
    await page.setViewportSize({ width: 820, height: 1180 });
    await page.locator('#study').screenshot({ path: join(OUT, 'find-820.png') });
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  test('the inch switch redraws the search\'s chart, answer and table in inches (and back)', async () => {
    const chart = page.locator('#find-chart');
    const pixels = () => page.evaluate(() => document.getElementById('find-chart').toDataURL('image/png'));
    assert.equal(await chart.getAttribute('data-unit'), 'mm');
    const inMm = await pixels();
    const answerMm = await page.locator('#find-answer').innerText();
    await page.check('input[name="unit"][value="in"]');
    await page.waitForSelector('#find-chart[data-unit="in"]');
    assert.notEqual(await pixels(), inMm, 'the chart is drawn again, its radius axis in inches');
    assert.ok(await inkShare(page, 'find-chart') > 0.02, 'the chart is drawn');
    // The range, the answer and the table follow (the answer itself is kept in mm), rounded in
    // inches: 3 significant figures of the answer in inches.
    assert.equal(await page.locator('#find-from-unit').innerText(), 'in');
    assert.equal(await page.inputValue('#find-from'), '0.1181', '3 mm');
    assert.equal(await page.inputValue('#find-to'), '1.1811', '30 mm');
    const answerIn = await page.locator('#find-answer').innerText();
    assert.notEqual(answerIn, answerMm);
    assert.doesNotMatch(answerIn, / mm\b/, answerIn);
    const found = Number(await page.locator('#find-answer').getAttribute('data-answer'));
    if (found) assert.ok(answerIn.includes(`: ${Number((found / 25.4).toPrecision(3))} in (95 %: `), answerIn);
    assert.match(await page.locator('#find-head th').first().innerText(), /\(in\)$/);
    const first = Number(await page.locator('#find-rows tr').first().getAttribute('data-value'));
    assert.equal(await page.locator('#find-rows tr').first().locator('th').innerText(), String(Number((first / 25.4).toFixed(4))));
    await page.locator('#study').screenshot({ path: join(OUT, 'find-inch-1280.png') });
    await page.setViewportSize({ width: 820, height: 1180 });
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
    await chart.scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(OUT, 'find-inch-820.png') });
    await page.setViewportSize({ width: 1280, height: 800 });
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
    await page.check('input[name="unit"][value="mm"]');
    await page.waitForSelector('#find-chart[data-unit="mm"]');
    assert.equal(await pixels(), inMm, 'back in millimetres, the same picture');
    assert.equal(await page.locator('#find-answer').innerText(), answerMm);
    assert.equal(await page.inputValue('#find-from'), '3');
    assert.deepStrictEqual(consoleErrors, []);
  });

  test('every bend together: a factor on every radius, the picked bend\'s leak counted, as tirtrace study', async () => {
    await page.check('#find-every');
    await page.fill('#find-from', '3');
    await page.fill('#find-to', '30');
    await page.click('#find-run');
    await page.waitForSelector('#study[data-find-state="done"]', { timeout: 300_000 });
    const state = await keptState(page);
    assert.equal(state.find.every, true);
    const r0 = state.scenario.route[1].bend.radius_mm;
    const native = cliStudy({
      version: 1,
      scenario: state.scenario,
      find: { smallest: 'route[*].bend.radius_mm', from: 3 / r0, to: 30 / r0, bend: 1, bend_leak_at_most_percent: 1 },
    });
    const answer = page.locator('#find-answer');
    assert.equal(await answer.getAttribute('data-verdict'), native.verdict);
    assert.equal(await answer.getAttribute('data-answer'), String(native.answer ?? ''));
    assert.equal(await answer.getAttribute('data-low'), String(native.interval?.low ?? ''));
    assert.equal(await answer.getAttribute('data-high'), String(native.interval?.high ?? ''));
    if (native.verdict === 'found') {
      assert.match(await answer.innerText(), /^Smallest centre-line radius of bend 2, every bend scaled alike, for ≤ 1 % leak in bend 2: /);
    }
    assert.match(await page.locator('#find-head').innerText(), /every bend scaled alike/);
    await page.uncheck('#find-every');
  });

  test('the search set-up is kept with the design over a reload', async () => {
    await page.fill('#find-percent', '2');
    await page.fill('#find-from', '5');
    await page.click('#find-run');
    await page.waitForSelector('#study[data-find-state="done"]', { timeout: 300_000 });
    await page.reload();
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    assert.equal(await page.locator('#find-setup').isVisible(), true, 'the panel opens on Find the limit');
    assert.equal(await page.inputValue('#find-percent'), '2');
    assert.equal(await page.inputValue('#find-from'), '5');
    await page.fill('#find-percent', '1');
  });

  test('a bad range is named in the form\'s words', async () => {
    await page.fill('#find-from', '20');
    await page.fill('#find-to', '10');
    await page.click('#find-run');
    await page.waitForFunction(() => document.getElementById('find-msg').dataset.kind === 'error');
    const msg = await page.locator('#find-msg').innerText();
    assert.match(msg, /^To must be more than From \(20\)/);
    assert.ok(!msg.includes('find.'), msg);
  });

  test('Stop, and editing the design stops a running search', async () => {
    await page.fill('#find-from', '3');
    await page.fill('#find-to', '30');
    await page.click('#find-run');
    await page.waitForSelector('#study[data-find-state="running"]');
    await page.click('#find-stop');
    await page.waitForSelector('#study[data-find-state="done"]');
    assert.match(await page.locator('#find-msg').innerText(), /^Stopped/);
    await page.click('#find-run');
    await page.waitForSelector('#study[data-find-state="running"]');
    await setField(page, '#f-trace-rays', 4096 + 11);
    await page.waitForSelector('#study[data-find-state="done"]');
    assert.match(await page.locator('#find-msg').innerText(), /design changed, so the search was stopped/);
    assert.equal(await page.locator('#find-run').isDisabled(), false);
    assert.deepStrictEqual(consoleErrors, []);
  });

  test('the bend table\'s Find runs the search for that bend and shows the answer', async () => {
    const row = page.locator('#bend-rows tr[data-segment="1"]');
    assert.match(await page.locator('#bend-find-head').innerText(), /Radius for ≤ 1 % leak/);
    await row.locator('button.bend-find-run').click();
    await page.waitForSelector('#study[data-find-state="done"]', { timeout: 300_000 });
    await page.waitForFunction(() => !/Searching/.test(document.querySelector('#bend-rows tr[data-segment="1"] .bend-find-answer').textContent));
    const cell = await row.locator('.bend-find-answer').innerText();
    const state = await keptState(page);
    assert.equal(state.find.field, BEND_RADIUS);
    const native = cliStudy({
      version: 1,
      scenario: state.scenario,
      find: { smallest: BEND_RADIUS, from: state.find.from, to: state.find.to, bend_leak_at_most_percent: 1 },
    });
    assert.equal(await page.locator('#find-answer').getAttribute('data-answer'), String(native.answer ?? ''));
    if (native.verdict === 'found') assert.match(cell, /^\d+(\.\d+)? mm centre line \(95 %: /);
    else assert.ok(cell.length > 0, 'a verdict in words');
    await page.locator('.bends-card').screenshot({ path: join(OUT, 'find-bends-1280.png') });
    // In inches, the answer in the table follows (three significant figures in inches).
    await page.check('input[name="unit"][value="in"]');
    await page.waitForSelector('#find-chart[data-unit="in"]');
    const cellIn = () => row.locator('.bend-find-answer').innerText();
    if (native.verdict === 'found') assert.ok((await cellIn()).startsWith(`${Number((native.answer / 25.4).toPrecision(3))} in centre line (95 %: `), await cellIn());
    await page.check('input[name="unit"][value="mm"]');
    await page.waitForSelector('#find-chart[data-unit="mm"]');
    assert.equal(await cellIn(), cell);
    assert.deepStrictEqual(consoleErrors, []);
  });
});
