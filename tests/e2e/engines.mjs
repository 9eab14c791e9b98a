// The three browser engines of the cross-engine test, each from Debian's packages, behind one small
// interface (open a page, run a function in it, click, type, choose, resize, screenshot, a second
// tab, close):
// - Chromium (`chromium`) driven by playwright-core, as every other browser test here;
// - Firefox ESR (`firefox-esr`) driven over WebDriver BiDi by puppeteer-core, which talks to
//   Firefox's own BiDi endpoint: no geckodriver (Debian does not ship one) and no browser download;
// - WebKitGTK (`webkit2gtk-driver`: WebKitWebDriver and its MiniBrowser) driven over classic W3C
//   WebDriver by selenium-webdriver, pointed at the WebKitWebDriver we start (so Selenium Manager
//   never runs). MiniBrowser has no headless mode: it runs in an Xvfb display (`xvfb`) of its own.
// scripts/setup.sh --browser installs all three.

import assert from 'node:assert/strict';
import { spawn } from 'node:child_process';
import { existsSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

import { chromium } from 'playwright-core';
import puppeteer from 'puppeteer-core';
import { Builder, By, Key } from 'selenium-webdriver';

import { CHROMIUM, CHROMIUM_ARGS, freePort, reachable } from './harness.mjs';

export const FIREFOX = process.env.FIREFOX || '/usr/bin/firefox-esr';
export const WEBKIT_DRIVER = process.env.WEBKIT_DRIVER || '/usr/bin/WebKitWebDriver';
/** WebKitGTK's MiniBrowser, in the library folder of the machine's architecture (libwebkit2gtk-4.1-0). */
export const MINIBROWSER = process.env.MINIBROWSER || findMiniBrowser();

function findMiniBrowser() {
  const lib = '/usr/lib';
  const found = existsSync(lib)
    ? readdirSync(lib).map((d) => join(lib, d, 'webkit2gtk-4.1', 'MiniBrowser')).find((p) => existsSync(p))
    : undefined;
  return found ?? '/usr/lib/<architecture>/webkit2gtk-4.1/MiniBrowser';
}
export const XVFB = '/usr/bin/Xvfb';

const missing = (what, path) =>
  `${what} is missing (${path}): run \`bash scripts/setup.sh --browser\`, which installs it from Debian's packages`;

/** The source of a function to run in a page with its one argument (classic WebDriver). */
const asScript = (fn) => `return (${fn}).apply(null, arguments);`;

/** Chromium through playwright-core. */
async function launchChromium() {
  assert.ok(existsSync(CHROMIUM), missing('Chromium', CHROMIUM));
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  const context = await browser.newContext({ viewport: { width: 1280, height: 800 } });
  let page = await context.newPage();
  const consoleErrors = [];
  const watch = (p) => {
    const onConsole = (m) => m.type() === 'error' && consoleErrors.push(m.text());
    p.on('console', onConsole);
    p.on('worker', (w) => w.on('console', onConsole));
    p.on('pageerror', (e) => consoleErrors.push(String(e)));
  };
  watch(page);
  return {
    name: 'Chromium',
    version: browser.version(),
    consoleErrors,
    goto: (url) => page.goto(url),
    reload: () => page.reload(),
    evaluate: (fn, arg) => page.evaluate(fn, arg),
    click: (sel) => page.click(sel),
    fill: (sel, text) => page.fill(sel, text),
    select: (sel, value) => page.selectOption(sel, value).then(() => undefined),
    setViewport: (width, height) => page.setViewportSize({ width, height }),
    screenshot: (path) => page.screenshot({ path }).then(() => undefined),
    async inNewTab(url, use) {
      const tab = await context.newPage();
      watch(tab);
      try {
        await tab.goto(url);
        return await use({ name: 'Chromium, new tab', evaluate: (fn, arg) => tab.evaluate(fn, arg) });
      } finally {
        await tab.close();
      }
    },
    async close() {
      await browser.close();
      page = null;
    },
  };
}

/** Firefox ESR through puppeteer-core over WebDriver BiDi. */
async function launchFirefox() {
  assert.ok(existsSync(FIREFOX), missing('Firefox ESR', FIREFOX));
  const browser = await puppeteer.launch({ browser: 'firefox', executablePath: FIREFOX, headless: true });
  const page = (await browser.pages())[0] ?? (await browser.newPage());
  await page.setViewport({ width: 1280, height: 800 });
  // The pages' console (over BiDi puppeteer reports the page's own, not its workers').
  const consoleErrors = [];
  const watch = (p) => {
    p.on('console', (m) => m.type() === 'error' && consoleErrors.push(m.text()));
    p.on('pageerror', (e) => consoleErrors.push(String(e)));
  };
  watch(page);
  const evaluateIn = (p) => (fn, arg) => p.evaluate(fn, arg);
  return {
    name: 'Firefox',
    version: await browser.version(),
    consoleErrors,
    goto: (url) => page.goto(url).then(() => undefined),
    reload: () => page.reload().then(() => undefined),
    evaluate: evaluateIn(page),
    click: (sel) => page.click(sel),
    fill: (sel, text) => page.locator(sel).fill(text),
    select: (sel, value) => page.select(sel, value).then(() => undefined),
    setViewport: (width, height) => page.setViewport({ width, height }),
    screenshot: (path) => page.screenshot({ path }).then(() => undefined),
    async inNewTab(url, use) {
      const tab = await browser.newPage();
      watch(tab);
      try {
        await tab.goto(url);
        return await use({ name: 'Firefox, new tab', evaluate: evaluateIn(tab) });
      } finally {
        await tab.close();
      }
    },
    close: () => browser.close(),
  };
}

/** Start Xvfb on a display it picks itself (-displayfd); resolves with the child and ":N". */
function startXvfb() {
  return new Promise((resolve, reject) => {
    const child = spawn(XVFB, ['-displayfd', '3', '-screen', '0', '1400x1300x24', '-nolisten', 'tcp'], {
      stdio: ['ignore', 'ignore', 'ignore', 'pipe'],
    });
    let text = '';
    const timer = setTimeout(() => reject(new Error('Xvfb did not report its display within 10 s')), 10_000);
    child.once('error', reject);
    child.once('exit', (code) => reject(new Error(`Xvfb exited with ${code} before it reported its display`)));
    child.stdio[3].on('data', (d) => {
      text += d;
      if (text.includes('\n')) {
        clearTimeout(timer);
        child.removeAllListeners('exit');
        resolve({ child, display: `:${text.trim()}` });
      }
    });
  });
}

function stopChild(child) {
  return new Promise((resolve) => {
    if (!child || child.exitCode !== null || child.signalCode !== null) return resolve();
    child.once('exit', () => resolve());
    child.kill('SIGTERM');
  });
}

/** WebKitGTK's MiniBrowser through WebKitWebDriver (classic WebDriver), in an Xvfb display. */
async function launchWebKit() {
  for (const [what, path] of [['WebKitWebDriver', WEBKIT_DRIVER], ['WebKitGTK MiniBrowser', MINIBROWSER], ['Xvfb', XVFB]]) {
    assert.ok(existsSync(path), missing(what, path));
  }
  const xvfb = await startXvfb();
  const port = await freePort();
  const driverProcess = spawn(WEBKIT_DRIVER, [`--port=${port}`], { stdio: 'ignore', env: { ...process.env, DISPLAY: xvfb.display } });
  const server = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 15_000;
  while (!(await reachable(`${server}/status`))) {
    if (Date.now() > deadline || driverProcess.exitCode !== null) {
      await stopChild(driverProcess);
      await stopChild(xvfb.child);
      throw new Error('WebKitWebDriver did not answer within 15 s');
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  const driver = await new Builder()
    .usingServer(server)
    .withCapabilities({
      browserName: 'MiniBrowser',
      'webkitgtk:browserOptions': { binary: MINIBROWSER, args: ['--automation'] },
    })
    .build();
  await driver.manage().setTimeouts({ script: 120_000, pageLoad: 60_000 });
  const caps = await driver.getCapabilities();
  const evaluate = (fn, arg) => driver.executeScript(asScript(fn), arg);
  /** Size the window so that the page's own viewport is width × height CSS pixels. */
  async function setViewport(width, height) {
    await driver.manage().window().setRect({ width, height });
    for (let i = 0; i < 3; i += 1) {
      const inner = await evaluate(() => [window.innerWidth, window.innerHeight]);
      if (inner[0] === width && inner[1] === height) return;
      const rect = await driver.manage().window().getRect();
      await driver.manage().window().setRect({ width: rect.width + width - inner[0], height: rect.height + height - inner[1] });
    }
  }
  const engine = {
    name: 'WebKit',
    version: `WebKitGTK ${caps.get('browserVersion')}`,
    // Classic WebDriver has no access to the console.
    consoleErrors: null,
    goto: (url) => driver.get(url),
    reload: () => driver.navigate().refresh(),
    evaluate,
    click: async (sel) => (await driver.findElement(By.css(sel))).click(),
    async fill(sel, text) {
      // Select what is there and type over it, as a person would (a cleared field would be
      // settled as empty first). Two calls: WebKitWebDriver drops the text typed in the same
      // call after the chord.
      const el = await driver.findElement(By.css(sel));
      await el.click();
      await el.sendKeys(Key.chord(Key.CONTROL, 'a'));
      await el.sendKeys(text);
    },
    select: async (sel, value) => (await driver.findElement(By.css(`${sel} option[value="${value}"]`))).click(),
    setViewport,
    async screenshot(path) {
      writeFileSync(path, Buffer.from(await driver.takeScreenshot(), 'base64'));
    },
    async inNewTab(url, use) {
      const home = await driver.getWindowHandle();
      await driver.switchTo().newWindow('tab');
      try {
        await driver.get(url);
        return await use({ name: 'WebKit, new tab', evaluate });
      } finally {
        await driver.close();
        await driver.switchTo().window(home);
      }
    },
    async close() {
      try {
        await driver.quit();
      } finally {
        await stopChild(driverProcess);
        await stopChild(xvfb.child);
      }
    },
  };
  await setViewport(1280, 800);
  return engine;
}

/** The engines, in the order the test runs them: [name, launch]. */
export const ENGINES = [
  ['Chromium', launchChromium],
  ['Firefox', launchFirefox],
  ['WebKit', launchWebKit],
];
