// End-to-end test of the designer's tolerances panel in Debian's Chromium (playwright-core): add
// tolerances on the first bend's radius and the source's gap with the ± buttons beside their
// fields, run a few variants at few rays and compare every number the panel shows with `tirtrace
// study` on the same document (identical); stop a longer run part-way (the partial result stays,
// no error); a bad σ is named in the form's words; the set-up survives a reload and goes into the
// saved study file; editing the design while it runs stops it and says why. Screenshots at
// 1280×800 and 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e. Run: node --test tests/e2e/

import assert from 'node:assert/strict';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertNoJunk, inkShare, tracedAfter } from './design-helpers.mjs';
import { OUT, cli } from './harness.mjs';
import { cliStudy, closeDesigner, keptState, openDesigner, setField } from './study-helpers.mjs';

const BEND_RADIUS = 'route[1].bend.radius_mm';
const GAP = 'source.gap_mm';

/** The result as the panel shows it: the summary's numbers and the ranking table's. */
function readResult(page) {
  return page.evaluate(() => {
    const s = document.getElementById('tol-summary');
    const rows = [...document.querySelectorAll('#tol-ranking tr')].map((tr) => {
      const effect = tr.querySelector('td[data-key="effect"]');
      const r = tr.querySelector('td[data-key="r"]');
      return {
        field: tr.dataset.field,
        label: tr.querySelector('th').textContent,
        effect: effect.dataset.share === undefined ? null : { share: Number(effect.dataset.share), ci95: Number(effect.dataset.ci95) },
        r: r.dataset.r === undefined ? null : Number(r.dataset.r),
      };
    });
    return {
      text: s.textContent,
      nominal: { share: Number(s.dataset.nominal), ci95: Number(s.dataset.nominalCi95) },
      p05: Number(s.dataset.p05),
      p50: Number(s.dataset.p50),
      p95: Number(s.dataset.p95),
      traced: Number(s.dataset.traced),
      refused: Number(s.dataset.refused),
      rows,
    };
  });
}

const widthInput = (path) => `#tol-rows input[data-tol-path="${path}"]`;

/** The study document of the page's kept state, as the panel builds it. */
function documentOf(state) {
  const spreads = state.tolerances.spreads.map((s) => (s.kind === 'uniform' ? { field: s.field, half_width: s.width } : { field: s.field, sigma: s.width }));
  return { version: 1, scenario: state.scenario, tolerances: { spreads, variants: state.tolerances.variants } };
}

