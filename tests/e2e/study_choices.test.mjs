// End-to-end test of the study panel's other kinds of sweep in Debian's Chromium
// (playwright-core): the pipe's material compared by pressing ⇆ beside its list (a choice field,
// the materials ticked in the panel), every bend's radius scaled together (the "every bend"
// line beside a bend's radius), each page table equal to `tirtrace study` on the same document,
// and an edit of the design stopping a running study with a message that says so. Screenshots at
// 1280×800 and 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e. Run: node --test tests/e2e/

import assert from 'node:assert/strict';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertNoJunk, inkShare, tracedAfter } from './design-helpers.mjs';
import { OUT } from './harness.mjs';
import { cliStudy, closeDesigner, keptState, openDesigner, setField } from './study-helpers.mjs';

/** Each row's delivered share and ci95 (null when refused) and its shown value. */
function readRows(page) {
  return page.$$eval('#study-rows tr', (rows) => rows.map((tr) => {
    const td = tr.querySelector('td[data-key="delivered"]');
    const bend = tr.querySelector('td[data-key="bend"]');
    return {
      shown: tr.querySelector('th').textContent,
      delivered: td?.dataset.share === undefined ? null : { share: Number(td.dataset.share), ci95: Number(td.dataset.ci95) },
      bend: bend?.dataset.share === undefined ? null : { share: Number(bend.dataset.share), ci95: Number(bend.dataset.ci95) },
    };
  }));
}

