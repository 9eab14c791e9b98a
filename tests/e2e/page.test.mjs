// End-to-end test of the page in a real browser (Debian's Chromium, driven by playwright-core).
//
// Before:  cargo build                  (the native CLI, target/debug/tirtrace)
//          bash scripts/build.sh        (the wasm core into www/pkg)
//          npm ci --prefix tests/e2e
// Run:     node --test tests/e2e/       (from the repository root)
//
// The test serves www/ with Python's static server on a free port, types into the page like a
// person, compares what the page shows with the native core's figures, checks values against
// published sources, bad input, the drawings, the layout at desktop and tablet sizes, that no
// request leaves the origin, no console error, and that the page reopens from its service
// worker with the server stopped. Screenshots go to tests/e2e/out/ (git-ignored).

import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { after, before, describe, test } from 'node:test';

import { chromium } from 'playwright-core';

import { CHROMIUM, CHROMIUM_ARGS, CLI, OUT, WWW, inkShare, reachable, serviceWorkerControls, startServer, stopServer } from './harness.mjs';

/** The native core's figures for a design document (`tirtrace figures -`). */
function cliFigures(design) {
  const run = spawnSync(CLI, ['figures', '-'], { input: JSON.stringify(design), encoding: 'utf8' });
  assert.equal(run.status, 0, `tirtrace figures failed: ${run.stderr}`);
  return JSON.parse(run.stdout);
}

/** A number as the page prints it (typographic minus, maybe a unit after it). */
function shownNumber(text) {
  const m = String(text).replace(/\u2212/g, '-').match(/-?\d+(\.\d+)?/);
  assert.ok(m, `no number in "${text}"`);
  return { value: Number(m[0]), decimals: m[1] ? m[1].length - 1 : 0 };
}

/**
 * Assert a printed number is `expected` rounded to the digits it shows (half a unit in the last
 * place, plus a hair for binary floating point), and that it shows at least `minDecimals`.
 */
function assertShows(text, expected, { minDecimals = 0, what = 'value' } = {}) {
  const { value, decimals } = shownNumber(text);
  assert.ok(decimals >= minDecimals, `${what}: "${text}" shows ${decimals} decimals, want ≥ ${minDecimals}`);
  const tolerance = 0.5 * 10 ** -decimals + 1e-9;
  assert.ok(
    Math.abs(value - expected) <= tolerance,
    `${what}: page shows "${text}", the core gives ${expected} (tolerance ${tolerance})`,
  );
}

/** Fill the form like a person: choose options, type text. Waits for the figures to settle. */
async function enter(page, e) {
  const pick = async (id, value) => page.selectOption(`#${id}`, value);
  const type = async (id, value) => page.fill(`#${id}`, value);
  if (e.material !== undefined) await pick('material', e.material);
  if (e.material_n !== undefined) await type('material-n', e.material_n);
  if (e.surroundings !== undefined) await pick('surroundings', e.surroundings);
  if (e.surroundings_n !== undefined) await type('surroundings-n', e.surroundings_n);
  if (e.front !== undefined) await pick('front', e.front);
  if (e.front_n !== undefined) await type('front-n', e.front_n);
  if (e.wavelength_nm !== undefined) await type('wavelength', e.wavelength_nm);
  if (e.diameter_mm !== undefined) await type('diameter', e.diameter_mm);
  if (e.launch_angle_is !== undefined) await pick('launch-kind', e.launch_angle_is);
  if (e.launch_half_angle_deg !== undefined) await type('launch-angle', e.launch_half_angle_deg);
  if (e.bend_inner_radius_mm !== undefined) await type('bend-radius', e.bend_inner_radius_mm);
  if (e.bend_angle_deg !== undefined) await type('bend-angle', e.bend_angle_deg);
}

/** Every field of a valid design, entered on the page; returns the document the test expects. */
async function enterDesign(page, d) {
  await enter(page, {
    material: d.material,
    surroundings: d.surroundings,
    front: 'air',
    launch_angle_is: d.launch_angle_is ?? 'cone_edge',
    wavelength_nm: String(d.wavelength_nm),
    diameter_mm: String(d.diameter_mm),
    launch_half_angle_deg: String(d.launch_half_angle_deg),
    bend_inner_radius_mm: String(d.bend_inner_radius_mm),
    bend_angle_deg: String(d.bend_angle_deg),
  });
  return {
    version: 1,
    material: { library: d.material },
    wavelength_nm: d.wavelength_nm,
    surroundings: { library: d.surroundings },
    launch_medium: { library: 'air' },
    diameter_mm: d.diameter_mm,
    launch_half_angle_deg: d.launch_half_angle_deg,
    launch_angle_is: d.launch_angle_is ?? 'cone_edge',
    bend_inner_radius_mm: d.bend_inner_radius_mm,
    bend_angle_deg: d.bend_angle_deg,
  };
}

