// The tolerances panel: how much the delivered light spreads from part to part when some of the
// design's numbers are made within tolerances, and which tolerance matters most. The designer
// adds a number with the ± button beside its field (editor.js), picks a normal spread (σ) or a
// uniform one (± half-width), sets the variants and runs; batches are traced in a worker pool of
// their own (js/trace/pool.js with tolerance: true) and the result fills in as they arrive. The
// set-up is kept with the design (state.tolerances) and opens from / saves to a study file (the
// JSON `tirtrace study` reads, with `tolerances`). Everything is computed by the core
// (ToleranceTracer, draw_tolerance_chart, tolerance_report_csv); this module only wires events and
// writes the text and the table.

import { $, h } from '../dom.js';
import { sizeCanvasForCore } from '../drawing.js';
import { messageOf } from '../errors.js';
import { formatHalfWidth, formatShare } from '../format.js';
import { parseNumber } from '../numbers.js';
import { MainThreadPool } from '../trace/main-thread-pool.js';
import { TracePool } from '../trace/pool.js';
import { clone, download, fileNameFor, getAt, isLength, showNumber, toStored } from './scenario.js';

const CHART_ID = 'tol-chart';
const DEFAULT_VARIANTS = 40;

/**
 * The width a new tolerance starts with (stored units): 0.05 mm for a position or a gap, 0.5° for
 * an angle, else 5 % of the value (0.05 of the field's unit when the value is 0).
 */
export function prefilledWidth(path, value) {
  if (/(offset_mm(\[\d+\])?|gap_mm|distance_mm|from_mm|to_mm)$/.test(path)) return 0.05;
  if (/_deg(\[\d+\])?$/.test(path)) return 0.5;
  const x = Math.abs(Number(value));
  return Number.isFinite(x) && x > 0 ? Number((0.05 * x).toPrecision(3)) : 0.05;
}

/** A signed number of % points from a share difference: "−0.96" (the ci95 sets the digits). */
const points = (s) => {
  const text = formatShare(Math.abs(s.share), s.ci95);
  return `${s.share < 0 && Number(text) !== 0 ? '−' : s.share > 0 && Number(text) !== 0 ? '+' : ''}${text}`;
};

export class TolerancePanel {
  /**
   * core: the loaded core; state: the page state (its `tolerances` is this panel's set-up);
   * editor: the design form (to find a field's label); onSaved: call to keep the state;
   * openDesign(scenario, how): replace the design (for a study file); traceWorker: the pool's
   * worker options (sources.js).
   */
  constructor({ core, state, editor, onSaved, openDesign, traceWorker }) {
    this.core = core;
    this.state = state;
    this.editor = editor;
    this.onSaved = onSaved;
    this.openDesign = openDesign;
    this.traceWorker = traceWorker;
    this.pool = null;
    this.job = null;
    /** The design (JSON text) of the last run. */
    this.tracedScenario = null;
    this.report = null;
    this.running = false;
    /** Why the running study was stopped by the page (the design was edited), or null. */
    this.stopReason = null;
    this.wire();
    this.showSetup();
  }

  // ------------------------------------------------------------ set-up

  get setup() {
    return this.state.tolerances ?? null;
  }

  /** The form's label of a field path (messages name fields by it). */
  labelOf(path) {
    const button = this.editor.root.querySelector(`[data-vary-path="${CSS.escape(path)}"]`);
    if (button) return button.dataset.varyLabel;
    return this.setup?.spreads.find((s) => s.field === path)?.label ?? path;
  }

  /** The unit the form shows a field in ('' when it has none). */
  unitOf(path) {
    if (isLength(path)) return this.state.unit;
    const m = path.match(/_(deg|nm|mw|lm)(\[\d+\])?$/);
    return m ? { deg: '°', nm: 'nm', mw: 'mW', lm: 'lm' }[m[1]] : '';
  }

  /** Add a tolerance on the field at `path` (labelled `label` in the form), or show it if listed. */
  add(path, label) {
    if (!this.state.tolerances) this.state.tolerances = { spreads: [], variants: DEFAULT_VARIANTS };
    const t = this.state.tolerances;
    if (!t.spreads.some((s) => s.field === path)) {
      const width = prefilledWidth(path, getAt(this.state.scenario, path));
      t.spreads.push({ field: path, label, kind: 'normal', width });
      this.onSaved();
    }
    this.showSetup();
    this.message('');
    $('tol-rows').querySelector(`input[data-tol-path="${CSS.escape(path)}"]`)?.focus();
  }

