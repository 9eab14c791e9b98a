// How the design page behaves around the design itself, in Debian's Chromium (playwright-core):
// a reload with an entry to fix keeps the last complete design's results (marked stale); a
// share link opened in a tab that already shows the designer loads it, a malformed one says so
// and keeps the design, a very long one warns; storage that is full or refuses is said plainly,
// with the design offered as a file; "New design" starts a minimal design and the previous one
// can be brought back; the attenuation follows the chosen material unless the designer typed
// their own; tables fit (or scroll with a visible cue) at desktop, tablet and phone sizes.
// Screenshots go to tests/e2e/out/ (git-ignored).
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e.
// Run: node --test tests/e2e/behaviour.test.mjs

import assert from 'node:assert/strict';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { chromium } from 'playwright-core';

import { STATE_KEY, answer, assertNoJunk, cliTrace, pageScenario, tracedAfter } from './design-helpers.mjs';
import { CHROMIUM, CHROMIUM_ARGS, CLI, OUT, ROOT, WWW, collectErrors, startServer, stopServer } from './harness.mjs';

const example = (name) => JSON.parse(readFileSync(join(ROOT, 'examples', 'scenarios', name), 'utf8'));

const DESKTOP = { width: 1280, height: 800 };
const TABLET = { width: 820, height: 1180 };

