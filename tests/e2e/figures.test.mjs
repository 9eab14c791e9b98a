// The figures the design page shows, in Chromium: intervals that round to zero say "< 0.001"
// rather than "± 0.000"; fluxes and intensities read without an exponent (mlm, µW, mcd); the peak
// and on-axis intensity name the window they are averaged over, and the mean luminance of the exit
// face says what it is; every sentence starts with a capital letter; the 3D view's key counts
// drawn rays, not traced ones. Screenshots of the result view at 1280×800 and 820×1180 go to
// tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/figures.test.mjs

import assert from 'node:assert/strict';

import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertNoJunk, budgetRows, cliBudgetWords, closeDesignPage, designPage, openKept, tracedAfter } from './design-helpers.mjs';
import { OUT, collectErrors } from './harness.mjs';

/** The starting design's pipe (3 mm acrylic, one bend), lossless, with `flux` and `rays`. */
function design(flux, rays = 100_000) {
  return {
    version: 1,
    name: 'Figures check: 3 mm acrylic pipe, one bend',
    guide: { section: { round: { diameter_mm: 3 } }, material: { library: 'pmma' }, surroundings: { library: 'air' }, attenuation_db_per_m: 0 },
    route: [{ straight: { length_mm: 5 } }, { bend: { radius_mm: 8, angle_deg: 90, turn_deg: 0 } }, { straight: { length_mm: 10 } }],
    source: {
      emitter: { led: { area: { square: { side_mm: 0.5 } }, pattern: 'lambertian' } },
      wavelength_nm: 525,
      gap_mm: 0.3,
      gap_medium: { library: 'air' },
      ...(flux ? { flux } : {}),
    },
    trace: { rays, seed: 1, max_interactions: 10000 },
  };
}

/** Text of the absolute figures: { label: value }. */
const extraFigures = (page) =>
  page.$$eval('#extra .extra-item', (items) => Object.fromEntries(items.map((i) => [i.querySelector('dt').textContent, i.querySelector('dd').textContent])));

/**
 * Texts the page shows as sentences or verdicts (status, notes, hints, keys, marks, figure labels)
 * that start with a lower-case letter, each with where it is. Table cells holding data and the
 * user's own names are not sentences and are left out.
 */