  remove(path) {
    const t = this.setup;
    if (!t) return;
    t.spreads = t.spreads.filter((s) => s.field !== path);
    this.onSaved();
    this.showSetup();
  }

  showSetup() {
    const t = this.setup;
    const listed = new Set((t?.spreads ?? []).map((s) => s.field));
    for (const b of this.editor.root.querySelectorAll('.tol-pick')) {
      b.setAttribute('aria-pressed', String(listed.has(b.dataset.tolPath)));
    }
    const rows = (t?.spreads ?? []).map((s) => this.setupRow(s));
    $('tol-rows').replaceChildren(...rows);
    $('tol-list').hidden = rows.length === 0;
    $('tol-empty').hidden = rows.length > 0;
    $('tol-variants').value = String(t?.variants ?? DEFAULT_VARIANTS);
    $('tol-run').disabled = rows.length === 0 || this.running;
    $('tol-stop').disabled = !this.running;
    $('tol-save').disabled = rows.length === 0;
  }

  /** One listed tolerance: its label, normal/uniform, the width and a remove button. */
  setupRow(s) {
    const label = this.labelOf(s.field);
    const unit = this.unitOf(s.field);
    const kind = h(
      'select',
      { 'aria-label': `Spread of “${label}”`, dataset: { tolKind: s.field } },
      h('option', { value: 'normal', text: 'normal, σ' }),
      h('option', { value: 'uniform', text: 'uniform, ± half-width' }),
    );
    kind.value = s.kind;
    kind.addEventListener('change', () => {
      s.kind = kind.value;
      this.onSaved();
    });
    const width = h('input', {
      type: 'text',
      inputmode: 'decimal',
      autocomplete: 'off',
      spellcheck: 'false',
      'aria-label': `Width of the spread of “${label}”${unit ? ` (${unit})` : ''}`,
      dataset: { tolPath: s.field },
    });
    width.value = s.draft ?? showNumber(s.width, s.field, this.state.unit);
    width.addEventListener('change', () => {
      const x = parseNumber(width.value);
      if (Number.isNaN(x)) s.draft = width.value;
      else {
        delete s.draft;
        s.width = toStored(x, s.field, this.state.unit);
      }
      this.onSaved();
    });
    return h(
      'tr',
      { dataset: { field: s.field } },
      h('th', { scope: 'row', text: label }),
      h('td', {}, kind),
      h('td', { class: 'tol-width' }, width, h('span', { class: 'unit-label', text: unit })),
      h('td', {}, h('button', {
        type: 'button',
        class: 'tol-remove',
        'aria-label': `Remove the tolerance on “${label}”`,
        title: 'Remove this tolerance',
        text: '×',
        onclick: () => this.remove(s.field),
      })),
    );
  }

  /** Problems of the set-up as typed (text that is not a number), in the designer's words. */
  readProblems() {
    const out = [];
    for (const s of this.setup?.spreads ?? []) {
      if (s.draft !== undefined) {
        const what = s.kind === 'normal' ? 'σ' : 'the half-width';
        out.push(`${what} of “${this.labelOf(s.field)}” must be a number, got “${s.draft}”`);
      }
    }
    const v = parseNumber($('tol-variants').value);
    if (Number.isNaN(v)) out.push(`Variants must be a number, got “${$('tol-variants').value}”`);
    else this.setup.variants = v;
    return out;
  }

  /** The study document (the JSON `tirtrace study` reads) of the design and this set-up. */
  document() {
    const t = this.setup;
    const spreads = t.spreads.map((s) => (s.kind === 'uniform' ? { field: s.field, half_width: s.width } : { field: s.field, sigma: s.width }));
    const name = `${this.state.scenario.name || 'Untitled design'}: tolerances`;
    return { version: 1, name, scenario: clone(this.state.scenario), tolerances: { spreads, variants: t.variants } };
  }

