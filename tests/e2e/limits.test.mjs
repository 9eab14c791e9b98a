// Limits that protect the user's machine, on the design page (www/index.html) in Chromium: drawn
// rays of a thin fibre metres long are cut short and the legend says so, a trace that starts
// shows its own progress at once (and can be stopped), and a share link that expands beyond the
// most a design may be is refused with a message, leaving the last design in place.
//
// Before: cargo build; bash scripts/build.sh; npm ci --prefix tests/e2e. Run: node --test tests/e2e/limits.test.mjs

import assert from 'node:assert/strict';

import { join } from 'node:path';
import { deflateRawSync } from 'node:zlib';
import { after, before, describe, test } from 'node:test';

import { closeDesignPage, designPage, pageScenario, tracedAfter } from './design-helpers.mjs';
import { OUT } from './harness.mjs';

/** A bare 0.1 mm acrylic fibre `lengthMm` long: a ray meets its wall some five times a millimetre. */
const thinFibre = (lengthMm, rays) => ({
  version: 1,
  name: `0.1 mm fibre, ${lengthMm / 1000} m`,
  guide: {
    section: { round: { diameter_mm: 0.1 } },
    material: { library: 'pmma' },
    surroundings: { library: 'air' },
    attenuation_db_per_m: 0,
  },
  route: [{ straight: { length_mm: lengthMm } }],
  source: {
    emitter: { led: { area: { disk: { diameter_mm: 0.05 } }, pattern: 'lambertian' } },
    wavelength_nm: 650,
    gap_mm: 0.01,
  },
  trace: { rays, seed: 1, max_interactions: 10_000_000 },
});

/** Paste `scenario` into the page as a design (the "Paste a design" dialog). */
async function paste(page, scenario) {
  await page.click('#paste-design');
  await page.fill('#paste-text', JSON.stringify(scenario));
  await page.click('#paste-use');
}

const base64Url = (bytes) => Buffer.from(bytes).toString('base64').replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');

describe('limits that protect the machine, on the design page', { concurrency: false }, () => {
  let server;
  let browser;
  let page;
  const consoleErrors = [];

  before(async () => {
    ({ server, browser, page } = await designPage(consoleErrors, { traced: true }));
  });

  after(() => closeDesignPage({ server, browser }));

  test('drawn rays of a thin fibre metres long are cut short, and the legend says so', async () => {
    // 90 rays (every one drawn) of a 5 m fibre: some 25 000 wall hits a ray.
    await tracedAfter(page, () => paste(page, thinFibre(5000, 90)));
    const legend = await page.locator('#route-legend').innerText();
    const m = legend.match(/(\d+) of the 90 drawn rays are cut short after (\d+) points/);
    assert.ok(m, `the legend does not say that drawn rays were cut short: ${legend}`);
    assert.ok(Number(m[1]) > 45, `only ${m[1]} of 90 rays cut short`);
    assert.equal(Number(m[2]), 1000);
    for (const [width, height] of [[1280, 800], [820, 1180]]) {
      await page.setViewportSize({ width, height });
      await page.locator('#route-legend').scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(OUT, `limits-cut-paths-${width}x${height}.png`) });
    }
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  test('a trace that starts shows its own progress at once, and can be stopped', async () => {
    // The starting design traces quickly; the last trace's line then says how long it took.
    const pipe = thinFibre(20, 8192);
    pipe.guide.section.round.diameter_mm = 3;
    await tracedAfter(page, () => paste(page, pipe));
    assert.match(await page.locator('#progress-text').innerText(), /8,?192 rays traced in/);
    // A 5 m thin fibre: its first batch of 4096 rays takes seconds.
    const before = Number(await page.getAttribute('body', 'data-job'));
    await paste(page, thinFibre(5000, 100_000));
    const shown = await page.evaluate(() => ({
      job: Number(document.body.dataset.job),
      traced: Number(document.body.dataset.traced || 0),
      progress: document.getElementById('progress-text').textContent,
      cancel: !document.getElementById('cancel').disabled,
      tracing: document.body.dataset.tracing,
    }));
    assert.ok(shown.job > before && shown.traced < shown.job, `the slow trace already finished: ${JSON.stringify(shown)}`);
    assert.doesNotMatch(shown.progress, /traced in/, 'the progress line still shows the last trace');
    assert.match(shown.progress, /^0 of 100,?000 rays/);
    assert.ok(shown.cancel, 'Stop is off while the new trace runs');
    assert.equal(shown.tracing, 'true');
    await page.click('#cancel');
    await page.waitForFunction(() => /Stopped at/.test(document.getElementById('progress-text').textContent));
  });

  test('a share link that expands beyond 2 MB is refused with a message, and the last design stays', async () => {
    const kept = await pageScenario(page);
    // A valid design followed by 50 MB of blanks (still valid JSON): some 50 kB deflated.
    const text = JSON.stringify({ ...thinFibre(100, 1000), name: 'Expands too far' }) + ' '.repeat(50_000_000);
    const link = `${server.origin}/#d=${base64Url(deflateRawSync(Buffer.from(text), { level: 9 }))}`;
    assert.ok(link.length < 200_000, `the link is ${link.length} characters`);
    await page.goto('about:blank');
    await page.goto(link);
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    const msg = await page.locator('#toolbar-msg').innerText();
    assert.match(msg, /share link is damaged or incomplete/);
    assert.match(msg, /expands to more than 2 MB of text, and a design is a few kB/);
    assert.deepEqual(await pageScenario(page), kept, 'the last design was replaced');
    // A link within the bound still opens (its blanks are only blanks).
    const fits = JSON.stringify({ ...thinFibre(100, 1000), name: 'Fits' }) + ' '.repeat(1_000_000);
    await page.goto('about:blank');
    await page.goto(`${server.origin}/#d=${base64Url(deflateRawSync(Buffer.from(fits)))}`);
    await page.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
    assert.match(await page.locator('#toolbar-msg').innerText(), /Opened the design from the link: “Fits”/);
  });

  test('logged no errors', () => {
    assert.deepEqual(consoleErrors, []);
  });
});