const lowerCaseStarts = (page) =>
  page.evaluate(() => {
    const shown = (el) => el.getClientRects().length > 0;
    const texts = [];
    const sentences = 'p, li, dt, dd, .hint, .mark, .key, #status, #verdict, .explain, .stale-note, figcaption .picture-title, h2, h3, legend';
    for (const el of document.querySelectorAll(sentences)) if (shown(el)) texts.push([el, el.innerText]);
    // Tooltips are shown too. (The product's name in the page heading keeps its own spelling.)
    for (const el of document.querySelectorAll('[title]')) if (shown(el)) texts.push([el, el.title]);
    const out = [];
    for (const [el, raw] of texts) {
      // A field's problem message is the form's own (its wording is checked with the form).
      if (el.closest('.field-msg, .form-problems')) continue;
      const text = raw.trim();
      const first = text.match(/\p{L}/u);
      // Only a text that begins with a letter (numbers, symbols and units lead many figures),
      // and not a formula ("n = 1.4957").
      if (!first || first.index !== 0 || /^\p{L}\s*[=<>≤≥]/u.test(text)) continue;
      if (first[0] !== first[0].toUpperCase()) out.push(`${el.id ? `#${el.id}` : el.className || el.tagName}: "${text.slice(0, 80)}"`);
    }
    return out;
  });

describe('the figures on the design page', { concurrency: false }, () => {
  let server;
  let browser;
  let page;
  const consoleErrors = [];

  const open = openKept;

  before(async () => {
    ({ server, browser, page } = await designPage(consoleErrors));
  });

  after(() => closeDesignPage({ server, browser }));

  test('an interval that rounds to zero says "< " the last shown unit, never "± 0.000"', async () => {
    const f = await page.evaluate(async () => {
      const m = await import('./js/format.js');
      return {
        tiny: m.formatShareCi(0.5, 4e-7),
        zero: m.formatShareCi(0, 0),
        plain: m.formatShareCi(0.123, 0.004),
        half: m.formatHalfWidth(3e-6),
        none: m.formatHalfWidth(Infinity),
      };
    });
    assert.equal(f.tiny, '50.000 % ± < 0.001');
    assert.equal(f.zero, '0.0 % ± < 0.1');
    assert.equal(f.plain, '12.30 % ± 0.40');
    assert.equal(f.half, '< 0.001');
    assert.equal(f.none, '\u2014');
    // On the page: a lossless pipe absorbs nothing, exactly; its row says "± < 0.1".
    await open(page, design({ lm: 1 }));
    const absorbed = await page.locator('#budget-rows tr[data-mechanism="absorbed"] td.ci').innerText();
    assert.equal(absorbed, '± < 0.1');
    const body = await page.locator('body').innerText();
    assert.doesNotMatch(body, /± 0(\.0+)?(?![\d.])/, 'an interval shown as zero');
  });

  test('the loss budget lists the core\'s shares in the core\'s order and words, each in a colour of its own', async () => {
    await page.waitForSelector('#budget-rows tr[data-mechanism]');
    const { core, colours } = await page.evaluate(async () => ({
      core: (await import('./pkg/tirtrace.js')).budget_mechanisms(),
      colours: (await import('./js/design/report-view.js')).MECHANISM_COLOURS,
    }));
    const rows = await budgetRows(page);
    assert.deepEqual(rows.map((r) => [r.key, r.words]), core);
    assert.deepEqual(core.map(([, words]) => words), cliBudgetWords(), 'the page and the CLI\'s CSV use other words');
    // A colour for every share of the core's, none for a share it does not have.
    assert.deepEqual(Object.keys(colours).sort(), core.map(([key]) => key).sort());
    assert.equal(new Set(rows.map((r) => r.colour)).size, rows.length, `colours repeat: ${JSON.stringify(rows)}`);
  });

  test('fluxes and intensities read without an exponent, in mlm, µW or mcd when small', async () => {
    const f = await page.evaluate(async () => {
      const m = await import('./js/format.js');
      return [
        m.formatQuantity(0.716, 0.00277, 'lm'),
        m.formatQuantity(4.52e-5, 4e-8, 'mW'),
        m.formatQuantity(0.304, 0.015, 'cd'),
        m.formatQuantity(2.5e-4, 1e-5, 'mW/sr'),
        m.formatQuantity(52345, 1234, 'cd/m²'),
        m.formatQuantity(0.9997, 0.002, 'cd'),
      ];
    });
    assert.deepEqual(f, ['716 ± 3 mlm', '45.2 ± < 0.1 nW', '304 ± 15 mcd', '250 ± 10 nW/sr', '52,300 ± 1,200 cd/m²', '1.00 ± < 0.01 cd']);

    await open(page, design({ lm: 0.0005 }));
    let figures = await extraFigures(page);
    assert.match(figures['Flux reaching the window'], /^\d+(\.\d+)? ± (< )?\d+(\.\d+)? µlm$/, JSON.stringify(figures));
    for (const v of Object.values(figures)) assert.doesNotMatch(v, /\de[-+]?\d/i, `exponent in "${v}"`);

    await open(page, design({ mw: 0.05 }));
    figures = await extraFigures(page);
    assert.match(figures['Flux reaching the window'], / µW$/, JSON.stringify(figures));
    const peakLabel = Object.keys(figures).find((k) => k.startsWith('Peak intensity'));
    assert.match(figures[peakLabel], / µW\/sr$/);
    assert.ok(!Object.keys(figures).some((k) => /luminance/i.test(k)), 'no luminance for a radiant flux');
    for (const v of Object.values(figures)) assert.doesNotMatch(v, /\de[-+]?\d/i, `exponent in "${v}"`);
  });

  test('the intensities name their window and the luminance says what it is', async () => {
    await open(page, design({ lm: 1 }));
    const figures = await extraFigures(page);
    const labels = Object.keys(figures);
    assert.ok(labels.includes('On-axis intensity (mean over the 5° cone about the axis)'), labels.join(' | '));
    assert.ok(labels.some((k) => /^Peak intensity \(mean over (the 5° cone about the axis|\d+°–\d+° off axis)\)$/.test(k)), labels.join(' | '));
    assert.ok(labels.includes('Mean luminance of the exit face, along its axis'), labels.join(' | '));
    assert.match(figures['Mean luminance of the exit face, along its axis'], / cd\/m²$/);
    const note = page.locator('#extra-note');
    assert.ok(await note.isVisible(), 'the help text under the figures');
    const text = await note.innerText();
    assert.match(text, /0\.024 sr/);
    assert.match(text, /on-axis intensity ÷ area of the exit face/);
    // The page's figures are the report's: the peak is the core's window mean.
    const shown = figures[labels.find((k) => k.startsWith('Peak intensity'))];
    assert.match(shown, /^\d+ ± \d+ mcd$/);
    await assertNoJunk(page, 'figures');
  });

  test("the 3D view's key counts drawn rays, not traced ones", async () => {
    await open(page, design(null, 50_000));
    const lead = await page.locator('#route-legend .key-lead').innerText();
    const m = lead.match(/^Drawn rays, (\d+) of the ([\d,]+) traced/);
    assert.ok(m, lead);
    assert.equal(m[2], '50,000');
    const counts = await page.$$eval('#route-legend .key[data-fate]', (keys) => keys.map((k) => Number(k.textContent.match(/^\d+/)[0])));
    assert.equal(counts.reduce((a, b) => a + b, 0), Number(m[1]), 'the fates add up to the drawn rays');
    assert.ok(Number(m[1]) < 50_000);
  });

  test('every sentence on the page starts with a capital letter', async () => {
    await open(page, design({ lm: 1 }));
    assert.deepEqual(await lowerCaseStarts(page), []);
    // An entry with a problem: the stale results and the status line.
    await page.fill('#f-route-1-bend-radius-mm', '-3');
    await page.waitForSelector('#stale-note:not([hidden])');
    assert.deepEqual(await lowerCaseStarts(page), []);
    await tracedAfter(page, () => page.fill('#f-route-1-bend-radius-mm', '8'));
    await page.screenshot({ path: join(OUT, 'figures-1280x800.png'), fullPage: true });
    for (const [what, selector] of [['answer', '.answer-card'], ['route', '.route-card'], ['exit-map', '#exit-map'], ['intensity', '#intensity']]) {
      await page.locator(selector).screenshot({ path: join(OUT, `figures-${what}-1280x800.png`) });
    }
    // The quick look's figures and verdict.
    const quick = await page.context().newPage();
    collectErrors(quick, consoleErrors);
    await quick.goto(`${server.origin}/quick.html`);
    await quick.waitForFunction(() => document.getElementById('verdict').textContent !== '—', null, { timeout: 30_000 });
    assert.deepEqual(await lowerCaseStarts(quick), []);
    await quick.close();
  });

  test('the result view at tablet size', async () => {
    const tablet = await browser.newContext({ viewport: { width: 820, height: 1180 }, hasTouch: true });
    try {
      const p = await tablet.newPage();
      collectErrors(p, consoleErrors);
      await p.goto(`${server.origin}/`);
      await p.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      await open(p, design({ lm: 1 }));
      assert.deepEqual(await lowerCaseStarts(p), []);
      await p.screenshot({ path: join(OUT, 'figures-820x1180.png'), fullPage: true });
      for (const [what, selector] of [['answer', '.answer-card'], ['route', '.route-card'], ['exit-map', '#exit-map'], ['intensity', '#intensity']]) {
        await p.locator(selector).screenshot({ path: join(OUT, `figures-${what}-820x1180.png`) });
      }
    } finally {
      await tablet.close();
    }
  });

  test('the inch switch redraws the exit map in inches (and back), its table too', async () => {
    await open(page, design({ lm: 1 }, 20_000));
    const chart = page.locator('#exit-map');
    const pixels = () => page.evaluate(() => document.getElementById('exit-map').toDataURL('image/png'));
    assert.equal(await chart.getAttribute('data-unit'), 'mm');
    const inMm = await pixels();
    await page.click('#exit-map-data summary');
    assert.match(await page.locator('#exit-map-head th').first().innerText(), /, mm \(% per mm²\)$/);
    await page.check('input[name="unit"][value="in"]');
    await page.waitForSelector('#exit-map[data-unit="in"]');
    const inInches = await pixels();
    assert.notEqual(inInches, inMm, 'the map is drawn again, with inch axes');
    // The table's heading and cells follow: cell centres within the 3 mm face's ±0.0591 in.
    assert.match(await page.locator('#exit-map-head th').first().innerText(), /, in \(% per in²\)$/);
    const centres = (await page.$$eval('#exit-map-head th.num', (ths) => ths.map((t) => t.textContent))).map((t) => Number(t.replace('\u2212', '-')));
    assert.ok(centres.length > 2 && centres.every((x) => Math.abs(x) < 1.5 / 25.4), centres.join(' '));
    assert.match(await page.locator('#exit-map-caption').textContent(), /per in², by cell/);
    assert.notEqual(await page.locator('#status').getAttribute('data-kind'), 'error', await page.locator('#status').innerText());
    await page.click('#exit-map-data summary');
    await page.screenshot({ path: join(OUT, 'figures-inch-1280x800.png'), fullPage: true });
    await chart.screenshot({ path: join(OUT, 'figures-exit-map-inch-1280x800.png') });
    await page.setViewportSize({ width: 820, height: 1180 });
    // Redrawn on the resize (in the unit shown): wait two frames.
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
    assert.equal(await chart.getAttribute('data-unit'), 'in');
    await page.screenshot({ path: join(OUT, 'figures-inch-820x1180.png'), fullPage: true });
    // The chart in the window as a designer scrolls to it (the answer card stays on top).
    await page.evaluate(() => document.getElementById('exit-map').scrollIntoView({ block: 'end' }));
    await page.screenshot({ path: join(OUT, 'figures-exit-map-inch-820x1180.png') });
    await page.setViewportSize({ width: 1280, height: 800 });
    // Back to millimetres: the same picture as before the switch.
    await page.check('input[name="unit"][value="mm"]');
    await page.waitForSelector('#exit-map[data-unit="mm"]');
    assert.equal(await pixels(), inMm);
    // The core refuses any other unit with a message naming the allowed ones (and draws nothing).
    const refused = await page.evaluate(async () => {
      const core = await import('./pkg/tirtrace.js');
      const canvas = document.createElement('canvas');
      canvas.id = 'unit-check';
      document.body.append(canvas);
      const said = [];
      for (const unit of ['cm', undefined]) {
        try {
          core.draw_exit_map('unit-check', {}, 1, unit);
          said.push('drawn');
        } catch (e) {
          said.push(e.message);
        }
      }
      canvas.remove();
      return said;
    });
    assert.deepEqual(refused, ['length unit must be “mm” or “in”, got “cm”', 'length unit must be “mm” or “in”, got no text']);
  });

  test('nothing went to the console', () => {
    assert.deepEqual(consoleErrors, []);
  });
});