describe('the tolerances panel of the designer', { concurrency: false }, () => {
  let designer;
  let page;
  let consoleErrors = [];

  before(async () => {
    designer = await openDesigner({ rays: 4106, acceptDownloads: true });
    ({ page, errors: consoleErrors } = designer);
  });

  after(() => closeDesigner(designer));

  test('two tolerances from the form give the same numbers as tirtrace study', async () => {
    await page.click(`button.tol-pick[data-tol-path="${BEND_RADIUS}"]`);
    await page.click(`button.tol-pick[data-tol-path="${GAP}"]`);
    assert.equal(await page.locator(`button.tol-pick[data-tol-path="${BEND_RADIUS}"]`).getAttribute('aria-pressed'), 'true');
    const radiusLabel = await page.getAttribute(`button.tol-pick[data-tol-path="${BEND_RADIUS}"]`, 'data-tol-label');
    const gapLabel = await page.getAttribute(`button.tol-pick[data-tol-path="${GAP}"]`, 'data-tol-label');
    // Prefilled: σ = 5 % of the radius; 0.05 mm for the gap (a gap, not a size).
    const radius = Number(await page.inputValue(`#editor input[data-path="${BEND_RADIUS}"]`));
    const radiusWidth = Number(await page.inputValue(widthInput(BEND_RADIUS)));
    assert.equal(radiusWidth, Number((0.05 * radius).toPrecision(3)));
    assert.equal(Number(await page.inputValue(widthInput(GAP))), 0.05);
    // The gap spread uniformly within ± 0.08 mm; 12 variants.
    await page.selectOption(`#tol-rows select[data-tol-kind="${GAP}"]`, 'uniform');
    await setField(page, widthInput(GAP), '0.08');
    await setField(page, '#tol-variants', '12');
    await page.click('#tol-run');
    await page.waitForSelector('#tolerances[data-state="done"]', { timeout: 120_000 });
    assert.match(await page.locator('#tol-msg').innerText(), /^Done/);
    assert.equal(await page.locator('#tol-progress').innerText(), '2 of 2 batches of every variant');
    const shown = await readResult(page);
    const state = await keptState(page);
    assert.deepStrictEqual(
      state.tolerances.spreads.map(({ field, kind, width }) => ({ field, kind, width })),
      [{ field: BEND_RADIUS, kind: 'normal', width: radiusWidth }, { field: GAP, kind: 'uniform', width: 0.08 }],
    );
    const native = cliStudy(documentOf(state));
    assert.deepStrictEqual(shown.nominal, native.nominal);
    assert.equal(shown.p05, native.delivered.p05);
    assert.equal(shown.p50, native.delivered.p50);
    assert.equal(shown.p95, native.delivered.p95);
    assert.equal(shown.traced, native.variants_traced);
    assert.equal(shown.refused, native.variants_refused);
    assert.equal(shown.rows.length, 2);
    native.sensitivity.one_at_a_time.forEach((o, i) => {
      assert.equal(shown.rows[i].field, o.field, `rank ${i}`);
      assert.deepStrictEqual(shown.rows[i].effect, o.effect, `rank ${i}: effect`);
      const r = native.sensitivity.correlation.find((c) => c.field === o.field).r;
      assert.equal(shown.rows[i].r, r, `rank ${i}: correlation`);
    });
    // In the designer's words: the form's labels, never the paths.
    const top = native.sensitivity.one_at_a_time[0].field === GAP ? gapLabel : radiusLabel;
    assert.match(shown.text, /^Delivered: nominal [\d.]+ % ± [\d.]+; 90 % of parts between [\d.]+ % and [\d.]+ % \(5th to 95th percentile over 12 variants, each ± [\d.]+ from ray noise\); most influential: /);
    assert.ok(shown.text.includes(`most influential: ${top} — `), shown.text);
    assert.ok(!shown.text.includes('_mm'), shown.text);
    assert.deepStrictEqual(shown.rows.map((r) => r.label).sort(), [gapLabel, radiusLabel].sort());
    assert.ok(await inkShare(page, 'tol-chart') > 0.02, 'the chart is drawn');
    // The CSV is the command line's.
    const [csv] = await Promise.all([page.waitForEvent('download'), page.click('#tol-csv')]);
    const csvFile = join(OUT, 'tolerances.csv');
    await csv.saveAs(csvFile);
    const docFile = join(OUT, 'tolerances-doc.json');
    writeFileSync(docFile, JSON.stringify(documentOf(state)));
    assert.equal(readFileSync(csvFile, 'utf8'), cli(['study', docFile, '--csv']));
    await assertNoJunk(page, 'after the tolerance run');
    await page.locator('#tolerances').screenshot({ path: join(OUT, 'tolerances-1280.png') });
    await page.screenshot({ path: join(OUT, 'tolerances-form-1280.png') });
  });

  test('Stop during a longer run keeps the partial result and shows no error', async () => {
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 200_000));
    await setField(page, '#tol-variants', '40');
    await page.click('#tol-run');
    await page.waitForFunction(() => document.querySelectorAll('#tol-ranking td[data-share]').length > 0, null, { timeout: 60_000 });
    await page.click('#tol-stop');
    await page.waitForSelector('#tolerances[data-state="done"]', { timeout: 30_000 });
    const msg = page.locator('#tol-msg');
    assert.match(await msg.innerText(), /^Stopped: the result shows \d+ of \d+ batches of every variant\.$/);
    assert.notEqual(await msg.getAttribute('data-kind'), 'error');
    assert.equal(await page.locator('#tol-results').isHidden(), false);
    assert.match((await readResult(page)).text, /^Delivered: nominal/);
    assert.equal(await page.locator('#tol-run').isDisabled(), false);
  });

  test('editing the design while it runs stops it and says why', async () => {
    await page.click('#tol-run');
    await page.waitForSelector('#tolerances[data-state="running"]');
    await setField(page, '#f-trace-rays', 200_001);
    await page.waitForSelector('#tolerances[data-state="done"]', { timeout: 30_000 });
    assert.match(await page.locator('#tol-msg').innerText(), /^Stopped because the design was edited while it ran/);
  });

  test('variants that cannot be made are counted and named in the form\'s words', async () => {
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 4096 + 10));
    const gapLabel = await page.getAttribute(`button.tol-pick[data-tol-path="${GAP}"]`, 'data-tol-label');
    // The gap (0.3 mm) spread with σ = 0.3 mm: some variants draw a negative gap.
    await page.selectOption(`#tol-rows select[data-tol-kind="${GAP}"]`, 'normal');
    await setField(page, widthInput(GAP), '0.3');
    await setField(page, '#tol-variants', '12');
    await page.click('#tol-run');
    await page.waitForSelector('#tolerances[data-state="done"]', { timeout: 120_000 });
    const native = cliStudy(documentOf(await keptState(page)));
    assert.ok(native.variants_refused > 0, 'the document refuses some variants');
    const shown = await readResult(page);
    assert.equal(shown.refused, native.variants_refused);
    const text = await page.locator('#tol-refused').innerText();
    assert.ok(text.startsWith(`${native.variants_refused} of 12 variants could not be made`), text);
    assert.ok(text.includes(`variant ${native.refused_examples[0].variant + 1}: `), text);
    assert.ok(text.includes(`“${gapLabel}”`) && !text.includes(GAP), text);
    await page.selectOption(`#tol-rows select[data-tol-kind="${GAP}"]`, 'uniform');
    await setField(page, widthInput(GAP), '0.08');
    await setField(page, '#tol-variants', '40');
  });

  test('a bad σ is named in the form\'s words', async () => {
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 4096 + 10));
    const radiusLabel = await page.getAttribute(`button.tol-pick[data-tol-path="${BEND_RADIUS}"]`, 'data-tol-label');
    const msg = page.locator('#tol-msg');
    await setField(page, widthInput(BEND_RADIUS), '-0.2');
    await page.click('#tol-run');
    await page.waitForFunction(() => document.getElementById('tol-msg').dataset.kind === 'error');
    const text = await msg.innerText();
    assert.ok(text.startsWith(`σ of “${radiusLabel}” must be`), text);
    assert.ok(text.includes('-0.2'), text);
    assert.ok(!text.includes('tolerances.spreads'), text);
    await setField(page, widthInput(BEND_RADIUS), 'abc');
    await page.click('#tol-run');
    await page.waitForFunction(() => /must be a number/.test(document.getElementById('tol-msg').textContent));
    assert.equal(await msg.innerText(), `σ of “${radiusLabel}” must be a number, got “abc”`);
    await setField(page, widthInput(BEND_RADIUS), '0.3');
  });

  test('the set-up survives a reload and is what the saved study file holds', async () => {
    await page.reload();
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    assert.equal(await page.inputValue(widthInput(BEND_RADIUS)), '0.3');
    assert.equal(await page.inputValue(widthInput(GAP)), '0.08');
    assert.equal(await page.inputValue(`#tol-rows select[data-tol-kind="${GAP}"]`), 'uniform');
    assert.equal(await page.inputValue('#tol-variants'), '40');
    assert.equal(await page.locator(`button.tol-pick[data-tol-path="${GAP}"]`).getAttribute('aria-pressed'), 'true');
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('#tol-save')]);
    const file = join(OUT, 'saved.tolerances.study.json');
    await download.saveAs(file);
    const saved = JSON.parse(readFileSync(file, 'utf8'));
    assert.deepStrictEqual(saved.tolerances, {
      spreads: [{ field: BEND_RADIUS, sigma: 0.3 }, { field: GAP, half_width: 0.08 }],
      variants: 40,
    });
    // A file with other tolerances opens into the panel; removing a line removes it.
    saved.tolerances = { spreads: [{ field: GAP, sigma: 0.02 }], variants: 5 };
    await page.setInputFiles('#tol-file', { name: 'one.study.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(saved)) });
    await page.waitForFunction(() => /opened/.test(document.getElementById('tol-msg').textContent));
    assert.equal(await page.locator('#tol-rows tr').count(), 1);
    assert.equal(await page.inputValue(widthInput(GAP)), '0.02');
    assert.equal(await page.inputValue('#tol-variants'), '5');
    await page.click(`#tol-rows tr[data-field="${GAP}"] button.tol-remove`);
    assert.equal(await page.locator('#tol-rows tr').count(), 0);
    assert.equal(await page.locator('#tol-run').isDisabled(), true);
    assert.deepStrictEqual(consoleErrors, []);
  });

  test('the panel at tablet size (820×1180)', async () => {
    await page.setViewportSize({ width: 820, height: 1180 });
    await page.click(`button.tol-pick[data-tol-path="${BEND_RADIUS}"]`);
    await page.click(`button.tol-pick[data-tol-path="${GAP}"]`);
    // Widths follow the unit shown: 0.05 mm shows as 0.00197 in (three significant digits).
    const shows = (v) => page.waitForFunction(([sel, want]) => document.querySelector(sel)?.value === want, [widthInput(GAP), v], { timeout: 5000 });
    await page.check('input[name="unit"][value="in"]');
    await shows('0.00197');
    await page.check('input[name="unit"][value="mm"]');
    await shows('0.05');
    await setField(page, '#tol-variants', '20');
    await tracedAfter(page, () => setField(page, '#f-trace-rays', 4096 + 10));
    await page.click('#tol-run');
    await page.waitForSelector('#tolerances[data-state="done"]', { timeout: 120_000 });
    for (const sel of ['#tol-run', '#tol-stop', `button.tol-pick[data-tol-path="${GAP}"]`, `#tol-rows tr[data-field="${GAP}"] button.tol-remove`, widthInput(GAP)]) {
      const box = await page.locator(sel).boundingBox();
      assert.ok(box.height >= 44 && box.width >= 44, `${sel} is a touch-sized target (${box.width}×${box.height})`);
    }
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    assert.ok(overflow <= 0, `no sideways scrolling (${overflow} px)`);
    await page.locator('#tolerances').scrollIntoViewIfNeeded();
    await page.locator('#tolerances').screenshot({ path: join(OUT, 'tolerances-820.png') });
    await page.locator('.part-route').screenshot({ path: join(OUT, 'tolerances-form-820.png') });
    assert.deepStrictEqual(consoleErrors, []);
  });
});
