// Writes everything the command line and the page-facing wasm exports answer for the examples,
// for variants that reach the parts the examples do not, and for a few thousand broken
// documents (every number, every field and every extra key of every example), one file per
// question, so that two builds can be compared byte for byte (scripts/same_output.sh).
//
// Usage: node scripts/same_output.mjs OUT_DIR CLI PKG_DIR
//   CLI      the native command line (target/release/tirtrace of the build)
//   PKG_DIR  the wasm-bindgen output of the same build (tirtrace.js, tirtrace_bg.wasm)
// The charts the wasm draws on a canvas (draw_bend_chart, draw_exit_map, draw_intensity) are
// drawn in headless Chromium (Debian's, driven by playwright-core from tests/e2e) and compared as
// the canvas's PNG.

import { spawnSync } from 'node:child_process';
import { createServer } from 'node:http';
import { mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

import { variantsOf } from '../tests/e2e/variants.mjs';

const [outDir, cli, pkgDir] = process.argv.slice(2).map((p) => resolve(p));
const ROOT = resolve(import.meta.dirname, '..');
const wasm = await import(pathToFileURL(join(pkgDir, 'tirtrace.js')));
wasm.initSync({ module: readFileSync(join(pkgDir, 'tirtrace_bg.wasm')) });

mkdirSync(outDir, { recursive: true });
let written = 0;
function put(name, text) {
  writeFileSync(join(outDir, name.replace(/[^A-Za-z0-9_.-]+/g, '_')), text);
  written += 1;
}

/** The command line's answer: exit code, standard output and standard error, as one text. */
function run(args, input) {
  const r = spawnSync(cli, args, { input, encoding: 'utf8', maxBuffer: 1 << 28 });
  return `exit ${r.status}\n--- stdout\n${r.stdout}--- stderr\n${r.stderr}`;
}

/** A wasm call's answer as text: the value as JSON, or the thrown message. */
function ask(f) {
  try {
    const value = f();
    return `ok\n${typeof value === 'string' ? value : JSON.stringify(value, null, 1)}\n`;
  } catch (e) {
    return `threw\n${e && e.message !== undefined ? e.message : String(e)}\n`;
  }
}

const read = (dir) => readdirSync(join(ROOT, dir)).filter((f) => f.endsWith('.json')).sort()
  .map((f) => [f.replace(/\.json$/, ''), JSON.parse(readFileSync(join(ROOT, dir, f), 'utf8'))]);
const scenarios = read('examples/scenarios');
const designs = read('examples/designs');

// Variants that reach what the examples do not (the same as the wasm-vs-native browser test).
const base = Object.fromEntries(scenarios).thermostat_status_led;
scenarios.push(
  ...variantsOf(base),
  ['variant_cos_m_mw', {
    ...base,
    source: { ...base.source, flux: { mw: 3 },
      emitter: { led: { area: { square: { side_mm: 0.5 } }, pattern: { half_intensity: { half_angle_deg: 40 } } } } },
    guide: { ...base.guide, exit_medium: { library: 'water' } },
  }],
);

/** Every variation of a document that breaks it one place at a time. */
function* broken(doc) {
  function* walk(node, path) {
    if (Array.isArray(node)) {
      for (let i = 0; i < node.length; i++) yield* walk(node[i], [...path, i]);
      yield [[...path, node.length], 1, 'appended'];
      return;
    }
    if (node && typeof node === 'object') {
      for (const key of Object.keys(node)) {
        yield [[...path, key], undefined, 'removed'];
        yield* walk(node[key], [...path, key]);
      }
      yield [[...path, 'extra_field'], 1, 'unknown'];
      return;
    }
    const values = typeof node === 'number'
      ? [-1, 0, 0.5, 1e12, -1e-9, 1.5, 2 ** 53, 'x', null, true]
      : [1, 'no such thing', '', null, { a: 1 }];
    for (const v of values) yield [path, v, `= ${JSON.stringify(v)}`];
  }
  for (const [path, value, what] of walk(doc, [])) {
    const copy = structuredClone(doc);
    let node = copy;
    for (const k of path.slice(0, -1)) node = node[k];
    const last = path[path.length - 1];
    if (value === undefined) {
      if (Array.isArray(node)) node.splice(last, 1); else delete node[last];
    } else {
      node[last] = value;
    }
    yield [`${path.join('.')} ${what}`, copy];
  }
}

// The command line's fixed questions.
put('cli_materials', run(['materials']));
put('cli_no_such_file', run(['check', '/no/such/file.json']));
put('cli_not_json', run(['check', '-'], '{ not json'));
put('cli_empty', run(['check', '-'], ''));
const thermostat = JSON.stringify(base);
for (const flags of [['--rays', '-1'], ['--rays', '0'], ['--rays', '2000000000'], ['--rays', 'x'],
  ['--paths', '5000'], ['--threads', '5000'], ['--seed', '-3'], ['--bogus']]) {
  put(`cli_trace_flags ${flags.join(' ')}`, run(['trace', '-', ...flags], thermostat));
}
put('wasm_materials', ask(() => wasm.materials()));

for (const [name, doc] of designs) {
  const text = JSON.stringify(doc);
  put(`design ${name} cli`, run(['figures', '-'], text));
  put(`design ${name} wasm_validate`, ask(() => wasm.validate(doc)));
  put(`design ${name} wasm_figures`, ask(() => wasm.figures(doc)));
  put(`design ${name} wasm_fan`, ask(() => wasm.bend_fan(doc, 15)));
  for (const [what, bad] of broken(doc)) {
    put(`design ${name} broken ${what} cli`, run(['figures', '-'], JSON.stringify(bad)));
    put(`design ${name} broken ${what} wasm`,
      ask(() => [wasm.validate(bad), ask(() => wasm.figures(bad)), ask(() => wasm.bend_fan(bad, 5))]));
  }
}

for (const [name, doc] of scenarios) {
  const text = JSON.stringify(doc);
  const small = JSON.stringify({ ...doc, trace: { ...(doc.trace || {}), rays: 3 * 4096 + 17, seed: 99 } });
  if (!name.startsWith('variant')) {
    put(`scenario ${name} cli_trace_json`, run(['trace', '-', '--threads', '2'], text));
    put(`scenario ${name} cli_trace_csv`, run(['trace', '-', '--csv'], text));
  }
  put(`scenario ${name} cli_small_json_paths`, run(['trace', '-', '--paths', '25'], small));
  put(`scenario ${name} cli_small_csv`, run(['trace', '-', '--csv', '--threads', '1'], small));
  put(`scenario ${name} cli_check`, run(['check', '-'], text));
  put(`scenario ${name} wasm_check_scenario`, ask(() => wasm.check_scenario(text)));
  put(`scenario ${name} wasm_closed_form`, ask(() => wasm.closed_form(text)));
  put(`scenario ${name} wasm_route_outline`, ask(() => wasm.route_outline(text)));
  const tracer = new wasm.Tracer(small);
  const count = tracer.batch_count();
  const report = tracer.report(0, count, 25);
  put(`scenario ${name} wasm_report`, ask(() => report));
  put(`scenario ${name} wasm_report_csv`, ask(() => wasm.report_csv(report)));
  put(`scenario ${name} wasm_first_batch`, ask(() => tracer.report(0, 1, 0)));
  put(`scenario ${name} wasm_batches_merged`,
    ask(() => tracer.report_merged([...tracer.batches(0, 2, 3), ...tracer.batches(2, count - 2, 3)])));
  put(`scenario ${name} wasm_merger`, ask(() => {
    const out = [];
    const batches = tracer.batches(0, count, 2);
    for (const i of [1, 0, 3, 2]) {
      tracer.merger_add(i, batches[i]);
      out.push(ask(() => tracer.merger_report(count)));
    }
    tracer.merger_reset();
    return out;
  }));
  put(`scenario ${name} wasm_wall_interactions`, ask(() => tracer.wall_interactions(1, 2)));
  put(`scenario ${name} wasm_tracer_errors`, ask(() => [
    ask(() => tracer.report(count, 1, 0)), ask(() => tracer.report(0.5, 1, 0)),
    ask(() => tracer.report(0, 1, 1e9)), ask(() => tracer.report_merged([])),
    ask(() => tracer.report_merged([{ nonsense: 1 }])), ask(() => wasm.report_csv({ delivered: 1 })),
  ]));
  tracer.free();
  for (const [what, bad] of broken(doc)) {
    const badText = JSON.stringify(bad);
    put(`scenario ${name} broken ${what} cli`, run(['check', '-'], badText));
    put(`scenario ${name} broken ${what} wasm`, ask(() => [wasm.check_scenario(badText),
      ask(() => wasm.closed_form(badText)), ask(() => wasm.route_outline(badText)),
      ask(() => { const t = new wasm.Tracer(badText); const n = t.batch_count(); t.free(); return n; })]));
  }
}
// The charts, drawn by the wasm on a page's canvas in Chromium.
const { chromium } = await import(pathToFileURL(join(ROOT, 'tests/e2e/node_modules/playwright-core/index.mjs')));
const server = createServer((req, res) => {
  const file = req.url.split('?')[0].slice(1);
  if (file === '') {
    res.setHeader('content-type', 'text/html');
    return res.end('<!doctype html><meta charset="utf-8"><body></body>');
  }
  try {
    const body = readFileSync(join(pkgDir, file.replace(/[^A-Za-z0-9_.]/g, '')));
    res.setHeader('content-type', file.endsWith('.wasm') ? 'application/wasm' : 'text/javascript');
    res.end(body);
  } catch {
    res.statusCode = 404;
    res.end();
  }
});
await new Promise((ok) => server.listen(0, '127.0.0.1', ok));
const browser = await chromium.launch({ executablePath: process.env.CHROMIUM || '/usr/bin/chromium',
  args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
    '--disable-background-networking', '--disable-component-update', '--disable-sync'] });