  /** A core problem in the designer's words: field paths replaced by the form's labels. */
  inWords(problem) {
    const swap = (text, from, to) => text.replace(new RegExp(`${from.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(?![\\w.[])`, 'g'), to);
    let text = problem.message;
    (this.setup?.spreads ?? []).forEach((s, i) => {
      const label = `“${this.labelOf(s.field)}”`;
      text = swap(text, `tolerances.spreads[${i}].sigma`, `σ of ${label}`);
      text = swap(text, `tolerances.spreads[${i}].half_width`, `the half-width of ${label}`);
      text = swap(text, `tolerances.spreads[${i}].field`, `the tolerance on ${label}`);
      text = swap(text, `tolerances.spreads[${i}]`, `the tolerance on ${label}`);
    });
    text = swap(text, 'tolerances.variants', 'Variants');
    text = swap(text, 'tolerances.spreads', 'the tolerances');
    const field = problem.field.replace(/^scenario\./, '');
    if (!problem.field.startsWith('tolerances')) {
      text = swap(text, `scenario.${field}`, field);
      const label = this.labelOf(field);
      if (label !== field) text = swap(text, field, `“${label}”`);
    }
    return text;
  }

  // ------------------------------------------------------------ running

  async ensurePool() {
    if (this.pool) return;
    const onUpdate = (u) => this.onUpdate(u);
    try {
      this.pool = new TracePool({ tolerance: true, onUpdate, ...this.traceWorker });
      await this.pool.ready();
    } catch {
      // No workers here (e.g. a file:// page): trace on the page, more slowly.
      this.pool?.dispose();
      this.pool = new MainThreadPool({ Tracer: this.core.ToleranceTracer, onUpdate });
    }
  }

  async run() {
    if (!this.setup?.spreads.length || this.running) return;
    const typed = this.readProblems();
    if (typed.length) {
      this.message(typed.join('; '), 'error');
      return;
    }
    this.onSaved();
    const text = JSON.stringify(this.document());
    // Checked here first so that every problem can be shown in the form's words.
    try {
      new this.core.ToleranceTracer(text).free();
    } catch (e) {
      const problems = e.problems ?? [{ field: 'study', message: messageOf(e) }];
      this.message(problems.map((p) => this.inWords(p)).join(' · '), 'error');
      return;
    }
    this.tracedScenario = JSON.stringify(this.state.scenario);
    this.running = true;
    this.stopReason = null;
    this.report = null;
    $('tol-results').hidden = true;
    $('tol-ranking').replaceChildren();
    $('tol-progress').textContent = '';
    this.showSetup();
    this.message(`Tracing the nominal design and ${this.setup.variants} variants with the same rays…`);
    $('tolerances').dataset.state = 'running';
    await this.ensurePool();
    if (!this.running) return; // stopped while the workers were starting
    this.job = this.pool.start(text, { keepPaths: 0 });
    $('tolerances').dataset.job = String(this.job);
  }

  stop() {
    if (!this.running) return;
    if (this.pool && this.job !== null) this.pool.cancel();
    else this.finish(`${this.stopReason ?? 'Stopped'}.`);
  }

  finish(text, kind = 'ok') {
    this.running = false;
    this.job = null;
    this.showSetup();
    this.message(text, kind);
    $('tolerances').dataset.state = 'done';
  }

  onUpdate(u) {
    if (u.job !== this.job) return;
    if (u.report) {
      this.report = u.report;
      this.showReport();
    }
    const progress = `${u.batchesDone} of ${u.batchCount} batches of every variant`;
    $('tol-progress').textContent = u.batchCount ? progress : '';
    if (u.error) this.finish(`The tolerance study stopped: ${u.error}`, 'error');
    else if (u.cancelled) {
      const why = `${this.stopReason ?? 'Stopped'}: `;
      this.finish(`${why}${this.report ? `the result shows ${progress}.` : 'nothing was traced yet.'}`);
    } else if (u.done) {
      const rays = this.report?.rays ?? u.raysTotal;
      this.finish(`Done: ${rays.toLocaleString('en')} rays per variant, the same rays in every variant.`);
    }
  }

  // ------------------------------------------------------------ showing

  /** The result in the designer's words: nominal, the 5–95 % range and the most influential. */
  summary(r) {
    const d = r.delivered;
    const nominal = `nominal ${formatShare(r.nominal.share, r.nominal.ci95)} % ± ${formatHalfWidth(r.nominal.ci95)}`;
    const noise = Number.isFinite(d?.typical_variant_ci95) ? `, each ± ${formatHalfWidth(d.typical_variant_ci95)} from ray noise` : '';
    const range = d
      ? `90 % of parts between ${formatShare(d.p05, d.typical_variant_ci95)} % and ${formatShare(d.p95, d.typical_variant_ci95)} % (5th to 95th percentile over ${r.variants_traced} variants${noise})`
      : 'no variant could be traced';
    const top = r.sensitivity.one_at_a_time.find((o) => o.effect);
    const spread = r.spreads.find((s) => s.field === top?.field);
    const per = spread?.distribution.uniform ? 'per standard deviation (half-width/√3)' : 'per σ';
    const most = top ? `; most influential: ${this.labelOf(top.field)} — ${points(top.effect)} % points ${per}` : '';
    return `Delivered: ${nominal}; ${range}${most}`;
  }

