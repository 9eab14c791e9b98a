// The light turned back at the exit face on the design page, in Chromium: the sentence "Turned
// back at the exit face: X of the light reaching it (by total reflection Y, by Fresnel reflection
// Z)" and the table of where that light ended, both the CLI's figures with their intervals; the
// bend table says how much of a leak-free bend's traced leak came after a turn back, its mark
// reads "Leaks on return" rather than "No leak expected", and the bend's note says
// why; a widening exit taper turns less back; an exit face bonded to the pipe's
// own index turns nothing back; the budget CSV carries the same tables as `tirtrace trace --csv`.
// Screenshots at 1280×800 and 820×1180 go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/turn_back.test.mjs

import assert from 'node:assert/strict';
import { readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { assertNoJunk, cliTrace, closeDesignPage, designPage, openKept, pageScenario } from './design-helpers.mjs';
import { OUT, cli, collectErrors } from './harness.mjs';

/**
 * A 2.5 mm acrylic pipe in air fed by a Lambertian LED: 5 mm straight, a 90° bend of centre
 * radius 26 mm (inner radius 24.75 mm, R_in/d = 9.9, above the leak-free 9.26 for light from
 * air), 10 mm straight; then, with `taperTo`, a 10 mm taper to that diameter. `exit` is the
 * medium beyond the exit face (the surroundings, air, when not given).
 */
function design({ taperTo = null, exit = null, rays = 100_000 } = {}) {
  const route = [{ straight: { length_mm: 5 } }, { bend: { radius_mm: 26, angle_deg: 90, turn_deg: 0 } }, { straight: { length_mm: 10 } }];
  if (taperTo) route.push({ taper: { length_mm: 10, end_section: { round: { diameter_mm: taperTo } } } });
  return {
    version: 1,
    name: 'Turned back at the exit face: 2.5 mm acrylic pipe, one gentle bend',
    guide: {
      section: { round: { diameter_mm: 2.5 } }, material: { library: 'pmma' }, surroundings: { library: 'air' },
      ...(exit ? { exit_medium: exit } : {}),
    },
    route,
    source: { emitter: { led: { area: { disk: { diameter_mm: 0.5 } }, pattern: 'lambertian' } }, wavelength_nm: 587.56, gap_mm: 0 },
    trace: { rays, seed: 5, max_interactions: 10000 },
  };
}

describe('light turned back at the exit face, on the design page', { concurrency: false }, () => {
  let server;
  let browser;
  let page;
  const consoleErrors = [];

  const open = openKept;

  /** The page's own formatting of a share with its interval ("12.3 % ± 0.4"), kept on one line
   * (no-break spaces). */
  const shareCi = (p, share) =>
    p.evaluate(async (s) => (await import('./js/format.js')).formatShareCi(s.share, s.ci95).replaceAll(' ', '\u00a0'), share);

  before(async () => {
    ({ server, browser, page } = await designPage(consoleErrors, { acceptDownloads: true }));
  });

  after(() => closeDesignPage({ server, browser }));

  test('the sentence and the table of where the light ended are the CLI\'s figures', async () => {
    await open(page, design());
    // The design as the page holds it (its defaults filled in), traced by the CLI.
    const theirs = cliTrace(await pageScenario(page));
    const t = theirs.exit_turn_back;
    assert.ok(t.of_reaching.by_total_reflection.share > 0.01, 'the bend steepens rays beyond the exit face\'s critical angle');
    assert.ok(await page.locator('#turn-back').isVisible());
    const summary = await page.locator('#turn-back-summary').textContent();
    const want = `Turned back at the exit face: ${await shareCi(page, t.of_reaching.turned_back)} of the light reaching it `
      + `(by total reflection ${await shareCi(page, t.of_reaching.by_total_reflection)}, `
      + `by Fresnel reflection ${await shareCi(page, t.of_reaching.by_fresnel)}), `
      + `that is ${await shareCi(page, t.turned_back)} of the emitted light.`;
    assert.equal(summary, want);
    // Where it ended: the rows with light in them, each the CLI's share of the emitted light.
    const rows = await page.$$eval('#turn-back-rows tr', (trs) => trs.map((tr) => ({
      end: tr.dataset.end, label: tr.querySelector('th').textContent, share: tr.querySelector('td.num').textContent,
    })));
    const byEnd = Object.fromEntries(rows.map((r) => [r.end, r]));
    assert.equal(byEnd['leaked-1']?.label, 'Leaks out of segment 2 · Bend', JSON.stringify(rows));
    assert.equal(byEnd.returned?.label, 'Comes back out of the entry face');
    assert.equal(byEnd.delivered_later?.label, 'Reaches the window on a later pass');
    const fmt = (s) => page.evaluate(async (x) => (await import('./js/format.js')).formatShare(x.share, x.ci95), s);
    assert.equal(byEnd['leaked-1'].share, await fmt(theirs.segments[1].leaked_after_turn_back));
    assert.equal(byEnd.returned.share, await fmt(t.ended.returned));
    assert.ok(!byEnd.contact && !byEnd.stopped, 'rows without light are left out');
    // The bend is leak-free by the closed form; all of its traced leak came after a turn back.
    const bend = page.locator('#bend-rows tr[data-segment="1"]');
    assert.equal(await bend.getAttribute('data-verdict'), 'ok');
    assert.ok(theirs.segments[1].leaked.share > 0);
    assert.equal(await bend.locator('.turn-back-part').innerText(), 'All of it after a turn back at the exit face');
    // Its mark says what the trace shows, not only the closed form's verdict for the way out.
    assert.equal(await bend.locator('.mark').innerText(), 'Leaks on return');
    const note = await bend.locator('.mark').getAttribute('title');
    assert.match(note, /^Leak-free on the way to the exit face: .*passes this bend again in the other direction/);
    assert.match(await page.locator('#bend-note').innerText(), /passes the bends again in the other direction/);
    await assertNoJunk(page, 'turned back');
    await page.screenshot({ path: join(OUT, 'turn-back-1280x800.png'), fullPage: true });
    await page.locator('.budget-card').screenshot({ path: join(OUT, 'turn-back-budget-1280x800.png') });
    await page.locator('.bends-card').screenshot({ path: join(OUT, 'turn-back-bends-1280x800.png') });
    await page.locator('.bends-card .table-wrap').first().evaluate((el) => { el.scrollLeft = el.scrollWidth; });
    await page.locator('.bends-card').screenshot({ path: join(OUT, 'turn-back-bends-right-1280x800.png') });
  });

  test('the budget CSV the page saves carries the turn-back tables, as the CLI prints them', async () => {
    await open(page, design({ rays: 20_000 }));
    const scenario = await pageScenario(page);
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('#export-csv')]);
    const text = readFileSync(await download.path(), 'utf8');
    const file = join(tmpdir(), `tirtrace-e2e-turn-back-${process.pid}.json`);
    writeFileSync(file, JSON.stringify(scenario));
    try {
      assert.equal(text, cli(['trace', file, '--csv']));
    } finally {
      rmSync(file, { force: true });
    }
    assert.match(text, /\n"At the exit face",% of emitted,± %,% of the light reaching it,± %\n"Reaches the exit face",/);
    assert.match(text, /\n"Where the turned-back light ended \(already counted above\)",% of emitted,± %\n"Through the window on a later pass",/);
  });

  test('a widening exit taper turns less back; a matched exit turns nothing back', async () => {
    await open(page, design());
    const plain = Number(await page.locator('#turn-back').getAttribute('data-share'));
    await open(page, design({ taperTo: 3 }));
    const tapered = Number(await page.locator('#turn-back').getAttribute('data-share'));
    assert.ok(tapered < plain - 0.02, `turned back ${tapered} with the 2.5 → 3 mm taper, ${plain} without`);
    await open(page, design({ exit: { library: 'pmma' }, rays: 20_000 }));
    assert.equal(await page.locator('#turn-back-summary').innerText(),
      'Nothing is turned back at the exit face: the medium beyond it has the index of the pipe.');
    assert.ok(await page.locator('#turn-back-ends').isHidden());
    assert.equal(await page.locator('#bend-rows tr[data-segment="1"] .turn-back-part').count(), 0);
    // With nothing turned back the leak-free bend leaks nothing in the trace, and says so.
    const matched = cliTrace(await pageScenario(page));
    assert.equal(matched.segments[1].leaked.share, 0);
    assert.equal(await page.locator('#bend-rows tr[data-segment="1"] .mark').innerText(), 'No leak expected');
  });

  test('at tablet size', async () => {
    const tablet = await browser.newContext({ viewport: { width: 820, height: 1180 }, hasTouch: true });
    try {
      const p = await tablet.newPage();
      collectErrors(p, consoleErrors);
      await p.goto(`${server.origin}/`);
      await p.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      await open(p, design());
      assert.ok(await p.locator('#turn-back-summary').isVisible());
      // The tables fit the card: nothing wider than the page.
      const overflow = await p.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
      assert.ok(overflow <= 0, `the page scrolls sideways by ${overflow} px`);
      await p.screenshot({ path: join(OUT, 'turn-back-820x1180.png'), fullPage: true });
      await p.locator('.budget-card').screenshot({ path: join(OUT, 'turn-back-budget-820x1180.png') });
      await p.locator('.bends-card').screenshot({ path: join(OUT, 'turn-back-bends-820x1180.png') });
      await p.locator('.bends-card .table-wrap').first().evaluate((el) => { el.scrollLeft = el.scrollWidth; });
      await p.locator('.bends-card').screenshot({ path: join(OUT, 'turn-back-bends-right-820x1180.png') });
    } finally {
      await tablet.close();
    }
  });

  test('nothing went to the console', () => {
    assert.deepEqual(consoleErrors, []);
  });
});