describe('the study panel: materials, every bend, edits', { concurrency: false }, () => {
  let designer;
  let page;
  let consoleErrors = [];

  before(async () => {
    designer = await openDesigner({ rays: 8202 });
    ({ page, errors: consoleErrors } = designer);
  });

  after(() => closeDesigner(designer));

  test('the pipe material compared from ⇆ beside its list equals tirtrace study', async () => {
    await page.click('button.vary-pick[data-vary-path="guide.material.library"]');
    assert.equal(await page.locator('#study-field').innerText(), 'Material');
    assert.ok(await page.locator('#study-choices').isVisible(), 'the materials to compare are listed');
    assert.ok(!(await page.locator('#study-from').isVisible()), 'no From/To for a choice');
    // Too few ticked: named in the panel's words, nothing traced.
    const boxes = page.locator('#study-choice-list input[type="checkbox"]');
    for (let i = 0; i < await boxes.count(); i += 1) await boxes.nth(i).setChecked(false);
    await page.check('#study-choice-list input[value="pmma"]');
    await page.click('#study-run');
    assert.match(await page.locator('#study-msg').innerText(), /Choose at least two materials to compare \(1 chosen\)/);
    await page.check('#study-choice-list input[value="polycarbonate"]');
    await page.check('#study-choice-list input[value="pdms"]');
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 120_000 });
    const rows = await readRows(page);
    assert.deepStrictEqual(rows.map((r) => r.shown), ['Acrylic (PMMA)', 'Polycarbonate (PC)', 'Silicone (PDMS)'], 'named as the form lists them');
    assert.ok(!(await page.locator('#study-chart').isVisible()), 'no line through material names');
    const state = await keptState(page);
    assert.deepStrictEqual(state.study.values, ['pmma', 'polycarbonate', 'pdms']);
    const native = cliStudy({ version: 1, scenario: state.scenario, vary: { field: 'guide.material.library', values: state.study.values } });
    native.points.forEach((p, i) => assert.deepStrictEqual(rows[i].delivered, p.result.delivered, `material ${p.value}`));
    await assertNoJunk(page, 'after the material study');
    await page.locator('#study').screenshot({ path: join(OUT, 'study-materials-1280.png') });
  });

  test('every bend scaled together: the picked bend\'s radii, factors for every bend, as tirtrace study', async () => {
    const path = 'route[1].bend.radius_mm';
    await page.click(`button.vary-pick[data-vary-path="${path}"]`);
    assert.ok(await page.locator('#study-every-line').isVisible(), 'offered beside a bend radius');
    await page.check('#study-every');
    await page.fill('#study-from', '6');
    await page.fill('#study-to', '12');
    await page.fill('#study-steps', '2');
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 120_000 });
    const state = await keptState(page);
    assert.equal(state.study.every, true);
    const radius = state.scenario.route[1].bend.radius_mm;
    const factors = [6, 9, 12].map((r) => r / radius);
    const native = cliStudy({ version: 1, scenario: state.scenario, vary: { field: 'route[*].bend.radius_mm', factors } });
    assert.equal(native.factor, true);
    const rows = await readRows(page);
    assert.equal(rows.length, 3);
    native.points.forEach((p, i) => {
      assert.deepStrictEqual(rows[i].delivered, p.result.delivered, `factor ${p.value}`);
      assert.deepStrictEqual(rows[i].bend, p.result.segments_leaked[1], `factor ${p.value}: the picked bend's leak`);
      assert.ok(rows[i].shown.includes(`× ${Number(p.value.toPrecision(3))}`), rows[i].shown);
    });
    assert.match(await page.locator('#study-head').innerText(), /every bend scaled alike/);
    await page.locator('#study').screenshot({ path: join(OUT, 'study-every-bend-1280.png') });
  });

  test('a grid from the form: a bend radius × the materials, as tirtrace study, drawn as one curve per material', async () => {
    const path = 'route[1].bend.radius_mm';
    await page.click(`button.vary-pick[data-vary-path="${path}"]`);
    await page.uncheck('#study-every');
    await page.check('#study-grid');
    await page.click('button.vary-pick[data-vary-path="guide.material.library"]');
    assert.ok(await page.locator('#study-and').isVisible(), 'the second field is shown');
    assert.equal(await page.locator('#study-and-field').innerText(), 'Material');
    const boxes = page.locator('#study-choice-list input[type="checkbox"]');
    for (let i = 0; i < await boxes.count(); i += 1) await boxes.nth(i).setChecked(false);
    await page.check('#study-choice-list input[value="pmma"]');
    await page.check('#study-choice-list input[value="polycarbonate"]');
    await page.fill('#study-from', '6');
    await page.fill('#study-to', '12');
    await page.fill('#study-steps', '2');
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="done"]', { timeout: 120_000 });
    const state = await keptState(page);
    assert.deepStrictEqual(state.study.and.values, ['pmma', 'polycarbonate']);
    const native = cliStudy({
      version: 1,
      scenario: state.scenario,
      vary: { field: path, from: 6, to: 12, steps: 2 },
      and_vary: { field: 'guide.material.library', values: ['pmma', 'polycarbonate'] },
    });
    const rows = await readRows(page);
    assert.equal(rows.length, 6);
    native.points.forEach((p, i) => assert.deepStrictEqual(rows[i].delivered, p.result.delivered, `${p.value} × ${p.and_value}`));
    const materials = await page.$$eval('#study-rows td[data-key="and"]', (tds) => tds.map((td) => td.textContent));
    assert.deepStrictEqual(materials, ['Acrylic (PMMA)', 'Polycarbonate (PC)', 'Acrylic (PMMA)', 'Polycarbonate (PC)', 'Acrylic (PMMA)', 'Polycarbonate (PC)']);
    assert.ok(await inkShare(page, 'study-chart') > 0.02, 'the grid is drawn');
    await page.locator('#study').screenshot({ path: join(OUT, 'study-grid-1280.png') });
    // Back to one number.
    await page.uncheck('#study-grid');
    assert.ok(!(await page.locator('#study-and').isVisible()));
    assert.equal((await keptState(page)).study.and, undefined);
  });

  test('an edit of the design stops a running study and says so', async () => {
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 400_000));
    await page.uncheck('#study-every');
    await page.fill('#study-from', '4');
    await page.fill('#study-to', '12');
    await page.fill('#study-steps', '8');
    await page.click('#study-run');
    await page.waitForSelector('#study[data-state="running"]');
    await setField(page, '#f-source-gap-mm', 0.3);
    await page.waitForSelector('#study[data-state="done"]', { timeout: 60_000 });
    assert.match(await page.locator('#study-msg').innerText(), /the design was edited while the study ran/);
    await page.setViewportSize({ width: 820, height: 1180 });
    await page.locator('#study').screenshot({ path: join(OUT, 'study-edited-820.png') });
    assert.deepStrictEqual(consoleErrors, []);
  });
});