try {
  const page = await browser.newPage();
  await page.goto(`http://127.0.0.1:${server.address().port}/`);
  const small = scenarios.map(([name, doc]) => [name,
    JSON.stringify({ ...doc, trace: { ...(doc.trace || {}), rays: 2 * 4096, seed: 3 } })]);
  const dark = JSON.stringify({ ...base, trace: { rays: 64, seed: 1 },
    source: { ...base.source, offset_mm: [40, 0] } });
  const pictures = await page.evaluate(async ({ designs, small, dark }) => {
    const wasm = await import('/tirtrace.js');
    await wasm.default();
    const out = {};
    const draw = (name, size, f) => {
      const canvas = document.createElement('canvas');
      canvas.id = 'c';
      [canvas.width, canvas.height] = size;
      document.body.replaceChildren(canvas);
      try {
        f();
        out[name] = canvas.toDataURL('image/png');
      } catch (e) {
        out[name] = `threw ${e.message}`;
      }
    };
    for (const [name, doc] of designs) {
      for (const ratio of [1, 2]) draw(`chart bend ${name} x${ratio}`, [480 * ratio, 320 * ratio], () => wasm.draw_bend_chart('c', doc, ratio));
    }
    draw('chart bend broken', [480, 320], () => wasm.draw_bend_chart('c', { ...designs[0][1], diameter_mm: -1 }, 1));
    for (const [name, text] of [...small, ['no light', dark]]) {
      const tracer = new wasm.Tracer(text);
      const report = tracer.report(0, tracer.batch_count(), 0);
      tracer.free();
      for (const ratio of [1, 2]) {
        // In millimetres (a build from before the length unit ignores the extra argument).
        draw(`chart exit map ${name} x${ratio}`, [420 * ratio, 360 * ratio], () => wasm.draw_exit_map('c', report, ratio, 'mm'));
        draw(`chart intensity ${name} x${ratio}`, [480 * ratio, 320 * ratio], () => wasm.draw_intensity('c', report, ratio));
      }
    }
    draw('chart no canvas', [10, 10], () => wasm.draw_intensity('missing', {}, 1));
    return out;
  }, { designs, small, dark });
  for (const [name, png] of Object.entries(pictures)) put(name, `${png}\n`);
} finally {
  await browser.close();
  server.close();
}
console.error(`[same_output] ${written} answers written to ${outDir}`);