  showReport() {
    const r = this.report;
    const d = r.delivered;
    const el = $('tol-summary');
    el.textContent = this.summary(r);
    Object.assign(el.dataset, {
      nominal: String(r.nominal.share),
      nominalCi95: String(r.nominal.ci95),
      p05: d ? String(d.p05) : '',
      p50: d ? String(d.p50) : '',
      p95: d ? String(d.p95) : '',
      traced: String(r.variants_traced),
      refused: String(r.variants_refused),
    });
    // Refused variants: counted, the first named with their problems in the form's words.
    const refused = $('tol-refused');
    if (r.variants_refused > 0) {
      const first = r.refused_examples.map((x) => `variant ${x.variant + 1}: ${(x.problems ?? []).map((p) => this.inWords(p)).join('; ')}`);
      const n = r.variants_refused;
      refused.textContent = `${n} of ${r.variants_drawn} variants could not be made (left out): ${first.join(' · ')}${n > first.length ? ' …' : ''}`;
    }
    refused.hidden = r.variants_refused === 0;
    const corr = new Map(r.sensitivity.correlation.map((c) => [c.field, c.r]));
    const anyProblem = r.sensitivity.one_at_a_time.some((o) => o.problems?.length);
    const rows = r.sensitivity.one_at_a_time.map((o, i) => {
      const unit = this.unitOf(o.field);
      const shownStep = Number(Number(showNumber(o.step, o.field, this.state.unit)).toPrecision(3));
      const step = `${shownStep}${unit ? ` ${unit}` : ''}`;
      const problems = (o.problems ?? []).map((p) => this.inWords(p)).join(' · ');
      const rr = corr.get(o.field);
      return h(
        'tr',
        { dataset: { index: String(i), field: o.field } },
        h('th', { scope: 'row', text: this.labelOf(o.field) }),
        h('td', { class: 'num', text: step }),
        h('td', {
          class: 'num',
          dataset: o.effect ? { key: 'effect', share: String(o.effect.share), ci95: String(o.effect.ci95) } : { key: 'effect' },
          text: o.effect ? `${points(o.effect)} ± ${formatHalfWidth(o.effect.ci95)}` : '—',
        }),
        h('td', {
          class: 'num',
          dataset: rr == null ? { key: 'r' } : { key: 'r', r: String(rr) },
          text: rr == null ? '—' : rr.toFixed(2).replace('-', '−'),
        }),
        anyProblem ? h('td', { class: 'problem', text: problems }) : null,
      );
    });
    const head = ['Number', 'Step (1 σ)', 'Effect of a step, % points ± 95 %', 'Correlation r', anyProblem ? 'Problems' : null];
    $('tol-ranking-head').replaceChildren(h('tr', {}, head.filter((t) => t !== null).map((t, i) => h('th', { scope: 'col', class: i > 0 && i < 4 ? 'num' : null, text: t }))));
    $('tol-ranking').replaceChildren(...rows);
    $('tol-results').hidden = false;
    this.drawChart();
  }

  drawChart() {
    if (!this.report || $('tol-results').hidden) return;
    const { ratio } = sizeCanvasForCore($(CHART_ID));
    // The chart names each bar by its field: give it the form's labels (with the field's unit).
    const labelled = clone(this.report);
    for (const o of labelled.sensitivity.one_at_a_time) {
      const unit = this.unitOf(o.field);
      o.field = `${this.labelOf(o.field)}${unit ? ` (${unit})` : ''}`;
    }
    try {
      this.core.draw_tolerance_chart(CHART_ID, labelled, ratio);
    } catch (e) {
      this.message(`The chart could not be drawn: ${messageOf(e)}`, 'error');
    }
  }

  message(text, kind = 'info') {
    const el = $('tol-msg');
    el.textContent = text;
    el.dataset.kind = kind;
    el.hidden = !text;
  }

  // ------------------------------------------------------------ files