describe('the design page keeps, shares and starts designs', { concurrency: false }, () => {
  let server;
  let browser;
  const consoleErrors = [];
  const requests = [];

  /** A designer page in a browser context of its own (its own storage), ready. */
  async function open(viewport = DESKTOP, { init, hash = '' } = {}) {
    const context = await browser.newContext({ viewport, acceptDownloads: true, hasTouch: viewport === TABLET });
    context.on('request', (r) => requests.push(r.url()));
    if (init) await context.addInitScript(init);
    const page = await context.newPage();
    collectErrors(page, consoleErrors);
    await page.goto(`${server.origin}/${hash}`);
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    return { context, page };
  }

  /** Keep `scenario` in the page's storage (as the page keeps its design) and reload. */
  async function reopenWith(page, scenario) {
    await page.evaluate(([k, s]) => localStorage.setItem(k, JSON.stringify({ scenario: s, drafts: {}, unit: 'mm' })), [STATE_KEY, scenario]);
    await page.reload();
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
  }

  const traced = (page) => page.waitForFunction(() => Number(document.body.dataset.traced || 0) > 0, null, { timeout: 60_000 });
  const toolbarText = (page) => page.locator('#toolbar-msg').innerText();

  before(async () => {
    assert.ok(existsSync(join(WWW, 'pkg', 'tirtrace.js')), 'www/pkg is missing: run `bash scripts/build.sh` first');
    assert.ok(existsSync(CLI), 'target/debug/tirtrace is missing: run `cargo build` first');
    mkdirSync(OUT, { recursive: true });
    server = await startServer();
    browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  });

  after(async () => {
    await browser?.close();
    await stopServer(server?.child);
  });

  test('a reload with an entry to fix keeps the last complete design\'s results, marked stale', async () => {
    for (const viewport of [DESKTOP, TABLET]) {
      const { context, page } = await open(viewport);
      try {
        await reopenWith(page, { ...example('thermostat_status_led.json'), trace: { rays: 20_000, seed: 3, max_interactions: 10_000 } });
        await traced(page);
        const complete = await pageScenario(page);
        const before = await answer(page);
        // An entry the core refuses, then one that is not a number; each survives a reload.
        for (const [field, text] of [['#f-route-1-bend-radius-mm', '-3'], ['#f-source-gap-mm', 'abc']]) {
          await page.fill(field, text);
          await page.waitForSelector('#stale-note:not([hidden])');
          await page.waitForTimeout(300); // the design is kept 150 ms after the last key
          await page.reload();
          await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
          assert.equal(await page.inputValue(field), text, `${field} kept what was typed`);
          await traced(page);
          assert.ok(await page.locator('#stale-note').isVisible(), `${field}: the results are not marked as those of the last complete design`);
          const shown = await answer(page);
          assert.deepEqual(shown, before, `${field}: the results after the reload are not the last complete design's`);
          assert.notEqual(await page.locator('#answer-value').innerText(), '—');
          assert.match(await page.locator('#status').innerText(), /needs? fixing/);
          assert.ok((await page.locator('#budget-rows tr').count()) > 0, 'the budget is empty');
          await assertNoJunk(page, `stale results after a reload (${field})`);
        }
        await page.screenshot({ path: join(OUT, `behaviour-stale-reload-${viewport.width}x${viewport.height}.png`) });
        // Put right, the design traces afresh and the stale note goes.
        await tracedAfter(page, async () => {
          await page.fill('#f-source-gap-mm', String(complete.source.gap_mm));
          await page.fill('#f-route-1-bend-radius-mm', String(complete.route[1].bend.radius_mm));
        });
        assert.ok(!(await page.locator('#stale-note').isVisible()));
        assert.deepEqual(await answer(page), before);
      } finally {
        await context.close();
      }
    }
  });

  test('a share link opened in a tab that shows the designer loads that design; a malformed one keeps it', async () => {
    const { context, page } = await open(DESKTOP);
    try {
      await traced(page);
      await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
      const shared = await pageScenario(page);
      await page.click('#share');
      await page.waitForFunction(() => document.getElementById('share').dataset.link);
      const link = await page.getAttribute('#share', 'data-link');
      await tracedAfter(page, () => page.selectOption('#demo', 'soil_sensor_ambient_light_window.json'));
      const current = await pageScenario(page);
      assert.notDeepEqual(current, shared);
      // The link arrives in this tab (pasted into the address bar, or clicked in another page).
      await tracedAfter(page, () => page.evaluate((h) => { location.hash = h; }, new URL(link).hash));
      assert.deepEqual(await pageScenario(page), shared, 'the link\'s design was not loaded');
      assert.match(await toolbarText(page), /Opened the design from the link/);
      assert.equal(await page.evaluate(() => location.hash), '', 'the link stays in the address bar');
      assert.equal((await answer(page)).share, cliTrace(shared).delivered.share);
      // Back to the previous design, then malformed links: said plainly, the design kept.
      await tracedAfter(page, () => page.getByRole('button', { name: 'Back to the previous design' }).click());
      assert.deepEqual(await pageScenario(page), current);
      for (const bad of ['#d=!!!', '#d=', '#j=%%%', '#d=AAAA_not-a-design']) {
        await page.evaluate(() => { document.getElementById('toolbar-msg').hidden = true; });
        await page.evaluate((h) => { location.hash = h; }, bad);
        await page.waitForSelector('#toolbar-msg:not([hidden])');
        const msg = await toolbarText(page);
        assert.match(msg, /^The share link is damaged or incomplete/, `${bad}: ${msg}`);
        assert.match(msg, /Your design is unchanged/, `${bad}: ${msg}`);
        assert.equal(await page.getAttribute('#toolbar-msg', 'data-kind'), 'error');
        assert.deepEqual(await pageScenario(page), current, `${bad} changed the design`);
      }
      await page.screenshot({ path: join(OUT, 'behaviour-bad-link-1280x800.png') });
      // A fragment that is no share link (an anchor) is left alone.
      await page.evaluate(() => { document.getElementById('toolbar-msg').hidden = true; location.hash = 'budget-title'; });
      await page.waitForTimeout(300);
      assert.equal(await page.isVisible('#toolbar-msg'), false);
    } finally {
      await context.close();
    }
  });

  test('a share link opened in a new tab with a malformed design says so and shows the kept design', async () => {
    const { context, page } = await open(TABLET, { hash: '#d=!!!' });
    try {
      assert.match(await toolbarText(page), /^The share link is damaged or incomplete/);
      await traced(page);
      await page.screenshot({ path: join(OUT, 'behaviour-bad-link-820x1180.png') });
    } finally {
      await context.close();
    }
  });

  test('a very long share link says how long it is and why it may not arrive whole', async () => {
    const { context, page } = await open(DESKTOP);
    try {
      // A data sheet's table of 600 rows: numbers that do not compress much.
      const base = example('thermostat_status_led.json');
      let seed = 12345;
      const noise = () => {
        seed = (seed * 1103515245 + 12345) % 2147483648;
        return seed / 2147483648;
      };
      const points = Array.from({ length: 600 }, (_, i) => {
        const deg = Number(((90 * i) / 599).toFixed(4));
        return [deg, Number((Math.cos((deg * Math.PI) / 180) * (0.9 + 0.1 * noise())).toFixed(6))];
      });
      const long = { ...base, source: { ...base.source, emitter: { led: { ...base.source.emitter.led, pattern: { table: { points } } } } } };
      await reopenWith(page, long);
      await traced(page);
      await page.click('#share');
      await page.waitForFunction(() => document.getElementById('share').dataset.link);
      const link = await page.getAttribute('#share', 'data-link');
      assert.ok(link.length > 2000, `the test's link is only ${link.length} characters`);
      const msg = await toolbarText(page);
      assert.match(msg, new RegExp(`${link.length.toLocaleString('en')} characters`), msg);
      assert.match(msg, /longer than 2,000 characters/, msg);
      assert.match(msg, /Save file/, msg);
      assert.equal(await page.getAttribute('#toolbar-msg', 'data-kind'), 'error');
      // A short link has no such warning.
      await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
      await page.click('#share');
      await page.waitForFunction((l) => document.getElementById('share').dataset.link !== l, link);
      assert.doesNotMatch(await toolbarText(page), /longer than/);
    } finally {
      await context.close();
    }
  });

  test('Copy share link asks for the copy within the click, and a refused copy shows the link in a dialog, not the toolbar', async () => {
    // The clipboard stands in for the browser's: it records the event being handled when the
    // copy was asked for (WebKit refuses a copy asked for after the click's handler has given
    // way, as it does at the first await), and refuses every copy once told to.
    const clipboard = () => {
      window.copies = [];
      const take = (what) => {
        window.copies.push({ during: window.event?.type ?? null, what });
        return window.refuseCopies ? Promise.reject(new DOMException('refused', 'NotAllowedError')) : Promise.resolve();
      };
      Object.defineProperty(navigator, 'clipboard', {
        value: { write: (items) => take(`items: ${items.length}`), writeText: (t) => take(`text: ${t.length}`) },
      });
    };
    const { context, page } = await open(TABLET, { init: clipboard });
    try {
      await traced(page);
      await page.tap('#file-actions-toggle');
      await page.tap('#share');
      await page.waitForFunction(() => document.getElementById('share').dataset.link);
      const copies = await page.evaluate(() => window.copies);
      assert.equal(copies.length, 1, JSON.stringify(copies));
      assert.equal(copies[0].during, 'click', 'the copy was asked for after the click had been handled');
      assert.match(await toolbarText(page), /^Share link copied/);
      assert.ok(await page.locator('#link-dialog').isHidden());
      // Refused: the link in a dialog, selected, to copy by hand; the toolbar stays short.
      await page.evaluate(() => { window.refuseCopies = true; });
      await page.tap('#share');
      await page.waitForSelector('#link-dialog[open]');
      const link = await page.getAttribute('#share', 'data-link');
      assert.equal(await page.inputValue('#link-text'), link);
      assert.equal(await page.evaluate(() => {
        const t = document.getElementById('link-text');
        return t.value.slice(t.selectionStart, t.selectionEnd);
      }), link, 'the link is not selected');
      const msg = await toolbarText(page);
      assert.ok(!msg.includes('#d='), `the toolbar spells out the link: ${msg}`);
      const bar = await page.locator('#toolbar-msg').boundingBox();
      assert.ok(bar.height < 100, `the toolbar message is ${bar.height} px high`);
      await page.screenshot({ path: join(OUT, 'behaviour-link-dialog-820x1180.png') });
      await page.tap('#link-copy');
      assert.match(await page.locator('#link-msg').innerText(), /did not let the page copy it/);
      await page.tap('#link-close');
      assert.ok(await page.locator('#link-dialog').isHidden());
    } finally {
      await context.close();
    }
  });

  // Storage that refuses every write once the page has a flag set (as a full one does).
  const FULL_STORAGE = () => {
    const real = Storage.prototype.setItem;
    Storage.prototype.setItem = function setItem(key, value) {
      if (window.tirtraceStorageFull || localStorage.getItem('test.storage-full') === '1') {
        throw new DOMException('The quota has been exceeded.', 'QuotaExceededError');
      }
      return real.call(this, key, value);
    };
  };

  test('when storage is full the page says the design is not kept and offers it as a file', async () => {
    const { context, page } = await open(DESKTOP, { init: FULL_STORAGE });
    try {
      await traced(page);
      await page.evaluate(() => { window.tirtraceStorageFull = true; });
      await page.fill('#f-name', 'Kept nowhere but this tab');
      await page.waitForSelector('#storage-msg:not([hidden])');
      const msg = await page.locator('#storage-msg').innerText();
      assert.match(msg, /could not be kept in this browser/, msg);
      assert.doesNotMatch(msg, /\bis kept\b|\bsaved\b/i, msg);
      assert.equal(await page.getAttribute('#storage-msg', 'data-kind'), 'error');
      assert.doesNotMatch(await page.locator('body').innerText(), /(?<!could not be )kept in this browser/, 'the page claims the design is kept');
      await page.screenshot({ path: join(OUT, 'behaviour-storage-full-1280x800.png') });
      // The offer saves the design as it is on the page.
      const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Save it as a file' }).click()]);
      assert.match(download.suggestedFilename(), /^kept-nowhere-but-this-tab\.tirtrace\.json$/);
      const file = JSON.parse(readFileSync(await download.path(), 'utf8'));
      assert.equal(file.name, 'Kept nowhere but this tab');
      // Further edits say it again while storage refuses; once it takes the design the note goes.
      await page.fill('#f-name', 'Still nowhere');
      await page.waitForSelector('#storage-msg:not([hidden])');
      assert.match(await page.locator('#storage-msg').innerText(), /could not be kept in this browser/);
      // A design opened meanwhile keeps its way back (the note has its own line).
      await tracedAfter(page, () => page.selectOption('#demo', 'thermostat_status_led.json'));
      assert.ok(await page.getByRole('button', { name: 'Back to the previous design' }).isVisible());
      assert.ok(await page.isVisible('#storage-msg'));
      await page.evaluate(() => { window.tirtraceStorageFull = false; });
      await page.fill('#f-name', 'Kept again');
      await page.waitForFunction(() => document.getElementById('storage-msg').hidden);
      assert.equal((await pageScenario(page)).name, 'Kept again');
    } finally {
      await context.close();
    }
  });

  test('a damaged kept design that cannot be set aside is not said to be set aside', async () => {
    const { context, page } = await open(TABLET, { init: FULL_STORAGE });
    try {
      await page.evaluate((k) => {
        localStorage.setItem(k, JSON.stringify({ scenario: { version: 1 }, drafts: {}, unit: 'mm' }));
        localStorage.setItem('test.storage-full', '1');
      }, STATE_KEY);
      await page.reload();
      await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      const msg = await toolbarText(page);
      assert.match(msg, /could not be shown/, msg);
      assert.doesNotMatch(msg, /it is set aside/, msg);
      assert.match(msg, /refused to set it aside/, msg);
      assert.match(await page.locator('#storage-msg').innerText(), /could not be kept in this browser/);
      await traced(page);
      await page.screenshot({ path: join(OUT, 'behaviour-storage-refused-820x1180.png') });
    } finally {
      await context.close();
    }
  });

  test('"New design" starts a minimal design, and the previous one can be brought back', async () => {
    for (const viewport of [DESKTOP, TABLET]) {
      const { context, page } = await open(viewport);
      try {
        await tracedAfter(page, () => page.selectOption('#demo', 'bike_light_charge_indicator.json'));
        await page.fill('#f-name', 'My unsaved work');
        await page.fill('#f-route-0-straight-length-mm', 'abc'); // an entry being typed
        await page.waitForTimeout(300);
        const mine = await pageScenario(page);
        await tracedAfter(page, () => page.click('#new-design'));
        const fresh = await pageScenario(page);
        assert.deepEqual(fresh.route.map((s) => Object.keys(s)[0]), ['straight']);
        assert.ok(fresh.source.emitter.led, 'the new design is lit by an LED');
        assert.equal(fresh.guide.contacts, undefined);
        assert.equal(fresh.receiver, undefined);
        const materials = await page.evaluate(async () => (await import('./pkg/tirtrace.js')).materials());
        const typical = materials.find((m) => m.id === fresh.guide.material.library).attenuation_db_per_m;
        assert.equal(fresh.guide.attenuation_db_per_m, typical, 'the new design takes its material\'s attenuation');
        assert.equal(await page.inputValue('#f-name'), fresh.name);
        assert.equal(await page.getAttribute('body', 'data-problems'), '0');
        assert.equal(await page.locator('.field-msg:not([hidden])').count(), 0);
        assert.equal((await answer(page)).share, cliTrace(fresh).delivered.share);
        const msg = await toolbarText(page);
        assert.match(msg, /Started a new design/);
        await page.screenshot({ path: join(OUT, `behaviour-new-design-${viewport.width}x${viewport.height}.png`) });
        // The previous design, with what was being typed, comes back.
        await page.getByRole('button', { name: 'Back to the previous design' }).click();
        await page.waitForFunction(() => document.getElementById('f-name').value === 'My unsaved work');
        assert.deepEqual(await pageScenario(page), mine);
        assert.equal(await page.inputValue('#f-route-0-straight-length-mm'), 'abc');
      } finally {
        await context.close();
      }
    }
  });

  test('the attenuation follows the chosen material unless the designer typed their own', async () => {
    const { context, page } = await open(DESKTOP);
    try {
      await traced(page);
      const materials = await page.evaluate(async () => (await import('./pkg/tirtrace.js')).materials());
      const typical = (id) => materials.find((m) => m.id === id).attenuation_db_per_m;
      for (const m of materials) {
        assert.ok(Number.isFinite(m.attenuation_db_per_m) && m.attenuation_db_per_m >= 0, m.id);
        assert.ok(m.attenuation_source.length > 0, m.id);
      }
      const field = '#f-guide-attenuation-db-per-m';
      const hint = `${field}-hint`;
      const attenuation = async () => (await pageScenario(page)).guide.attenuation_db_per_m;
      // The starting design follows its material (acrylic).
      assert.equal(await attenuation(), typical('pmma'));
      assert.match(await page.locator(hint).innerText(), /follows the material/);
      for (const id of ['polycarbonate', 'fused_silica', 'pdms']) {
        await tracedAfter(page, () => page.selectOption('#f-guide-material', id));
        assert.equal(await attenuation(), typical(id), id);
        assert.equal(Number(await page.inputValue(field)), typical(id), id);
        const text = await page.locator(hint).innerText();
        assert.match(text, /follows the material/, text);
        assert.ok(text.includes(materials.find((m) => m.id === id).name), text);
      }
      // A value typed by the designer stays when the material changes, and the hint says so.
      await tracedAfter(page, () => page.fill(field, '0.7'));
      await page.waitForFunction((id) => /your own value/i.test(document.getElementById(id).textContent), hint.slice(1));
      await tracedAfter(page, () => page.selectOption('#f-guide-material', 'polystyrene'));
      assert.equal(await attenuation(), 0.7);
      assert.equal(await page.inputValue(field), '0.7');
      const own = await page.locator(hint).innerText();
      assert.match(own, /your own value/i, own);
      assert.ok(own.includes(String(typical('polystyrene'))), `the hint gives the material's typical value: ${own}`);
      await page.locator('.part-pipe, #editor').first().screenshot({ path: join(OUT, 'behaviour-attenuation-1280x800.png') });
      // A custom index has no typical value: the number stays.
      await tracedAfter(page, () => page.selectOption('#f-guide-material', 'custom'));
      assert.equal(await attenuation(), 0.7);
      // Typing the material's typical value again makes it follow once more.
      await tracedAfter(page, () => page.selectOption('#f-guide-material', 'pmma'));
      await tracedAfter(page, () => page.fill(field, String(typical('pmma'))));
      await tracedAfter(page, () => page.selectOption('#f-guide-material', 'polycarbonate'));
      assert.equal(await attenuation(), typical('polycarbonate'));
    } finally {
      await context.close();
    }
  });

  test('tables never clip: they fit at desktop and tablet sizes, and scroll with a visible cue on a phone', async () => {
    const bike = example('bike_light_charge_indicator.json');
    const longName = 'silicone seal pressed around the window rim of the housing';
    bike.guide.contacts[0].name = longName;
    for (const viewport of [DESKTOP, TABLET, { width: 400, height: 800 }]) {
      const { context, page } = await open(viewport);
      try {
        await reopenWith(page, bike);
        await traced(page);
        const wraps = await page.evaluate(() => [...document.querySelectorAll('.budget-card .table-wrap, .bends-card .table-wrap')].map((w) => ({
          table: w.querySelector('table').className,
          over: w.scrollWidth - w.clientWidth,
          flagged: w.dataset.overflow === 'true',
          cue: Boolean(w.nextElementSibling?.matches('.scroll-cue') && w.nextElementSibling.getClientRects().length),
        })));
        assert.ok(wraps.length >= 2, `${wraps.length} tables`); // segments and bends, and where turned-back light ended
        for (const w of wraps) {
          if (viewport.width >= 820) assert.ok(w.over <= 1, `${viewport.width} px: the ${w.table} is ${w.over} px too wide`);
          assert.equal(w.flagged, w.over > 1, `${viewport.width} px: the ${w.table}'s overflow flag`);
          assert.equal(w.cue, w.over > 1, `${viewport.width} px: the ${w.table}'s cue to scroll sideways`);
        }
        // The mount's long name is shown whole.
        const cell = page.locator('#segment-rows td', { hasText: 'silicone seal' });
        assert.ok((await cell.innerText()).replace(/\s+/g, ' ').includes(longName));
        // The page itself never scrolls sideways.
        assert.ok(await page.evaluate(() => document.documentElement.scrollWidth <= window.innerWidth), 'the page scrolls sideways');
        for (const sel of ['.budget-card', '.bends-card']) {
          await page.locator(sel).screenshot({ path: join(OUT, `behaviour-${sel.slice(1)}-${viewport.width}.png`) });
        }
      } finally {
        await context.close();
      }
    }
  });

  test('a select shows its whole choice on hover and focus', async () => {
    const { context, page } = await open(TABLET);
    try {
      await tracedAfter(page, () => page.selectOption('#f-source-gap-medium', 'propylene_glycol'));
      await page.focus('#f-source-gap-medium');
      assert.equal(await page.getAttribute('#f-source-gap-medium', 'title'), 'Propylene glycol (gel, coupling liquid)');
    } finally {
      await context.close();
    }
  });

  test('no request left the origin and nothing went to the console', () => {
    const foreign = requests.filter((u) => !u.startsWith(server.origin) && !u.startsWith('blob:') && !u.startsWith('data:'));
    assert.deepEqual(foreign, []);
    assert.deepEqual(consoleErrors, []);
  });
});