const text = (page, selector) => page.locator(selector).innerText();
const pick = (page, id, value) => page.selectOption(`#${id}`, value);

/** Count canvas pixels close to an sRGB colour (within `tol` per channel). */
async function countPixels(page, canvasId, hex, tol = 40) {
  return page.evaluate(
    ({ canvasId, hex, tol }) => {
      const canvas = document.getElementById(canvasId);
      const { data } = canvas.getContext('2d').getImageData(0, 0, canvas.width, canvas.height);
      const want = [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16));
      let n = 0;
      for (let i = 0; i < data.length; i += 4) {
        if (Math.abs(data[i] - want[0]) <= tol && Math.abs(data[i + 1] - want[1]) <= tol && Math.abs(data[i + 2] - want[2]) <= tol) n += 1;
      }
      return n;
    },
    { canvasId, hex, tol },
  );
}


const cssColour = (page, name) =>
  page.evaluate((name) => getComputedStyle(document.documentElement).getPropertyValue(name).trim(), name);

// ---------------------------------------------------------------- the test

describe('the tirtrace page in Chromium', { concurrency: false }, () => {
  let server;
  let browser;
  let context;
  let page;
  const requests = [];
  const consoleErrors = [];
  const pageErrors = [];

  before(async () => {
    assert.ok(existsSync(join(WWW, 'pkg', 'tirtrace.js')), 'www/pkg is missing: run `bash scripts/build.sh` first');
    assert.ok(existsSync(CLI), 'target/debug/tirtrace is missing: run `cargo build` first');
    assert.ok(existsSync(CHROMIUM), `no Chromium at ${CHROMIUM}`);
    mkdirSync(OUT, { recursive: true });
    server = await startServer();
    browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
    context = await browser.newContext({ viewport: { width: 1280, height: 800 } });
    context.on('request', (r) => requests.push(r.url()));
    page = await context.newPage();
    page.on('console', (m) => {
      if (m.type() === 'error') consoleErrors.push(m.text());
    });
    page.on('pageerror', (e) => pageErrors.push(String(e)));
    await page.goto(`${server.origin}/quick.html`);
    await page.waitForSelector('body[data-ready="true"]', { timeout: 20_000 });
  });

  after(async () => {
    await browser?.close();
    await stopServer(server?.child);
  });

  test('starts from the example with figures, a drawing and a chart', async () => {
    assert.match(await text(page, '#status'), /Ready/);
    const critical = await text(page, '#fig-critical .value');
    assert.match(critical, /^\d+\.\d\d$/, `critical angle shows "${critical}"`);
    const options = await page.locator('#material option').allInnerTexts();
    assert.ok(options.length >= 3, `material list: ${options}`);
    assert.ok(options.some((o) => /custom/i.test(o)), 'a custom index choice is offered');
    assert.ok((await inkShare(page, 'bend-drawing')) > 0.01, 'the bend drawing is empty');
    assert.ok((await inkShare(page, 'bend-chart')) > 0.01, 'the chart is empty');
  });

  test('shows the core figures after changing material, wavelength and diameter', async () => {
    const design = await enterDesign(page, {
      material: 'polycarbonate',
      surroundings: 'air',
      wavelength_nm: 850,
      diameter_mm: 5,
      launch_half_angle_deg: 25,
      bend_inner_radius_mm: 8,
      bend_angle_deg: 90,
    });
    const core = cliFigures(design);
    assertShows(await text(page, '#fig-n .value'), core.n_core, { minDecimals: 4, what: 'guide n' });
    assertShows(await text(page, '#fig-critical .value'), core.critical_angle_deg, { minDecimals: 2, what: 'critical angle' });
    assertShows(await text(page, '#fig-na .value'), core.numerical_aperture, { minDecimals: 3, what: 'NA' });
    assertShows(await text(page, '#fig-fresnel .value'), 100 * core.entry_fresnel_loss, { minDecimals: 2, what: 'Fresnel loss %' });
    assert.notEqual(core.leak_free_inner_radius_mm, null, 'this design has a leak-free radius');
    assertShows(await text(page, '#fig-leak-free .value'), core.leak_free_inner_radius_mm, { minDecimals: 1, what: 'leak-free radius' });
    assertShows(await text(page, '#fig-leak-free-ratio'), core.leak_free_ratio, { minDecimals: 2, what: 'R/d' });
    assert.match(await text(page, '#fig-leak-free'), /mm/);
    // The material hint names the data range of the chosen material.
    assert.match(await text(page, '#material-hint'), /437\D+1052 nm/);
    // The verdict agrees with the core about the drawn bend.
    const verdictClass = await page.getAttribute('#verdict', 'class');
    assert.equal(/\bleaks\b/.test(verdictClass), core.bend_leaks, `verdict class "${verdictClass}"`);

    // Change only the diameter: the radius follows the core again.
    await page.fill('#diameter', '2.5');
    const core2 = cliFigures({ ...design, diameter_mm: 2.5 });
    assertShows(await text(page, '#fig-leak-free .value'), core2.leak_free_inner_radius_mm, { minDecimals: 1, what: 'leak-free radius at d = 2.5' });
    assert.ok(Math.abs(core2.leak_free_inner_radius_mm - core.leak_free_inner_radius_mm / 2) < 1e-9, 'radius scales with diameter');
  });

  test('agrees with the published index of PMMA', async () => {
    // PMMA at 587.56 nm: n = 1.49253, computed from the dispersion formula of
    // G. Beadie et al., Appl. Opt. 54, F139 (2015):
    // n² = A0 + A1λ² + A2λ⁴ + A3λ⁻² + A4λ⁻⁴ + A5λ⁻⁶ + A6λ⁻⁸ (λ in µm).
    const A = [2.1778, 6.1209e-3, -1.5004e-3, 2.3678e-2, -4.2137e-3, 7.3417e-4, -4.5042e-5];
    const l2 = 0.58756 ** 2;
    const nBeadie = Math.sqrt(A[0] + A[1] * l2 + A[2] * l2 ** 2 + A[3] / l2 + A[4] / l2 ** 2 + A[5] / l2 ** 3 + A[6] / l2 ** 4);
    assert.ok(Math.abs(nBeadie - 1.49253) < 1e-5, `Beadie formula gives ${nBeadie}`);
    await enterDesign(page, {
      material: 'pmma',
      surroundings: 'air',
      wavelength_nm: 587.56,
      diameter_mm: 3,
      launch_half_angle_deg: 0,
      bend_inner_radius_mm: 6,
      bend_angle_deg: 90,
    });
    assertShows(await text(page, '#fig-n .value'), 1.49253, { minDecimals: 4, what: 'PMMA n' });
    // Critical angle against air: θc = asin(1/n) (Snell; W. J. Smith, Modern Optical Engineering).
    const thetaC = (Math.asin(1 / 1.49253) * 180) / Math.PI;
    assertShows(await text(page, '#fig-critical .value'), thetaC, { minDecimals: 2, what: 'PMMA critical angle' });
    // Axial light: leak-free R_in/d = 1/(n − 1), the inner-radius form of the handbook rule
    // R_centre = t (n + 1) / (2 (n − 1)) (Engineering Plastics Handbook, McGraw-Hill 2006, ch. 1).
    assertShows(await text(page, '#fig-leak-free-ratio'), 1 / (1.49253 - 1), { minDecimals: 2, what: 'axial R/d' });
    // n > √2: every ray from air is accepted (NA = √(n² − 1) > 1; G. Keiser, Optical Fiber Communications).
    assert.match(await text(page, '#fig-acceptance'), /All rays from the front medium are accepted/);
  });

  test('says plainly when no leak-free radius exists', async () => {
    // A clad guide filled to its own limit: light from air at up to 90° fills every guided angle.
    await enter(page, {
      material: 'custom', material_n: '1.492', surroundings: 'cladding', surroundings_n: '1.402',
      front: 'air', wavelength_nm: '650', diameter_mm: '1', launch_half_angle_deg: '90',
      bend_inner_radius_mm: '50', bend_angle_deg: '90',
    });
    const design = {
      version: 1,
      material: { custom: { model: 'constant', n: 1.492 } },
      wavelength_nm: 650,
      surroundings: { custom: { model: 'constant', n: 1.402 } },
      launch_medium: { library: 'air' },
      diameter_mm: 1,
      launch_half_angle_deg: 90,
      bend_inner_radius_mm: 50,
      bend_angle_deg: 90,
    };
    const core = cliFigures(design);
    assert.equal(core.leak_free_ratio, null);
    assert.equal(await text(page, '#fig-leak-free .value'), 'No leak-free radius exists');
    assert.ok((await text(page, '#fig-leak-free .explain')).length > 20, 'the reason is given');
    assert.ok(!(await page.locator('#fig-leak-free-ratio').isVisible()));
    assert.match(await text(page, '#verdict'), /leaks/);
    // NA = √(n1² − n2²): 1.492 core, 1.402 cladding → NA 0.5104, acceptance 30.69° in air
    // (G. Keiser, Optical Fiber Communications; computed).
    assertShows(await text(page, '#fig-na .value'), 0.5104, { minDecimals: 3, what: 'clad NA' });
    assertShows(await text(page, '#fig-acceptance .value'), 30.69, { minDecimals: 1, what: 'clad acceptance' });
    assertShows(await text(page, '#fig-acceptance .value'), core.acceptance_half_angle_deg, { minDecimals: 1, what: 'clad acceptance (core)' });
    assert.doesNotMatch(await text(page, '#fig-acceptance'), /all rays/);
    await page.screenshot({ path: join(OUT, 'no-leak-free-radius-1280x800.png'), fullPage: true });
  });

  test('an LED\'s half-intensity angle is offered beside a hard cone, and the verdict says what it covers', async () => {
    await enterDesign(page, {
      material: 'pmma', surroundings: 'air', wavelength_nm: 587.6, diameter_mm: 3,
      launch_half_angle_deg: 60, launch_angle_is: 'half_intensity', bend_inner_radius_mm: 30, bend_angle_deg: 90,
    });
    await page.waitForFunction(() => /half-intensity/.test(document.getElementById('verdict').textContent));
    const verdict = await text(page, '#verdict');
    // A Lambertian LED holds sin² 60° = 75 % of its power inside 60° (see tests/quick_design.rs).
    assert.match(verdict, /keeps inside the light within the half-intensity angle: 75\.?0* % of the LED's power\. The rest of the LED's light, 25\.?0* % of it, leaves beyond the half-intensity angle and may leak\./);
    await pick(page, 'launch-kind', 'cone_edge');
    await page.waitForFunction(() => /keeps all the launched light inside/.test(document.getElementById('verdict').textContent));
    // Its range is the designer's half-intensity range.
    await pick(page, 'launch-kind', 'half_intensity');
    await page.fill('#launch-angle', '90');
    assert.match(await text(page, '#launch-angle-msg'), /^Launch half-angle must be at most 89\.5°, got 90$/);
    await pick(page, 'launch-kind', 'cone_edge');
    await page.fill('#launch-angle', '30');
  });

  test('entries that storage refuses are said not to be kept', async () => {
    const p2 = await page.context().newPage();
    try {
      await p2.addInitScript(() => {
        Storage.prototype.setItem = () => {
          throw new DOMException('full', 'QuotaExceededError');
        };
      });
      await p2.goto(page.url());
      await p2.waitForSelector('body[data-ready="true"]', { timeout: 30_000 });
      await p2.fill('#diameter', '2.5');
      await p2.waitForFunction(() => /could not be kept/.test(document.getElementById('status').textContent));
      assert.match(await text(p2, '#status'), /^Your entries could not be kept in this browser \(its storage is full or refused\): they will be lost when the page closes\.$/);
    } finally {
      await p2.close();
    }
  });

  test('marks bad input next to its field and never shows NaN', async () => {
    await enterDesign(page, {
      material: 'pmma', surroundings: 'air', wavelength_nm: 587.6, diameter_mm: 3,
      launch_half_angle_deg: 0, bend_inner_radius_mm: 6, bend_angle_deg: 90,
    });
    await page.fill('#diameter', '-1');
    const diameterMsg = await text(page, '#diameter-msg');
    assert.match(diameterMsg, /Pipe diameter/);
    assert.match(diameterMsg, /must be at least 0\.001 mm, got -1$/);
    assert.equal(await page.getAttribute('#diameter', 'aria-invalid'), 'true');
    assert.ok(await page.locator('#stale-note').isVisible(), 'old results are marked as stale');

    await page.fill('#wavelength', '');
    assert.match(await text(page, '#wavelength-msg'), /Wavelength must be at least 200 nm/);

    await page.fill('#wavelength', '300'); // below the PMMA data (420–1620 nm)
    assert.match(await text(page, '#material-msg'), /420\D+1620 nm/);

    await page.fill('#wavelength', '587.6');
    await enter(page, { material: 'custom', material_n: '0' });
    assert.match(await text(page, '#material-n-msg'), /Pipe index n must be at least 1/);

    // A guide index below the surroundings' index guides nothing.
    await enter(page, { material_n: '1.2', surroundings: 'water' });
    const aroundMsg = await text(page, '#surroundings-msg');
    assert.match(aroundMsg, /^Surroundings/);
    assert.match(aroundMsg, /lower index than the guide/);
    await page.fill('#material-n', 'abc');

    const body = await page.locator('body').innerText();
    for (const bad of ['NaN', 'undefined', 'Infinity', 'null', '[object']) {
      assert.ok(!body.includes(bad), `page text contains "${bad}"`);
    }
    await page.screenshot({ path: join(OUT, 'bad-input-1280x800.png'), fullPage: true });

    // Put it right: every message goes, the results are live again.
    await enter(page, { material_n: '1.49', surroundings: 'air', diameter_mm: '3' });
    assert.equal(await page.locator('.field-msg:not([hidden])').count(), 0);
    assert.ok(!(await page.locator('#stale-note').isVisible()));
    const design = {
      version: 1,
      material: { custom: { model: 'constant', n: 1.49 } },
      wavelength_nm: 587.6,
      surroundings: { library: 'air' },
      launch_medium: { library: 'air' },
      diameter_mm: 3,
      launch_half_angle_deg: 0,
      bend_inner_radius_mm: 6,
      bend_angle_deg: 90,
    };
    assertShows(await text(page, '#fig-critical .value'), cliFigures(design).critical_angle_deg, { minDecimals: 2, what: 'custom n critical angle' });
  });

  test('draws escaping rays in their own colour only when the bend leaks', async () => {
    const guidedColour = await cssColour(page, '--ray-guided');
    const escapedColour = await cssColour(page, '--ray-escaped');
    assert.notEqual(guidedColour, escapedColour);

    // A tight bend with a wide launch: the core says it leaks, and the drawing shows it.
    const tight = await enterDesign(page, {
      material: 'pmma', surroundings: 'air', wavelength_nm: 590, diameter_mm: 3,
      launch_half_angle_deg: 80, bend_inner_radius_mm: 2, bend_angle_deg: 90,
    });
    assert.equal(cliFigures(tight).bend_leaks, true);
    assert.ok(Number(await page.getAttribute('#bend-drawing', 'data-escaped')) > 0, 'no escaping ray drawn');
    assert.ok((await countPixels(page, 'bend-drawing', escapedColour)) > 50, 'no escaping-ray colour on the canvas');
    assert.ok((await countPixels(page, 'bend-drawing', guidedColour)) > 50, 'no guided-ray colour on the canvas');
    assert.match(await text(page, '#verdict'), /leaks/);
    await page.screenshot({ path: join(OUT, 'leaking-bend-1280x800.png'), fullPage: true });
    await page.locator('.pictures').screenshot({ path: join(OUT, 'leaking-bend-drawings.png') });

    // Open the bend to 1.5 times the core's leak-free radius: nothing escapes.
    const radius = Math.ceil(1.5 * cliFigures(tight).leak_free_inner_radius_mm);
    const open = { ...tight, bend_inner_radius_mm: radius };
    assert.equal(cliFigures(open).bend_leaks, false);
    await page.fill('#bend-radius', String(radius));
    assert.equal(Number(await page.getAttribute('#bend-drawing', 'data-escaped')), 0);
    assert.ok(Number(await page.getAttribute('#bend-drawing', 'data-guided')) > 5);
    assert.equal(await countPixels(page, 'bend-drawing', escapedColour, 30), 0, 'escaping colour drawn for a bend that does not leak');
    assert.match(await text(page, '#verdict'), /keeps all/);
  });

  test('lays out at desktop and tablet sizes', async () => {
    for (const [width, height] of [[1280, 800], [820, 1180]]) {
      await page.setViewportSize({ width, height });
      await page.waitForTimeout(300); // resize observer redraw
      // Nothing wider than the window (no sideways scrolling).
      const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
      assert.ok(overflow <= 0, `${width}×${height}: page is ${overflow}px wider than the window`);
      // Drawings have room and are not blank after the resize.
      for (const id of ['bend-drawing', 'bend-chart']) {
        const box = await page.locator(`#${id}`).boundingBox();
        assert.ok(box.width >= 300 && box.height >= 200, `${width}×${height}: #${id} is ${box.width}×${box.height}`);
        assert.ok((await inkShare(page, id)) > 0.01, `${width}×${height}: #${id} is blank`);
      }
      // Every control is at least 44 px tall (touch target).
      const small = await page.evaluate(() =>
        [...document.querySelectorAll('input, select, button')]
          .filter((el) => el.offsetParent !== null && el.getBoundingClientRect().height < 44)
          .map((el) => el.id),
      );
      assert.deepEqual(small, [], `${width}×${height}: controls under 44 px`);
      await page.evaluate(() => {
        document.activeElement?.blur();
        window.scrollTo(0, 0);
      });
      await page.screenshot({ path: join(OUT, `page-${width}x${height}.png`) });
      await page.screenshot({ path: join(OUT, `page-${width}x${height}-full.png`), fullPage: true });
      await page.locator('.pictures').screenshot({ path: join(OUT, `drawings-${width}x${height}.png`) });
    }
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  test('draws sharp on a high-density screen', async () => {
    const dense = await browser.newContext({ viewport: { width: 820, height: 1180 }, deviceScaleFactor: 2 });
    dense.on('request', (r) => requests.push(r.url()));
    try {
      const p2 = await dense.newPage();
      p2.on('console', (m) => {
        if (m.type() === 'error') consoleErrors.push(m.text());
      });
      p2.on('pageerror', (e) => pageErrors.push(String(e)));
      await p2.goto(`${server.origin}/quick.html`);
      await p2.waitForSelector('body[data-ready="true"]', { timeout: 20_000 });
      const size = await p2.evaluate(() => {
        const c = document.getElementById('bend-drawing');
        return { backing: c.width, css: c.clientWidth, ratio: window.devicePixelRatio };
      });
      assert.equal(size.ratio, 2);
      assert.ok(Math.abs(size.backing - 2 * size.css) <= 1, `backing store ${size.backing} for ${size.css} CSS px at ratio 2`);
      assert.ok((await inkShare(p2, 'bend-drawing')) > 0.01, 'the bend drawing is blank at ratio 2');
      assert.ok((await inkShare(p2, 'bend-chart')) > 0.01, 'the chart is blank at ratio 2');
      await p2.locator('.pictures').screenshot({ path: join(OUT, 'drawings-820x1180-ratio2.png') });
    } finally {
      await dense.close();
    }
  });

  test('keeps the entries and works offline from the service worker', async () => {
    // The page registered its service worker, which now controls the page (bounded wait).
    const controlled = await serviceWorkerControls(page, 10_000);
    assert.equal(controlled, true, 'no service worker controls the page');
    const design = await enterDesign(page, {
      material: 'polystyrene', surroundings: 'water', wavelength_nm: 633, diameter_mm: 4.2,
      launch_half_angle_deg: 20, bend_inner_radius_mm: 12, bend_angle_deg: 60,
    });
    await stopServer(server.child);
    assert.equal(await reachable(`${server.origin}/index.html`), false, 'the server is still answering');

    await page.reload();
    await page.waitForSelector('body[data-ready="true"]', { timeout: 20_000 });
    // What was typed came back.
    assert.equal(await page.inputValue('#diameter'), '4.2');
    assert.equal(await page.inputValue('#material'), 'polystyrene');
    assert.equal(await page.inputValue('#surroundings'), 'water');
    // The core runs offline: figures for the restored design, and for a new diameter.
    assertShows(await text(page, '#fig-critical .value'), cliFigures(design).critical_angle_deg, { minDecimals: 2, what: 'offline critical angle' });
    await page.fill('#diameter', '2');
    assertShows(await text(page, '#fig-leak-free .value'), cliFigures({ ...design, diameter_mm: 2 }).leak_free_inner_radius_mm, {
      minDecimals: 1, what: 'offline leak-free radius',
    });
    assert.ok((await inkShare(page, 'bend-chart')) > 0.01, 'offline chart is blank');
  });

  test('stayed on its own origin and logged no errors', () => {
    assert.ok(requests.length > 5, `only ${requests.length} requests recorded`);
    const origin = server.origin;
    const away = requests.filter((u) => new URL(u).origin !== origin);
    assert.deepEqual(away, [], 'requests left the origin');
    assert.ok(requests.some((u) => u.endsWith('/pkg/tirtrace_bg.wasm')), 'the wasm was loaded');
    assert.deepEqual(pageErrors, [], 'page errors');
    assert.deepEqual(consoleErrors, [], 'console errors');
  });
});