  baseName() {
    return fileNameFor(this.state.scenario).replace(/\.tirtrace\.json$/, '');
  }

  saveFile() {
    if (!this.setup?.spreads.length) return;
    const typed = this.readProblems();
    if (typed.length) {
      this.message(typed.join('; '), 'error');
      return;
    }
    this.onSaved();
    const text = `${JSON.stringify(this.document(), null, 2)}\n`;
    download(new Blob([text], { type: 'application/json' }), `${this.baseName()}.tolerances.study.json`);
  }

  async openFile(file) {
    let doc;
    try {
      doc = JSON.parse(await file.text());
    } catch (e) {
      this.message(`${file.name} is not a study file (JSON): ${messageOf(e)}`, 'error');
      return;
    }
    const t = doc?.tolerances;
    const ok = t && Array.isArray(t.spreads) && t.spreads.every((s) => typeof s?.field === 'string' && (typeof s.sigma === 'number' || typeof s.half_width === 'number'));
    if (!doc?.scenario || !ok) {
      this.message(`${file.name} is not a tolerance study: it needs a scenario and tolerances.spreads, each with a field and sigma or half_width`, 'error');
      return;
    }
    try {
      this.openDesign(doc.scenario, `Opened the design of the tolerance study “${doc.name || file.name}”`);
    } catch (e) {
      this.message(`The design in ${file.name} cannot be used: ${messageOf(e)}`, 'error');
      return;
    }
    this.state.tolerances = {
      spreads: t.spreads.map((s) => ({
        field: s.field,
        label: this.labelOf(s.field),
        kind: typeof s.sigma === 'number' ? 'normal' : 'uniform',
        width: typeof s.sigma === 'number' ? s.sigma : s.half_width,
      })),
      variants: Number.isFinite(t.variants) ? t.variants : DEFAULT_VARIANTS,
    };
    this.onSaved();
    this.showSetup();
    this.message(`Tolerance study “${doc.name || file.name}” opened: press Run.`);
  }

  // ------------------------------------------------------------ events

  wire() {
    this.editor.root.addEventListener('click', (e) => {
      const b = e.target.closest('.tol-pick');
      if (b) this.add(b.dataset.tolPath, b.dataset.tolLabel);
    });
    $('tol-variants').addEventListener('change', () => {
      const v = parseNumber($('tol-variants').value);
      if (this.setup && !Number.isNaN(v)) {
        this.setup.variants = v;
        this.onSaved();
      }
    });
    $('tol-run').addEventListener('click', () => this.run());
    $('tol-stop').addEventListener('click', () => this.stop());
    $('tol-csv').addEventListener('click', () => {
      if (!this.report) return;
      const csv = this.core.tolerance_report_csv(this.report);
      download(new Blob([csv], { type: 'text/csv' }), `${this.baseName()}-tolerances.csv`);
    });
    $('tol-png').addEventListener('click', () => {
      if (!this.report) return;
      $(CHART_ID).toBlob((blob) => blob && download(blob, `${this.baseName()}-tolerances.png`));
    });
    $('tol-save').addEventListener('click', () => this.saveFile());
    $('tol-open').addEventListener('click', () => $('tol-file').click());
    $('tol-file').addEventListener('change', async (e) => {
      const [file] = e.target.files;
      e.target.value = '';
      if (file) await this.openFile(file);
    });
    window.addEventListener('resize', () => this.drawChart());
    // The length unit shown changed (main.js keeps it in the state): show the widths in it.
    for (const r of document.querySelectorAll('input[name="unit"]')) {
      // After main.js's own listener has stored the unit (it listens after this one).
      r.addEventListener('change', () => setTimeout(() => {
        this.showSetup();
        if (this.report) this.showReport();
      }));
    }
  }

  /**
   * The design was edited: a running study of the earlier design is stopped (and says why); a
   * finished result stays readable with a note that it is of the earlier design.
   */
  designChanged() {
    if (this.tracedScenario === null || this.tracedScenario === JSON.stringify(this.state.scenario)) return;
    if (this.running) {
      this.stopReason = 'Stopped because the design was edited while it ran (Run again for the design as it is now)';
      this.stop();
      return;
    }
    if (this.report) this.message('The design has changed since these tolerances ran: the result is of the earlier design; Run again to see the design as it is now.');
  }

  /** The state was replaced (a new design): follow it. */
  setState(state) {
    this.state = state;
    this.showSetup();
  }
}
