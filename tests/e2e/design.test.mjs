// End-to-end test of the design page (www/index.html) in Debian's Chromium, driven by
// playwright-core, at desktop (1280×800) and portrait-tablet (820×1180) sizes: build a route, see a
// result, edit a bend and see the leakage move the expected way, stop a trace, save and open a
// file, open a share link in a fresh browser context, import malformed files and keep the design,
// names holding HTML shown as text, bad input named by field, work offline, and the delivered
// share equal to the native CLI's for the same scenario and seed. Screenshots go to
// tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e. Run: node --test tests/e2e/

import assert from 'node:assert/strict';
import { existsSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { STATE_KEY, answer, assertNoJunk, cliTrace, closeDesignPage, designPage, inkShare, openKept, pageScenario, tracedAfter } from './design-helpers.mjs';
import { CLI, OUT, ROOT, WWW, collectErrors, reachable, serviceWorkerControls, stopServer } from './harness.mjs';

describe('the design page in Chromium', { concurrency: false }, () => {
  let server;
  let browser;
  let page;
  const requests = [];
  const consoleErrors = [];

  const watch = (p) => collectErrors(p, consoleErrors);

  /** A page of the designer in a browser context of its own (its own storage), ready. */
  async function freshPage() {
    const other = await browser.newContext({ viewport: { width: 1280, height: 800 } });
    other.on('request', (r) => requests.push(r.url()));
    const p = await other.newPage();
    watch(p);
    await p.goto(`${server.origin}/`);
    await p.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    return { other, p };
  }

  /** Keep `scenario` in the page's storage (as the page keeps its design) and reload. */
  async function reopenWith(p, scenario) {
    await p.evaluate(([k, s]) => localStorage.setItem(k, JSON.stringify({ scenario: s, drafts: {}, unit: 'mm' })), [STATE_KEY, scenario]);
    await p.reload();
    await p.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
  }

  before(async () => {
    assert.ok(existsSync(join(WWW, 'demos', 'index.json')), 'www/demos is missing: run `bash scripts/build.sh` first');
    assert.ok(existsSync(CLI), 'target/debug/tirtrace is missing: run `cargo build` first');
    ({ server, browser, page } = await designPage(consoleErrors, { acceptDownloads: true, requests }));
  });

  after(() => closeDesignPage({ server, browser }));

  test('traces the starting design and shows every part of the answer', async () => {
    await page.waitForFunction(() => Number(document.body.dataset.traced || 0) > 0, null, { timeout: 60_000 });
    const a = await answer(page);
    assert.ok(a.share > 0.3 && a.share < 1, `delivered ${a.share}`);
    assert.ok(a.ci95 > 0 && a.ci95 < 0.01, `ci95 ${a.ci95}`);
    // Budget rows for every mechanism, the energy check, the segment and bend tables.
    assert.equal(await page.locator('#budget-rows tr[data-mechanism]').count(), 9);
    const sum = Number(await page.locator('#budget-rows tr.sum td.num').innerText());
    assert.ok(Math.abs(sum - 100) < 1e-6, `budget sums to ${sum} %`);
    assert.equal(await page.locator('#segment-rows tr').count(), 3);
    assert.equal(await page.locator('#bend-rows tr').count(), 1);
    // Drawings: the route with rays, the exit map, the intensity chart.
    for (const id of ['route-view', 'exit-map', 'intensity']) {
      assert.ok((await inkShare(page, id)) > 0.01, `${id} is blank`);
    }
    assert.ok((await page.locator('#route-legend .key[data-fate="delivered"]').count()) === 1, 'no delivered rays in the legend');
    // The pipe's index at the wavelength, from the core, under the material.
    assert.match(await page.locator('#f-guide-material-hint').innerText(), /^n = 1\.\d{4} at 525 nm/);
    await assertNoJunk(page, 'first answer');
    await page.screenshot({ path: join(OUT, 'design-1280x800.png'), fullPage: true });
  });

  test('the delivered share equals the command line for the same scenario and seed', async () => {
    // Open an example, set fewer rays (the debug CLI is slow), and compare with the CLI's JSON.
    await tracedAfter(page, async () => {
      await page.selectOption('#demo', 'thermostat_status_led.json');
    });
    await tracedAfter(page, async () => {
      await page.fill('#f-trace-rays', '40000');
    });
    const scenario = await pageScenario(page);
    assert.equal(scenario.trace.rays, 40000);
    const mine = await answer(page);
    const theirs = cliTrace(scenario);
    assert.equal(mine.rays, theirs.rays);
    assert.equal(mine.share, theirs.delivered.share, 'delivered share differs from the CLI');
    assert.equal(mine.ci95, theirs.delivered.ci95, 'its 95 % half-width differs from the CLI');
    // The shown percentage is that share, rounded.
    const shown = Number(await page.locator('#answer-value').innerText());
    assert.ok(Math.abs(shown - 100 * theirs.delivered.share) < 0.05 + 1e-9, `shows ${shown} %`);
    // Absolute figures (the example gives 1.2 lm) and the mount's loss are shown.
    assert.match(await page.locator('#extra').innerText(), /lm/);
    assert.match(await page.locator('#segment-rows').innerText(), /snap clip/);
    await page.screenshot({ path: join(OUT, 'design-example-thermostat.png'), fullPage: true });
  });

  test('builds a route and a tighter bend leaks more', async () => {
    // Start afresh from the starter-like route built by hand: straight, bend, straight.
    await tracedAfter(page, async () => {
      await page.selectOption('#demo', 'bike_light_charge_indicator.json');
    });
    const before = await pageScenario(page);
    const n = before.route.length;
    await tracedAfter(page, async () => {
      await page.click('#add-bend');
    });
    const added = await pageScenario(page);
    assert.equal(added.route.length, n + 1);
    assert.ok(added.route[n].bend, 'the new segment is a bend');
    await tracedAfter(page, async () => {
      await page.click('#add-straight');
    });
    // Generous bend: little leakage in it.
    await tracedAfter(page, async () => {
      await page.fill(`#f-route-${n}-bend-radius-mm`, '20');
      await page.fill('#f-trace-rays', '40000');
    });
    const wide = await page.evaluate((i) => document.querySelector(`#segment-rows tr[data-segment="${i}"] td:nth-child(4)`).innerText, n);
    const wideScenario = await pageScenario(page);
    const wideCli = cliTrace(wideScenario);
    // Tight bend: more leakage in that bend, less delivered.
    await tracedAfter(page, async () => {
      await page.fill(`#f-route-${n}-bend-radius-mm`, '2.2');
    });
    const tightCli = cliTrace(await pageScenario(page));
    const wideLeak = wideCli.segments[n].leaked;
    const tightLeak = tightCli.segments[n].leaked;
    assert.ok(tightLeak.share - wideLeak.share > 3 * (tightLeak.ci95 + wideLeak.ci95), `leak ${wideLeak.share} → ${tightLeak.share}`);
    const tight = await answer(page);
    assert.equal(tight.share, tightCli.delivered.share);
    assert.ok(tight.share < wideCli.delivered.share, 'a tighter bend delivers less');
    assert.notEqual(await page.evaluate((i) => document.querySelector(`#segment-rows tr[data-segment="${i}"] td:nth-child(4)`).innerText, n), wide);
    // The bend table marks it.
    assert.equal(await page.getAttribute(`#bend-rows tr[data-segment="${n}"]`, 'data-verdict'), 'leaks');
    // Reorder and remove: move the new bend up, then remove it.
    await tracedAfter(page, async () => {
      await page.click(`#seg-${n}-up`);
    });
    const moved = await pageScenario(page);
    assert.ok(moved.route[n - 1].bend && moved.route[n - 1].bend.radius_mm === 2.2, 'the bend moved up');
    await tracedAfter(page, async () => {
      await page.click(`#seg-${n - 1}-remove`);
    });
    assert.equal((await pageScenario(page)).route.length, n + 1);
    await page.screenshot({ path: join(OUT, 'design-route-edited.png'), fullPage: true });
  });

  test('bad input is named by field with its range, and the design is kept', async () => {
    await tracedAfter(page, () => page.selectOption('#demo', 'soil_sensor_ambient_light_window.json'));
    await page.fill('#f-route-1-bend-radius-mm', 'abc');
    await page.waitForSelector('#f-route-1-bend-radius-mm-msg:not([hidden])');
    assert.equal(await page.locator('#f-route-1-bend-radius-mm-msg').innerText(), 'Radius (centre line) must be a number, got “abc”');
    await page.fill('#f-route-1-bend-radius-mm', '-3');
    await page.waitForFunction(() => /must be/.test(document.getElementById('f-route-1-bend-radius-mm-msg')?.textContent || ''));
    const msg = await page.locator('#f-route-1-bend-radius-mm-msg').innerText();
    // In the form's words: the field's label, the end of the range it breaks and why, the value.
    assert.match(msg, /^Radius \(centre line\) must be more than [\d.]+ mm \(half the pipe's size across the bend, so that its inner wall keeps a radius\), got -3$/);
    assert.equal(await page.getAttribute('#f-route-1-bend-radius-mm', 'aria-invalid'), 'true');
    await assertNoJunk(page, 'bad input');
    await page.screenshot({ path: join(OUT, 'design-bad-input.png'), fullPage: false });
    // What was typed survives a reload.
    await page.fill('#f-route-1-bend-radius-mm', '4,5x');
    await page.waitForTimeout(300);
    await page.reload();
    await page.waitForSelector('body[data-ready="true"]');
    assert.equal(await page.inputValue('#f-route-1-bend-radius-mm'), '4,5x');
    // …and moves with its segment when the route is reordered.
    await page.click('#seg-1-down');
    await page.waitForSelector('#f-route-2-bend-radius-mm');
    assert.equal(await page.inputValue('#f-route-2-bend-radius-mm'), '4,5x');
    await page.waitForFunction(() => /must be a number/.test(document.getElementById('f-route-2-bend-radius-mm-msg')?.textContent || ''));
    assert.equal(await page.locator('#f-route-2-bend-radius-mm-msg').innerText(), 'Radius (centre line) must be a number, got “4,5x”');
    await tracedAfter(page, async () => {
      await page.fill('#f-route-2-bend-radius-mm', '9');
    });
    await tracedAfter(page, async () => {
      await page.click('#seg-2-up');
    });
  });

  test('more bad input: whole numbers, thousands separators, a hidden entry, damaged storage and links', async () => {
    await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
    const msgOf = async (id) => {
      await page.waitForFunction((i) => (document.getElementById(`${i}-msg`)?.textContent || '').length > 0, id);
      return page.locator(`#${id}-msg`).innerText();
    };
    // A ray count with a fraction: the core's message names the field and the range.
    await page.fill('#f-trace-rays', '1.5');
    assert.match(await msgOf('f-trace-rays'), /^Rays must be a whole number from 1 to 10⁹, got 1\.5/);
    // "200,000" is not silently read as 200.
    await page.fill('#f-trace-rays', '200,000');
    assert.match(await msgOf('f-trace-rays'), /could be read two ways/);
    await tracedAfter(page, () => page.fill('#f-trace-rays', '20000'));
    // Text typed under a choice that is then replaced does not block the design.
    await page.selectOption('#f-source-emitter-led-pattern', 'half_intensity');
    await page.fill('#f-source-emitter-led-pattern-half-intensity-half-angle-deg', 'abc');
    await page.waitForFunction(() => document.body.dataset.problems === '1');
    await tracedAfter(page, () => page.selectOption('#f-source-emitter-led-pattern', 'lambertian'));
    assert.equal(await page.getAttribute('body', 'data-problems'), '0');
    // A damaged design in storage and a damaged share link: a message, and the page works.
    const { other, p } = await freshPage();
    try {
      await reopenWith(p, { version: 1 });
      const msg = await p.locator('#toolbar-msg').innerText();
      assert.match(msg, /could not be shown/);
      await p.waitForFunction(() => Number(document.body.dataset.traced || 0) > 0, null, { timeout: 60_000 });
      await assertNoJunk(p, 'damaged storage');
      await p.goto('about:blank');
      await p.goto(`${server.origin}/#d=AAAA_not-a-design`);
      await p.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      assert.match(await p.locator('#toolbar-msg').innerText(), /share link is damaged/);
    } finally {
      await other.close();
    }
  });

  test('a mount past a shortened segment says where it ends, in the form\'s words and units, unbroken on a tablet', async () => {
    const tablet = await browser.newContext({ viewport: { width: 820, height: 1180 }, hasTouch: true });
    try {
      const p = await tablet.newPage();
      watch(p);
      await p.goto(`${server.origin}/`);
      await p.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      await tracedAfter(p, () => p.selectOption('#demo', 'thermostat_status_led.json'));
      const s = await pageScenario(p);
      const clip = s.guide.contacts[0];
      assert.equal(clip.name, 'snap clip');
      const seg = clip.segment;
      // The segment is shortened below the mount: no range whose ends cross, no field path.
      await p.fill(`#f-route-${seg}-straight-length-mm`, '1.5');
      const to = `#f-guide-contacts-0-to-mm-msg`;
      await p.waitForSelector(`${to}:not([hidden])`);
      assert.equal(await p.locator(to).innerText(),
        `The mount “snap clip” ends at ${clip.to_mm} mm, past the end of its segment (segment ${seg + 1} is 1.5 mm long)`);
      assert.equal(await p.locator('#f-guide-contacts-0-from-mm-msg').innerText(),
        `The mount “snap clip” starts at ${clip.from_mm} mm, past the end of its segment (segment ${seg + 1} is 1.5 mm long)`);
      // Not one message on the page shows a field path, a bare symbol range or the reader's words.
      const shown = await p.$$eval('.field-msg:not([hidden]), #form-problems p', (els) => els.map((e) => e.textContent));
      assert.ok(shown.length >= 2);
      for (const m of shown) {
        assert.doesNotMatch(m, /route\[|guide\.|_mm|[≤≥]|> \d/, m);
        assert.match(m, /^[A-Z“]/, `starts with a capital: ${m}`);
      }
      await p.locator(to).scrollIntoViewIfNeeded();
      await p.screenshot({ path: join(OUT, 'design-820x1180-mount-message.png') });
      // Each message box is as wide as its field, and words are never split to fit it.
      const boxes = await p.$$eval('.field-msg:not([hidden])', (els) => els.map((e) => ({
        width: e.getBoundingClientRect().width, wrap: getComputedStyle(e).overflowWrap })));
      for (const b of boxes) {
        assert.notEqual(b.wrap, 'anywhere');
        assert.ok(b.width > 200, `a message box ${b.width} px wide`);
      }
      // In inches, the lengths of the message are in inches too.
      await p.check('input[name="unit"][value="in"]');
      await p.waitForFunction((sel) => / in\b/.test(document.querySelector(sel)?.textContent || ''), to);
      assert.match(await p.locator(to).innerText(), /ends at 0\.\d+ in, past the end of its segment \(segment \d is 0\.05906 in long\)$/);
      await p.check('input[name="unit"][value="mm"]');
      // A bend too tight: the label, the end it breaks and why.
      await p.fill(`#f-route-${seg}-straight-length-mm`, '12');
      await p.fill('#f-route-1-bend-radius-mm', '1');
      await p.waitForFunction(() => /must be more than/.test(document.getElementById('f-route-1-bend-radius-mm-msg')?.textContent || ''));
      assert.equal(await p.locator('#f-route-1-bend-radius-mm-msg').innerText(),
        'Radius (centre line) must be more than 1.5 mm (half the pipe\'s size across the bend, so that its inner wall keeps a radius), got 1');
    } finally {
      await tablet.close();
    }
  });

  test('a data sheet\'s intensity table pastes with a header, semicolons and decimal commas, or across the axis', async () => {
    await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
    await page.selectOption('#f-source-emitter-led-pattern', 'table');
    const area = '#f-source-emitter-led-pattern-table-points';
    await page.waitForSelector(area);
    // A spreadsheet's copy: a header row, semicolons, decimal commas.
    await tracedAfter(page, () => page.fill(area, 'Angle (deg);Rel. intensity\n0;1,0\n30;0,85\n60;0,4\n90;0\n'));
    let pattern = (await pageScenario(page)).source.emitter.led.pattern;
    assert.deepEqual(pattern.table.points, [[0, 1], [30, 0.85], [60, 0.4], [90, 0]]);
    assert.match(await page.locator(`${area}-note`).innerText(), /first row was read as a header/);
    // A pattern measured across the axis, tab-separated: the halves are averaged.
    await tracedAfter(page, () => page.fill(area, '-90\t0\n-45\t0.6\n0\t1\n45\t0.4\n90\t0'));
    pattern = (await pageScenario(page)).source.emitter.led.pattern;
    assert.deepEqual(pattern.table.points, [[0, 1], [45, 0.5], [90, 0]]);
    assert.match(await page.locator(`${area}-note`).innerText(), /two halves were averaged/);
    // A bad row is named by its number, in words.
    await page.fill(area, '0 1\n30 lots');
    await page.waitForSelector(`${area}-msg:not([hidden])`);
    assert.equal(await page.locator(`${area}-msg`).innerText(), 'Row 2 of the table must be two numbers “angle, relative intensity”, got “30 lots”');
    await tracedAfter(page, () => page.selectOption('#f-source-emitter-led-pattern', 'lambertian'));
  });

  test('a bend shows its inner and centre-line radius, and opens in the quick look with its own numbers', async () => {
    await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
    const s = await pageScenario(page);
    const bend = s.route[1].bend;
    const d = s.guide.section.round.diameter_mm;
    const inner = bend.radius_mm - d / 2;
    // Beside the field that asks the centre line's radius: the inner one, which the tables use.
    assert.match(await page.locator('#f-route-1-bend-radius-mm-hint').innerText(), new RegExp(`^Inner radius ${inner} mm \\(the centre line's less half the pipe's ${d} mm across the bend\\); leak-free from [\\d.]+ mm inner\\.$`));
    // The table names both, each column with its unit.
    const heads = await page.$$eval('.bend-table thead th', (ths) => ths.map((t) => t.textContent.trim()));
    assert.ok(heads.includes('Centre-line radius, mm') && heads.includes('Inner radius, mm'), heads.join(' | '));
    const row = page.locator('#bend-rows tr[data-segment="1"]');
    const cells = await row.locator('td').allInnerTexts();
    assert.equal(Number(cells[1]), bend.radius_mm);
    assert.equal(Number(cells[2]), inner);
    // The quick look opens in a new tab with this bend's numbers.
    const [quick] = await Promise.all([page.context().waitForEvent('page'), page.click('#bend-1-quick')]);
    await quick.waitForSelector('body[data-ready="true"]', { timeout: 30_000 }).catch(() => {});
    await quick.waitForFunction(() => document.getElementById('bend-radius')?.value !== '', null, { timeout: 30_000 });
    assert.equal(Number(await quick.inputValue('#diameter')), d);
    assert.equal(Number(await quick.inputValue('#bend-radius')), inner);
    assert.equal(Number(await quick.inputValue('#bend-angle')), bend.angle_deg);
    assert.equal(await quick.inputValue('#launch-kind'), 'half_intensity');
    assert.equal(Number(await quick.inputValue('#launch-angle')), 60);
    assert.equal(await quick.inputValue('#material'), 'pmma');
    assert.equal(new URL(quick.url()).hash, '', 'the design leaves the address once read');
    await quick.close();
  });

  test('the CSV has a header block and the page\'s numbering; a saved PNG carries a caption', async () => {
    await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
    const s = await pageScenario(page);
    const [csvFile] = await Promise.all([page.waitForEvent('download'), page.click('#export-csv')]);
    const csv = readFileSync(await csvFile.path(), 'utf8');
    const sections = csv.trimEnd().split('\n\n');
    assert.equal(sections[0].split('\n')[0], '"tirtrace trace report"');
    assert.ok(sections[0].includes(`design,"${s.name}"`), sections[0]);
    assert.match(sections[0], /\nrays,\d+\nseed,\d+\n/);
    assert.match(sections[1], /^"What becomes of the light",%,± %,flux lm,± flux lm\n"Reaches the window \(exit face\)",\d/);
    // The same delivered % as the page shows (to its shown decimals).
    const shown = (await answer(page)).share;
    const inCsv = Number(sections[1].split('\n')[1].split(',')[1]);
    assert.ok(Math.abs(inCsv - 100 * shown) < 0.01, `${inCsv} vs ${100 * shown}`);
    assert.ok(sections.some((sec) => /^mount,on segment,lost %,± %\n"snap clip",3,/.test(sec)), 'the mounts, numbered from 1');
    // The PNG: the chart with a caption strip under it.
    const [png] = await Promise.all([page.waitForEvent('download'), page.click('button.png[data-canvas="exit-map"]')]);
    const file = join(OUT, 'design-exit-map-saved.png');
    await png.saveAs(file);
    const bytes = readFileSync(file);
    const height = bytes.readUInt32BE(20);
    const canvasHeight = await page.$eval('#exit-map', (c) => c.height);
    assert.ok(height > canvasHeight + 20, `${height} px saved for a ${canvasHeight} px chart`);
    // Chart titles are headings, and the intensity chart has its numbers in a table: one row per
    // lit 1° ring, the same figures as the command line's report.
    for (const id of ['exit-map-title', 'intensity-title']) assert.equal(await page.$eval(`#${id}`, (e) => e.tagName), 'H2');
    const cli = cliTrace(s).intensity;
    const lit = cli.share_per_sr.reduce((last, v, k) => (v > 0 ? k : last), -1) + 1;
    await page.click('#intensity-data summary');
    const rows = await page.locator('#intensity-rows tr').count();
    assert.equal(rows, lit);
    const first = await page.locator('#intensity-rows tr').first().locator('td').allInnerTexts();
    assert.equal(Number(first[0]), Number(cli.angle_deg[0].toFixed(1)));
    assert.ok(Math.abs(Number(first[1]) - 100 * cli.share_per_sr[0]) <= 0.5 * 10 ** -Math.max(0, first[1].split('.')[1]?.length ?? 0) + 1e-12, `${first[1]} vs ${100 * cli.share_per_sr[0]}`);
    // The exit map's numbers: a row per cell across the height, the command line's figures.
    const map = cliTrace(s).exit_map;
    await page.click('#exit-map-data summary');
    await page.waitForFunction((n) => document.querySelectorAll('#exit-map-rows tr').length === n, map.cells);
    const mid = Math.floor(map.cells / 2);
    const cell = await page.locator('#exit-map-rows tr').nth(map.cells - 1 - mid).locator('td').nth(mid).innerText();
    assert.ok(Math.abs(Number(cell) - 100 * map.share_per_area[mid * map.cells + mid]) <= 0.0005 + 1e-12, `${cell} vs ${100 * map.share_per_area[mid * map.cells + mid]}`);
    assert.equal(await page.$eval('#route-view-title', (e) => e.tagName), 'H2');
  });

  test('the 3D view shows the board, a scale and axes, has views relative to the board, and never loses the model', async () => {
    await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
    const view = page.locator('#route-view');
    await view.scrollIntoViewIfNeeded();
    // A scale bar of a round length whose pixels match the drawing's scale.
    const bar = await view.getAttribute('data-scale-bar');
    assert.match(bar, /^(1|2|5)(0*|\.0*[125])? mm$|^0\.(0*)(1|2|5) mm$/);
    await page.check('input[name="unit"][value="in"]');
    assert.match(await view.getAttribute('data-scale-bar'), / in$/);
    await page.check('input[name="unit"][value="mm"]');
    // The board: its green tint is drawn.
    const greenish = () => page.$eval('#route-view', (c) => {
      const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      for (let i = 0; i < d.length; i += 4) if (d[i + 1] > d[i] + 8 && d[i + 1] > d[i + 2] + 4 && d[i] > 200) n += 1;
      return n;
    });
    assert.ok((await greenish()) > 200, 'no board drawn');
    // The leakage along the route, straightened under the view: the same in every view (the
    // strip in the pipe hides where the pipe runs toward the viewer), a mark per segment, and
    // its worst place in a segment the command line says leaks.
    const line = page.locator('#leak-line');
    const lineText = await line.innerText();
    const scenario = await pageScenario(page);
    assert.equal(await line.locator('.leak-seg').count(), scenario.route.length);
    assert.equal(await line.locator('.leak-bin').count(), cliTrace(scenario).leak_along_route.share.length);
    const worst = Number(await line.getAttribute('data-worst-segment'));
    assert.ok(cliTrace(scenario).segments[worst].leaked.share > 0, `segment ${worst + 1} is named as leaking most`);
    assert.match(lineText, new RegExp(`Most leakage [0-9.]+ mm from the entry face, in segment ${worst + 1}\\.`));
    assert.match(lineText, /Exit, [0-9.]+ mm/);
    for (const v of ['plan', 'side', 'board', 'turned']) {
      await page.click(`[data-view="${v}"]`);
      await page.locator('.route-card').screenshot({ path: join(OUT, `design-view-${v}.png`) });
      assert.ok(await line.isVisible());
      assert.equal(await line.innerText(), lineText, `the leakage line changed with the ${v} view`);
    }
    await page.check('input[name="unit"][value="in"]');
    assert.match(await line.innerText(), /Exit, [0-9]+\.[0-9]{3} in/);
    assert.match(await page.locator('#route-legend').innerText(), /within [0-9.]+ in/);
    await page.check('input[name="unit"][value="mm"]');
    // Dragging and keys far off: the model stays on the canvas.
    const ink = () => page.$eval('#route-view', (c) => {
      const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      for (let i = 0; i < d.length; i += 4) if (d[i] < 60 && d[i + 1] < 70 && d[i + 2] < 80) n += 1;
      return n;
    });
    await view.focus();
    for (let k = 0; k < 120; k += 1) await page.keyboard.press('Shift+ArrowRight');
    for (let k = 0; k < 40; k += 1) await page.keyboard.press('-');
    assert.ok((await ink()) > 50, 'the model left the canvas');
    const box = await view.boundingBox();
    await page.mouse.move(box.x + 20, box.y + 20);
    await page.keyboard.down('Shift');
    await page.mouse.down();
    await page.mouse.move(box.x + 20, box.y + 5000, { steps: 4 });
    await page.mouse.up();
    await page.keyboard.up('Shift');
    assert.ok((await ink()) > 50, 'the model left the canvas after a drag');
    await page.screenshot({ path: join(OUT, 'design-view-kept.png'), clip: box });
    await page.click('[data-view="fit"]');
  });

  test('a kept design with defaults left out, or with a field the core cannot read, comes back in the form', async () => {
    const { other, p } = await freshPage();
    try {
      const kept = await pageScenario(p);
      // Defaults left out: the form shows the core's (no trace settings, no gap, no bend turn).
      const bare = JSON.parse(JSON.stringify(kept));
      delete bare.trace;
      delete bare.source.gap_mm;
      for (const seg of bare.route) if (seg.bend) delete seg.bend.turn_deg;
      await reopenWith(p, bare);
      assert.equal(await p.inputValue('#f-trace-rays'), '100000');
      assert.equal(await p.inputValue('#f-trace-seed'), '1');
      assert.equal(await p.inputValue('#f-source-gap-mm'), '0');
      assert.equal(await p.inputValue('#f-route-1-bend-turn-deg'), '0');
      assert.equal(await p.locator('#toolbar-msg').isVisible(), false);
      // A whole-number field holding 1.5 (typed on the last visit): kept, and named by the check.
      await reopenWith(p, { ...kept, trace: { ...kept.trace, rays: 1.5 } });
      assert.equal(await p.inputValue('#f-trace-rays'), '1.5');
      await p.waitForFunction(() => /must be a whole number/.test(document.getElementById('f-trace-rays-msg')?.textContent || ''));
      assert.equal(await p.locator('#toolbar-msg').isVisible(), false);
    } finally {
      await other.close();
    }
  });

  test('the page stays responsive while a large trace refines', async () => {
    // Long tasks (main-thread work over 50 ms, reported by the browser's Long Tasks API) while a
    // million-ray trace sharpens: tracing and merging run in workers, so none may come near a
    // frozen page (200 ms, common practice, no source).
    await page.evaluate(() => {
      window.__longest = 0;
      window.__longObserver = new PerformanceObserver((list) => {
        for (const e of list.getEntries()) window.__longest = Math.max(window.__longest, e.duration);
      });
      window.__longObserver.observe({ type: 'longtask' });
    });
    await page.fill('#f-trace-rays', '3000000');
    await page.waitForFunction(() => document.body.dataset.tracing === 'true', null, { timeout: 20_000 });
    // Keep typing into another field while it runs, like a person trying values.
    for (const v of ['0.3', '0.35', '0.4']) {
      await page.fill('#f-source-gap-mm', v);
      await page.waitForTimeout(700);
    }
    const longest = await page.evaluate(() => {
      window.__longObserver.disconnect();
      return window.__longest;
    });
    assert.ok(longest < 200, `a main-thread task took ${longest.toFixed(0)} ms`);
    if (await page.isEnabled('#cancel')) await page.click('#cancel');
    await tracedAfter(page, () => page.fill('#f-trace-rays', '30000'));
  });

  test('stops a long trace', async () => {
    await page.fill('#f-trace-rays', '3000000');
    await page.waitForFunction(() => document.body.dataset.tracing === 'true', null, { timeout: 20_000 });
    await page.click('#cancel');
    await page.waitForFunction(() => /Stopped at/.test(document.getElementById('progress-text').textContent));
    const stoppedAt = await page.locator('#progress-text').innerText();
    await page.waitForTimeout(800);
    assert.equal(await page.locator('#progress-text').innerText(), stoppedAt, 'updates came after Stop');
    const rays = Number(await page.getAttribute('#answer', 'data-rays'));
    assert.ok(rays < 3000000, `the shown answer is for ${rays} rays`);
    await tracedAfter(page, async () => {
      await page.fill('#f-trace-rays', '30000');
    });
  });

  test('saves a file and opens it again; malformed files keep the design', async () => {
    const saved = await pageScenario(page);
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('#save-file')]);
    const path = join(tmpdir(), `tirtrace-saved-${process.pid}.json`);
    await download.saveAs(path);
    assert.deepEqual(JSON.parse(readFileSync(path, 'utf8')), saved);
    // Change the design, then open the file: the saved design comes back.
    await tracedAfter(page, () => page.selectOption('#demo', 'soil_sensor_ambient_light_window.json'));
    assert.notDeepEqual(await pageScenario(page), saved);
    await tracedAfter(page, () => page.setInputFiles('#file-input', path));
    assert.deepEqual(await pageScenario(page), saved);
    // Malformed: not JSON, an unknown field, a value out of range. The design stays.
    const cases = [
      ['broken.json', '{ "version": 1, "guide": ', /not JSON/],
      ['unknown.json', JSON.stringify({ ...saved, colour: 'red' }), /colour/],
      ['range.json', JSON.stringify({ ...saved, route: [{ bend: { radius_mm: -3, angle_deg: 90 } }] }), /route\[0\]\.bend\.radius_mm/],
    ];
    for (const [name, text, want] of cases) {
      await page.setInputFiles('#file-input', { name, mimeType: 'application/json', buffer: Buffer.from(text) });
      await page.waitForFunction((n) => (document.getElementById('toolbar-msg').textContent || '').includes(n), name);
      const msg = await page.locator('#toolbar-msg').innerText();
      assert.match(msg, want, `${name}: ${msg}`);
      assert.match(msg, /unchanged/);
      assert.deepEqual(await pageScenario(page), saved, `${name} changed the design`);
    }
    await page.screenshot({ path: join(OUT, 'design-malformed-file.png') });
  });

  test('names holding HTML are shown as text', async () => {
    const s = await pageScenario(page);
    const evil = '<img src=x onerror="window.__pwned=1">Pipe <b>bold</b>';
    const doc = { ...s, name: evil, guide: { ...s.guide, contacts: [{ name: '<script>window.__pwned=2</script>clip', segment: 0, from_mm: 0, to_mm: 1, medium: { library: 'polycarbonate' } }] } };
    // Pasted: first something malformed (the design stays), then the scenario.
    await page.click('#paste-design');
    await page.fill('#paste-text', '{"version": 1, "guide": {"section": 3}}');
    await page.click('#paste-use');
    await page.waitForSelector('#paste-msg:not([hidden])');
    assert.match(await page.locator('#paste-msg').innerText(), /unchanged/);
    assert.deepEqual(await pageScenario(page), s);
    await page.screenshot({ path: join(OUT, 'design-paste-dialog.png') });
    await page.fill('#paste-text', JSON.stringify(doc, null, 2));
    await tracedAfter(page, () => page.click('#paste-use'));
    assert.equal(await page.locator('#paste-dialog[open]').count(), 0, 'the dialog stayed open');
    assert.equal(await page.locator('#design-name').textContent(), evil);
    assert.equal(await page.locator('#design-name img, #segment-rows img, #segment-rows script').count(), 0);
    assert.match(await page.locator('#segment-rows').innerText(), /<script>window.__pwned=2<\/script>clip/);
    assert.equal(await page.evaluate(() => window.__pwned), undefined);
    assert.equal(await page.inputValue('#f-name'), evil);
  });

  test('a share link opens the identical design in a fresh browser', async () => {
    await tracedAfter(page, () => page.selectOption('#demo', 'clad_plastic_fibre.json'));
    await page.fill('#f-name', 'Fibre for the share test: “quotes” & <angle brackets>');
    await page.waitForTimeout(400);
    const mine = await pageScenario(page);
    await page.click('#share');
    await page.waitForFunction(() => document.getElementById('share').dataset.link);
    const link = await page.getAttribute('#share', 'data-link');
    assert.ok(link.startsWith(`${server.origin}/#`), link);
    const fresh = await browser.newContext({ viewport: { width: 820, height: 1180 } });
    fresh.on('request', (r) => requests.push(r.url()));
    try {
      const p2 = await fresh.newPage();
      watch(p2);
      await p2.goto(link);
      await p2.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      await p2.waitForFunction(() => Number(document.body.dataset.traced || 0) > 0, null, { timeout: 60_000 });
      assert.deepEqual(await pageScenario(p2), mine);
      const a = await answer(p2);
      const b = cliTrace(mine);
      assert.equal(a.share, b.delivered.share);
      await assertNoJunk(p2, 'tablet');
      await p2.screenshot({ path: join(OUT, 'design-820x1180.png'), fullPage: true });
      await p2.screenshot({ path: join(OUT, 'design-820x1180-top.png') });
    } finally {
      await fresh.close();
    }
  });

  test('the medium beyond the window can differ from the surroundings', async () => {
    await tracedAfter(page, () => page.selectOption('#f-guide-exit-medium', 'water'));
    assert.deepEqual((await pageScenario(page)).guide.exit_medium, { library: 'water' });
    const inWater = await answer(page);
    // The CLI agrees on the same document (the exit Fresnel loss into water is smaller).
    assert.equal(inWater.share, cliTrace(await pageScenario(page)).delivered.share);
    await tracedAfter(page, () => page.selectOption('#f-guide-exit-medium', ''));
    assert.equal((await pageScenario(page)).guide.exit_medium, undefined);
  });

  test('the unit switch shows inches and keeps millimetres in the document', async () => {
    const s = await pageScenario(page);
    await page.check('input[name="unit"][value="in"]');
    const d = s.guide.section.round?.diameter_mm;
    assert.ok(d !== undefined, 'this check needs a round pipe (the fibre example)');
    {
      const shown = Number(await page.inputValue('#f-guide-section-round-diameter-mm'));
      assert.ok(Math.abs(shown - d / 25.4) < 1e-4, `${shown} in for ${d} mm`);
      await tracedAfter(page, () => page.fill('#f-guide-section-round-diameter-mm', '0.05'));
      assert.ok(Math.abs((await pageScenario(page)).guide.section.round.diameter_mm - 1.27) < 1e-12);
    }
    // Every length shown follows: inputs to 0.0001 in, the tables' lengths and their heads.
    const sNow = await pageScenario(page);
    const firstStraight = sNow.route.findIndex((seg) => seg.straight);
    const typedLength = await page.inputValue(`#f-route-${firstStraight}-straight-length-mm`);
    assert.equal(typedLength, String(Number((sNow.route[firstStraight].straight.length_mm / 25.4).toFixed(4))));
    const segHeads = await page.$$eval('[data-length-head]', (ths) => ths.map((t) => t.textContent));
    assert.ok(segHeads.length >= 4 && segHeads.every((t) => t.endsWith(', in')), segHeads.join(' | '));
    const lengthCell = await page.locator(`#segment-rows tr[data-segment="${firstStraight}"] td`).nth(1).innerText();
    assert.equal(Number(lengthCell), Number((sNow.route[firstStraight].straight.length_mm / 25.4).toFixed(4)));
    await page.check('input[name="unit"][value="mm"]');
    assert.ok((await page.$$eval('[data-length-head]', (ths) => ths.map((t) => t.textContent))).every((t) => t.endsWith(', mm')));
  });

  test('text contrast meets WCAG 2.1 AA and every control has a label and a 44 px target', async () => {
    // WCAG 2.1, success criterion 1.4.3: contrast ratio ≥ 4.5:1 for text (3:1 for large text,
    // ≥ 24 px, or ≥ 18.66 px bold), with relative luminance as defined there (sRGB).
    const failures = await page.evaluate(() => {
      const lin = (c) => {
        const v = c / 255;
        return v <= 0.03928 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4;
      };
      const lum = ([r, g, b]) => 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
      const rgba = (s) => (s.match(/[\d.]+/g) || []).map(Number);
      const background = (el) => {
        for (let e = el; e; e = e.parentElement) {
          const c = rgba(getComputedStyle(e).backgroundColor);
          if (c.length >= 3 && (c.length < 4 || c[3] > 0.99)) return c.slice(0, 3);
        }
        return [255, 255, 255];
      };
      const out = [];
      const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
      for (let n = walker.nextNode(); n; n = walker.nextNode()) {
        const el = n.parentElement;
        if (!n.textContent.trim() || !el || el.closest('[hidden], dialog:not([open]), button:disabled, option, select')) continue;
        const st = getComputedStyle(el);
        if (st.visibility === 'hidden' || st.display === 'none' || Number(st.opacity) < 1) continue;
        if (el.getClientRects().length === 0) continue;
        const fg = rgba(st.color).slice(0, 3);
        const bg = background(el);
        const [a, b] = [lum(fg), lum(bg)].sort((x, y) => y - x);
        const ratio = (a + 0.05) / (b + 0.05);
        const size = parseFloat(st.fontSize);
        const large = size >= 24 || (size >= 18.66 && Number(st.fontWeight) >= 700);
        if (ratio < (large ? 3 : 4.5)) out.push(`${ratio.toFixed(2)}:1 "${n.textContent.trim().slice(0, 40)}"`);
      }
      return out;
    });
    assert.deepEqual(failures, []);
    const unlabelled = await page.evaluate(() =>
      [...document.querySelectorAll('input:not([type="hidden"]):not([hidden]), select, textarea, button, canvas[tabindex]')]
        .filter((el) => el.getClientRects().length > 0)
        .filter((el) => {
          if (el.getAttribute('aria-label') || el.getAttribute('aria-labelledby')) return false;
          if (el.tagName === 'BUTTON') return !el.textContent.trim();
          return !(el.labels && el.labels.length);
        })
        .map((el) => el.id || el.outerHTML.slice(0, 60)));
    assert.deepEqual(unlabelled, []);
    // Names read aloud keep the unit apart ("Chip side, mm", not "Chip sidemm"), and no field is
    // named like the group it sits in ("Light source" inside "Light source").
    const glued = await page.evaluate(() =>
      [...document.querySelectorAll('#editor label')]
        .map((l) => l.textContent)
        .filter((t) => /[a-z)](mm|in|deg|nm|dB\/m|lm|mW)$/.test(t)));
    assert.deepEqual(glued, []);
    assert.ok(await page.getByLabel('Bulk attenuation, dB/m', { exact: true }).isVisible());
    const doubled = await page.evaluate(() =>
      [...document.querySelectorAll('#editor fieldset')].flatMap((f) => {
        const legend = f.querySelector(':scope > legend')?.textContent.trim();
        return [...f.querySelectorAll('label')].filter((l) => l.textContent.trim() === legend).map((l) => legend);
      }));
    assert.deepEqual(doubled, []);
    const small = await page.evaluate(() =>
      [...document.querySelectorAll('input:not([type="radio"]):not([hidden]), select, textarea, button, .unit-option')]
        .filter((el) => el.getClientRects().length > 0 && !el.closest('dialog:not([open])'))
        .filter((el) => el.getBoundingClientRect().height < 44)
        .map((el) => `${el.id || el.className || el.tagName}: ${el.getBoundingClientRect().height.toFixed(0)} px`));
    assert.deepEqual(small, []);
  });

  test('the whole loop works at portrait-tablet size', async () => {
    const tablet = await browser.newContext({ viewport: { width: 820, height: 1180 }, hasTouch: true });
    tablet.on('request', (r) => requests.push(r.url()));
    try {
      const p = await tablet.newPage();
      watch(p);
      await p.goto(`${server.origin}/`);
      await p.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      await p.waitForFunction(() => Number(document.body.dataset.traced || 0) > 0, null, { timeout: 60_000 });
      // Nothing wider than the screen.
      assert.ok(await p.evaluate(() => document.documentElement.scrollWidth <= 820), 'the page scrolls sideways');
      const before = await answer(p);
      // The starter's bend made tighter with taps and typing: less reaches the window.
      await tracedAfter(p, () => p.fill('#f-route-1-bend-radius-mm', '3'));
      const after = await answer(p);
      assert.ok(after.share < before.share - 3 * (after.ci95 + before.ci95), `${before.share} → ${after.share}`);
      assert.equal(after.share, cliTrace(await pageScenario(p)).delivered.share);
      await p.locator('#add-straight').evaluate((el) => el.scrollIntoView({ block: 'center' }));
      await tracedAfter(p, () => p.tap('#add-straight'));
      assert.equal((await pageScenario(p)).route.length, 4);
      // The answer stays in view while the form scrolls.
      await p.locator('#part-trace').scrollIntoViewIfNeeded();
      const top = await p.locator('.answer-card').boundingBox();
      assert.ok(top && top.y >= -1 && top.y < 40, `the answer card is at y = ${top?.y}`);
      await p.screenshot({ path: join(OUT, 'design-820x1180-editing.png') });
      // The toolbar keeps to two rows: the file actions sit behind one button, and open on a tap.
      await p.evaluate(() => window.scrollTo(0, 0));
      const rows = () => p.$$eval('.toolbar > *', (els) => new Set(els.filter((e) => e.getClientRects().length).map((e) => Math.round(e.getBoundingClientRect().top))).size);
      assert.ok((await rows()) <= 2, `the toolbar has ${await rows()} rows`);
      assert.equal(await p.locator('#save-file').isVisible(), false);
      await p.screenshot({ path: join(OUT, 'design-820x1180-toolbar-closed.png') });
      await p.tap('#file-actions-toggle');
      // From the answer card, one tap reaches the 3D view and the budget below the long form,
      // and the answer stays in view above them.
      for (const [link, target] of [['3D view', '#route-view'], ['Where the light is lost', '#budget-title']]) {
        await p.locator('.answer-card .jump a', { hasText: link }).tap();
        await p.waitForTimeout(300);
        const box = await p.locator(target).boundingBox();
        assert.ok(box && box.y >= 0 && box.y < 1180, `${link}: ${target} at y = ${box?.y}`);
        const card = await p.locator('.answer-card').boundingBox();
        assert.ok(card && card.y >= -1 && card.y < 40, `the answer card at y = ${card?.y}`);
      }
      await p.screenshot({ path: join(OUT, 'design-820x1180-jumped.png') });
      await p.locator('.answer-card .jump a', { hasText: 'Back to the form' }).tap();
      assert.equal(await p.locator('#save-file').isVisible(), true);
      assert.equal(await p.getAttribute('#file-actions-toggle', 'aria-expanded'), 'true');
      await p.screenshot({ path: join(OUT, 'design-820x1180-toolbar.png') });
      await p.tap('#file-actions-toggle');
      // A design with the LED's flux given (the thermostat example): its absolute figures (flux,
      // intensity) and the notes open below the answer with one tap.
      await openKept(p, JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', 'thermostat_status_led.json'), 'utf8')));
      await p.locator('#part-trace').scrollIntoViewIfNeeded();
      assert.equal(await p.locator('#extra').isVisible(), false);
      await p.tap('#more-figures');
      assert.equal(await p.getAttribute('#more-figures', 'aria-expanded'), 'true');
      assert.ok(await p.locator('#extra').isVisible(), 'the absolute figures do not open');
      assert.match(await p.locator('#extra').innerText(), /Flux reaching the window\s+\d/);
      const opened = await p.locator('.answer-card').boundingBox();
      assert.ok(opened && opened.y >= -1 && opened.height < 0.75 * 1180, `the opened card: ${JSON.stringify(opened)}`);
      await p.screenshot({ path: join(OUT, 'design-820x1180-more-figures.png') });
      await p.tap('#more-figures');
      assert.equal(await p.locator('#extra').isVisible(), false);
    } finally {
      await tablet.close();
    }
  });

  test('works offline from the service worker', async () => {
    const controlled = await serviceWorkerControls(page);
    assert.equal(controlled, true, 'no service worker controls the page');
    // Let the worker cache everything (install finished), then cut the server.
    await page.reload();
    await page.waitForSelector('body[data-ready="true"]');
    await stopServer(server.child);
    assert.equal(await reachable(`${server.origin}/index.html`), false, 'the server still answers');
    await page.reload();
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    await tracedAfter(page, () => page.fill('#f-trace-rays', '20000'));
    const a = await answer(page);
    assert.equal(a.rays, 20000);
    // The examples are there offline too.
    await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
  });

  test('no request left the origin and nothing went to the console', () => {
    const foreign = requests.filter((u) => !u.startsWith(server.origin) && !u.startsWith('blob:') && !u.startsWith('data:'));
    assert.deepEqual(foreign, []);
    assert.deepEqual(consoleErrors, []);
  });
});

// Keep ROOT referenced for readers looking for where the files come from.
void ROOT;
