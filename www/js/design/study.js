// The study panel: trace the design at several values of one of its numbers (a sweep) and show
// delivered light, its difference to the first point and, for a bend's radius, that bend's leak.
// The designer picks the number with the ⇆ button beside its field (editor.js), sets from / to /
// steps, and runs; batches are traced in a worker pool of their own (js/trace/pool.js with
// study: true) and the table and chart fill in as they arrive. The set-up is kept with the design
// (state.study) and opens from / saves to a study file (the JSON `tirtrace study` reads).
// Everything is computed by the core (StudyTracer, draw_sweep_chart, sweep_report_csv); this
// module only wires events and writes the table.

import { $, h } from '../dom.js';
import { sizeCanvasForCore } from '../drawing.js';
import { messageOf } from '../errors.js';
import { formatHalfWidth, formatShare } from '../format.js';
import { parseNumber } from '../numbers.js';
import { MainThreadPool } from '../trace/main-thread-pool.js';
import { TracePool } from '../trace/pool.js';
import { carryTyped, clone, download, fileNameFor, isLength, showNumber, toStored } from './scenario.js';

const CHART_ID = 'study-chart';

/** A bend's centre-line radius: "every bend together" can scale them all. */
const BEND_RADIUS = /^route\[(\d+)\]\.bend\.radius_mm$/;
/** Fields whose values are texts (library names), compared as a list rather than a range. */
const TEXT_FIELDS = new Set(['guide.material.library']);
/** Library materials a pipe is not made of (the editor's own filter for the pipe). */
const NOT_A_PIPE = new Set(['air', 'water']);

/** Points the panel suggests around the current value: ±40 % in 4 steps (5 points). */
const SPREAD = 0.4;
const DEFAULT_STEPS = 4;

/**
 * A point's value as the table shows it, in the form's unit. One function so that a second
 * varied field (a grid's `and_value`) or a text value (a material's name) can join here.
 */
export function shownValue(point, field, unit) {
  if (typeof point.value === 'string') return point.value;
  const shown = showNumber(point.value, field, unit);
  const and = point.and_value === undefined ? '' : ` × ${point.and_value}`;
  return `${shown}${and}`;
}

/** A share and its half-width as "12.3 ± 0.4" (per cent, no sign), for a table cell. */
const shareText = (s) => (s ? `${formatShare(s.share, s.ci95)} ± ${formatHalfWidth(s.ci95)}` : '—');

export class StudyPanel {
  /**
   * core: the loaded core; state: the page state (its `study` is this panel's set-up);
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
    /** The design (JSON text) of the last study run. */
    this.tracedScenario = null;
    this.report = null;
    this.variedBend = null;
    this.running = false;
    this.wire();
    this.showSetup();
  }

  // ------------------------------------------------------------ set-up

  get setup() {
    return this.state.study ?? null;
  }

  /** The form's label of a field path (the study's messages name fields by it). */
  labelOf(path) {
    const button = this.editor.root.querySelector(`[data-vary-path="${CSS.escape(path)}"]`);
    if (button) return button.dataset.varyLabel;
    if (path === this.setup?.field) return this.setup.label;
    return path;
  }

  /** The unit the form shows a field in ('' when it has none). */
  unitOf(path) {
    if (isLength(path)) return this.state.unit;
    const m = path.match(/_(deg|nm|mw|lm)(\[\d+\])?$/);
    return m ? { deg: '°', nm: 'nm', mw: 'mW', lm: 'lm' }[m[1]] : '';
  }

  /** The value at `path` in the design (undefined when it has none). */
  valueAt(path) {
    const keys = path.replace(/\[(\d+)\]/g, '.$1').split('.');
    let value = this.state.scenario;
    for (const k of keys) value = value?.[k];
    return value;
  }

  /** The materials a pipe can be compared in: [id, name] of the core's library. */
  pipeMaterials() {
    return (this.editor.materials ?? []).filter((m) => !NOT_A_PIPE.has(m.id)).map((m) => [m.id, m.name]);
  }

  /** A varied field's set-up at `path` (labelled `label`): a range around its value, or for a
   * choice the current material and one other to compare it with. */
  axisFor(path, label) {
    if (TEXT_FIELDS.has(path)) {
      const current = this.valueAt(path);
      const other = this.pipeMaterials().map(([id]) => id).find((id) => id !== current);
      return { field: path, label, values: [current, other].filter((v) => typeof v === 'string') };
    }
    const value = this.valueAt(path);
    const x = typeof value === 'number' && Number.isFinite(value) ? value : 1;
    const from = x === 0 ? -1 : x * (1 - SPREAD);
    const to = x === 0 ? 1 : x * (1 + SPREAD);
    return { field: path, label, from: round(from), to: round(to), steps: DEFAULT_STEPS };
  }

  /** Vary the field at `path` (labelled `label` in the form): from / to prefilled around it.
   * With "and a second number" ticked, it becomes the grid's second field instead. */
  pick(path, label) {
    const s = this.setup;
    const second = !!s && $('study-grid').checked && path !== s.field;
    if (second) {
      if (TEXT_FIELDS.has(path) && TEXT_FIELDS.has(s.field)) return;
      s.and = this.axisFor(path, label);
      delete s.every;
    } else {
      this.state.study = this.axisFor(path, label);
    }
    this.onSaved();
    this.showSetup();
    this.message('');
    const focus = second ? 'study-and-from' : 'study-from';
    if (!TEXT_FIELDS.has(path)) $(focus).focus();
  }

  showSetup() {
    const s = this.setup;
    for (const b of this.editor.root.querySelectorAll('.vary-pick')) {
      const path = b.dataset.varyPath;
      b.setAttribute('aria-pressed', String(path === s?.field || path === s?.and?.field));
    }
    $('study-field').textContent = s ? this.labelOf(s.field) : 'Nothing yet: press ⇆ beside a number in “Describe”';
    $('study-field').dataset.path = s?.field ?? '';
    const unit = s ? this.unitOf(s.field) : '';
    for (const id of ['study-from-unit', 'study-to-unit']) $(id).textContent = unit;
    if (s) {
      $('study-from').value = s.values ? showNumber(s.values[0], s.field, this.state.unit) : showNumber(s.from, s.field, this.state.unit);
      $('study-to').value = s.values ? showNumber(s.values[s.values.length - 1], s.field, this.state.unit) : showNumber(s.to, s.field, this.state.unit);
      $('study-steps').value = String(s.values ? s.values.length - 1 : s.steps);
    }
    const text = !!s && TEXT_FIELDS.has(s.field);
    for (const id of ['study-from', 'study-to', 'study-steps']) $(id).closest('.field').hidden = text;
    // The grid's second field: its own range (or the materials, when it is the choice).
    const and = s?.and ?? null;
    $('study-grid-line').hidden = !s;
    if (and) $('study-grid').checked = true;
    $('study-and').hidden = !and;
    if (and) {
      $('study-and-field').textContent = this.labelOf(and.field);
      $('study-and-range').hidden = TEXT_FIELDS.has(and.field);
      const unit = this.unitOf(and.field);
      for (const id of ['study-and-from-unit', 'study-and-to-unit']) $(id).textContent = unit;
      if (!TEXT_FIELDS.has(and.field)) {
        $('study-and-from').value = showNumber(and.from, and.field, this.state.unit);
        $('study-and-to').value = showNumber(and.to, and.field, this.state.unit);
        $('study-and-steps').value = String(and.steps);
      }
    }
    const choice = text ? s : and && TEXT_FIELDS.has(and.field) ? and : null;
    $('study-choices').hidden = !choice;
    if (choice) {
      const chosen = new Set(choice.values ?? []);
      $('study-choice-list').replaceChildren(...this.pipeMaterials().map(([id, name]) => h(
        'label',
        { class: 'check-line' },
        h('input', { type: 'checkbox', value: id, checked: chosen.has(id) }),
        ` ${name}`,
      )));
    }
    $('study-every-line').hidden = !(s && BEND_RADIUS.test(s.field)) || !!and;
    $('study-every').checked = !!s?.every;
    $('study-values-note').hidden = !s?.values || text;
    $('study-run').disabled = !s || this.running;
    $('study-stop').disabled = !this.running;
  }

  /** The set-up's numbers from the inputs (in stored units); a problem names the input. */
  readInputs() {
    const s = this.setup;
    const out = { from: null, to: null, steps: null, problems: [] };
    const chosen = () => {
      const values = [...$('study-choice-list').querySelectorAll('input:checked')].map((b) => b.value);
      if (values.length < 2) out.problems.push(`Choose at least two materials to compare (${values.length} chosen)`);
      return values;
    };
    const range = (field, ids, names) => {
      const r = {};
      ids.forEach((id, k) => {
        const key = ['from', 'to', 'steps'][k];
        const x = parseNumber($(id).value);
        if (Number.isNaN(x)) out.problems.push(`${names[k]} must be a number, got “${$(id).value}”`);
        else r[key] = key === 'steps' ? x : toStored(x, field, this.state.unit);
      });
      return r;
    };
    if (s.and) {
      out.and = TEXT_FIELDS.has(s.and.field)
        ? { values: chosen() }
        : range(s.and.field, ['study-and-from', 'study-and-to', 'study-and-steps'], ['From (second number)', 'To (second number)', 'Steps (second number)']);
    }
    if (TEXT_FIELDS.has(s.field)) {
      out.values = chosen();
      return out;
    }
    Object.assign(out, range(s.field, ['study-from', 'study-to', 'study-steps'], ['From', 'To', 'Steps']));
    return out;
  }

  /** This bend's radius points of the set-up (its values, or from/to/steps). */
  points() {
    const s = this.setup;
    if (s.values) return s.values;
    return Array.from({ length: s.steps + 1 }, (_, k) => (k === s.steps ? s.to : s.from + ((s.to - s.from) * k) / s.steps));
  }

  /** The study document (the JSON `tirtrace study` reads) of the design and this set-up. */
  document() {
    const s = this.setup;
    let vary = s.values ? { field: s.field, values: s.values } : { field: s.field, from: s.from, to: s.to, steps: s.steps };
    if (s.every && BEND_RADIUS.test(s.field)) {
      // Every bend together: each radius times the factor that takes this bend to each point.
      const r0 = this.valueAt(s.field);
      vary = { field: 'route[*].bend.radius_mm', factors: this.points().map((r) => r / r0) };
    }
    const axis = (a) => (a.values ? { field: a.field, values: a.values } : { field: a.field, from: a.from, to: a.to, steps: a.steps });
    let andVary = s.and ? axis(s.and) : null;
    // A grid draws numbers along its axis: a material list goes second.
    if (andVary && TEXT_FIELDS.has(s.field)) [vary, andVary] = [andVary, vary];
    const labels = [s, s.and].filter(Boolean).map((a) => this.labelOf(a.field)).join(' × ');
    const name = `${this.state.scenario.name || 'Untitled design'}: ${labels}`;
    return { version: 1, name, scenario: clone(this.state.scenario), vary, ...(andVary ? { and_vary: andVary } : {}) };
  }

  /** A core problem in the designer's words: field paths replaced by the form's labels. */
  inWords(problem) {
    const names = {
      'vary.from': 'From',
      'vary.to': 'To',
      'vary.steps': 'Steps',
      'vary.values': 'the values',
      'vary.factors': 'the factors (every bend)',
      'vary.field': `the varied number (${this.labelOf(this.setup?.field ?? '')})`,
      'and_vary.from': 'From (second number)',
      'and_vary.to': 'To (second number)',
      'and_vary.steps': 'Steps (second number)',
      'and_vary.values': 'the materials',
      and_vary: 'the second number',
    };
    // Whole words only: `vary.to` must not eat the start of `vary.total`.
    const swap = (text, from, to) => text.replace(new RegExp(`(?<![\\w.])${from.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(?![\\w.[])`, 'g'), to);
    let text = problem.message;
    for (const [path, name] of Object.entries(names)) text = swap(text, path, name);
    const field = problem.field.replace(/^scenario\./, '');
    if (!/^(and_)?vary/.test(problem.field)) {
      const label = this.labelOf(field);
      text = swap(text, `scenario.${field}`, field);
      if (label !== field) text = swap(text, field, `“${label}”`);
    }
    return text;
  }

  // ------------------------------------------------------------ running

  async ensurePool() {
    if (this.pool) return;
    const onUpdate = (u) => this.onUpdate(u);
    try {
      this.pool = new TracePool({ study: true, onUpdate, ...this.traceWorker });
      await this.pool.ready();
    } catch {
      // No workers here (e.g. a file:// page): trace on the page, more slowly.
      this.pool?.dispose();
      this.pool = new MainThreadPool({ Tracer: this.core.StudyTracer, onUpdate });
    }
  }

  async run() {
    const s = this.setup;
    if (!s || this.running) return;
    const read = this.readInputs();
    if (read.problems.length) {
      this.message(read.problems.join('; '), 'error');
      return;
    }
    if (TEXT_FIELDS.has(s.field)) {
      s.values = read.values;
    } else {
      const changed = read.from !== s.from || read.to !== s.to || read.steps !== s.steps;
      if (s.values && changed) delete s.values; // a list from a study file, now edited
      Object.assign(s, { from: read.from, to: read.to, steps: read.steps });
    }
    s.every = BEND_RADIUS.test(s.field) && $('study-every').checked && !s.and;
    if (s.and && read.and) Object.assign(s.and, read.and);
    this.onSaved();
    const text = JSON.stringify(this.document());
    this.tracedScenario = JSON.stringify(this.state.scenario);
    // Checked here first so that every problem can be shown by the field it names.
    let tracer;
    try {
      tracer = new this.core.StudyTracer(text);
    } catch (e) {
      const problems = e.problems ?? [{ field: 'study', message: messageOf(e) }];
      this.message(problems.map((p) => this.inWords(p)).join(' · '), 'error');
      return;
    }
    this.variedBend = tracer.varied_bend();
    tracer.free();
    if (s.every) {
      // Every bend scaled: the table and chart follow the picked bend's leak.
      const [, segment] = s.field.match(BEND_RADIUS);
      this.variedBend = { segment: Number(segment), leak_free_radius_mm: null };
      this.everyRadius = this.valueAt(s.field);
    }
    this.running = true;
    this.report = null;
    $('study-rows').replaceChildren();
    $('study-results').hidden = true;
    $('study-progress').textContent = '';
    this.showSetup();
    this.message('Tracing every point with the same rays…');
    $('study').dataset.state = 'running';
    await this.ensurePool();
    if (!this.running) return; // stopped while the workers were starting
    this.job = this.pool.start(text, { keepPaths: 0 });
    $('study').dataset.job = String(this.job);
  }

  stop() {
    if (!this.running) return;
    if (this.pool && this.job !== null) this.pool.cancel();
    else this.finish('Stopped.');
  }

  finish(text, kind = 'ok') {
    this.running = false;
    this.showSetup();
    this.message(text, kind);
    $('study').dataset.state = 'done';
  }

  onUpdate(u) {
    if (u.job !== this.job) return;
    if (u.report) {
      this.report = u.report;
      this.showReport();
    }
    const progress = `${u.batchesDone} of ${u.batchCount} batches of every point`;
    $('study-progress').textContent = u.batchCount ? progress : '';
    if (u.error) this.finish(`The study stopped: ${u.error}`, 'error');
    else if (u.cancelled && this.editedWhileRunning) {
      this.editedWhileRunning = false;
      this.finish(`Stopped: the design was edited while the study ran (the table shows ${progress} of the design as it was). Run again to study the design as it is now.`);
    } else if (u.cancelled) this.finish(`Stopped: the table shows ${progress}.`);
    else if (u.done) this.finish(`Done: ${u.raysTotal.toLocaleString('en')} rays per point, the same rays at every point.`);
  }

  // ------------------------------------------------------------ showing

  showReport() {
    const r = this.report;
    const bend = this.variedBend;
    const hasReceiver = r.points.some((p) => p.result?.receiver);
    const s = this.setup;
    const every = r.factor && s?.every;
    const shownField = every ? s.field : r.field;
    const unit = this.unitOf(shownField);
    const andField = r.and_field ?? null;
    const andUnit = andField ? this.unitOf(andField) : '';
    const head = [
      `${this.labelOf(shownField)}${unit ? ` (${unit})` : ''}${every ? ', every bend scaled alike' : ''}`,
      andField ? `${this.labelOf(andField)}${andUnit ? ` (${andUnit})` : ''}` : null,
      'Delivered (%)',
      'Change from the first (% points)',
      bend ? `Leaked in bend ${bend.segment + 1} (%)` : null,
      hasReceiver ? 'On the receiver (%)' : null,
      'Problems',
    ].filter((x) => x !== null);
    $('study-head').replaceChildren(h('tr', {}, head.map((t) => h('th', { scope: 'col', text: t }))));
    const cell = (share, key) => h('td', {
      class: 'num',
      dataset: share ? { key, share: String(share.share), ci95: String(share.ci95) } : { key },
      text: shareText(share),
    });
    const rows = r.points.map((p, i) => {
      const res = p.result;
      const problems = (p.problems ?? []).map((q) => this.inWords(q)).join(' · ');
      return h(
        'tr',
        { dataset: { index: String(i), value: String(p.value), refused: String(!res) } },
        h('th', {
          scope: 'row',
          class: 'num',
          text: every
            ? `${showNumber(p.value * this.everyRadius, s.field, this.state.unit)} (× ${round(p.value)})`
            : this.materialName(shownValue({ value: p.value }, r.field, this.state.unit)),
        }),
        andField ? h('td', {
          class: 'num',
          dataset: { key: 'and' },
          text: typeof p.and_value === 'string' ? this.materialName(p.and_value) : showNumber(p.and_value, andField, this.state.unit),
        }) : null,
        cell(res?.delivered, 'delivered'),
        // The reference point's change is zero by definition: say which point it is.
        i === r.reference && res ? Object.assign(cell(res.difference, 'difference'), { textContent: 'reference' }) : cell(res?.difference, 'difference'),
        bend ? cell(res?.segments_leaked[bend.segment], 'bend') : null,
        hasReceiver ? cell(res?.receiver, 'receiver') : null,
        h('td', { class: 'problem', text: problems || (res ? '' : 'waiting…') }),
      );
    });
    $('study-rows').replaceChildren(...rows);
    $('study-results').hidden = false;
    this.drawChart();
  }

  /** A library material's name for its id (other values as they are). */
  materialName(value) {
    return (this.editor.materials ?? []).find((m) => m.id === value)?.name ?? value;
  }

  drawChart() {
    if (!this.report || $('study-results').hidden) return;
    // Materials compared: the table says it all (a line through names would mean nothing).
    const text = typeof this.report.points[0]?.value === 'string';
    $(CHART_ID).hidden = text;
    if (text) return;
    const { ratio } = sizeCanvasForCore($(CHART_ID));
    const { unit } = this.state;
    try {
      this.core.draw_sweep_chart(CHART_ID, this.report, this.variedBend, ratio, unit);
      $(CHART_ID).dataset.unit = unit;
    } catch (e) {
      this.message(`The chart could not be drawn: ${messageOf(e)}`, 'error');
    }
  }

  message(text, kind = 'info') {
    const el = $('study-msg');
    el.textContent = text;
    el.dataset.kind = kind;
    el.hidden = !text;
  }

  // ------------------------------------------------------------ files

  baseName() {
    return fileNameFor(this.state.scenario).replace(/\.tirtrace\.json$/, '');
  }

  saveFile() {
    if (!this.setup) return;
    const text = `${JSON.stringify(this.document(), null, 2)}\n`;
    download(new Blob([text], { type: 'application/json' }), `${this.baseName()}.study.json`);
  }

  async openFile(file) {
    let doc;
    try {
      doc = JSON.parse(await file.text());
    } catch (e) {
      this.message(`${file.name} is not a study file (JSON): ${messageOf(e)}`, 'error');
      return;
    }
    const vary = doc?.vary;
    if (!doc?.scenario || typeof vary?.field !== 'string') {
      this.message(`${file.name} is not a study file: it needs a scenario and vary.field`, 'error');
      return;
    }
    try {
      this.openDesign(doc.scenario, `Opened the design of the study “${doc.name || file.name}”`);
    } catch (e) {
      this.message(`The design in ${file.name} cannot be used: ${messageOf(e)}`, 'error');
      return;
    }
    this.state.study = {
      field: vary.field,
      label: this.labelOf(vary.field),
      from: vary.from ?? vary.values?.[0] ?? null,
      to: vary.to ?? vary.values?.[vary.values.length - 1] ?? null,
      steps: vary.steps ?? (vary.values ? vary.values.length - 1 : DEFAULT_STEPS),
      ...(Array.isArray(vary.values) ? { values: vary.values } : {}),
    };
    const and = doc.and_vary;
    if (typeof and?.field === 'string') {
      this.state.study.and = {
        field: and.field,
        label: this.labelOf(and.field),
        ...(Array.isArray(and.values) ? { values: and.values } : { from: and.from, to: and.to, steps: and.steps }),
      };
    }
    this.onSaved();
    this.showSetup();
    this.message(`Study “${doc.name || file.name}” opened: press Run.`);
  }

  // ------------------------------------------------------------ events

  wire() {
    this.editor.root.addEventListener('click', (e) => {
      const b = e.target.closest('.vary-pick');
      if (b) this.pick(b.dataset.varyPath, b.dataset.varyLabel);
    });
    $('study-run').addEventListener('click', () => this.run());
    $('study-stop').addEventListener('click', () => this.stop());
    $('study-grid').addEventListener('change', () => {
      if (!this.setup || $('study-grid').checked) return;
      delete this.setup.and; // back to one number
      this.onSaved();
      this.showSetup();
    });
    $('study-every').addEventListener('change', () => {
      if (!this.setup) return;
      this.setup.every = $('study-every').checked;
      this.onSaved();
    });
    $('study-csv').addEventListener('click', () => {
      if (!this.report) return;
      const csv = this.core.sweep_report_csv(this.report);
      download(new Blob([csv], { type: 'text/csv' }), `${this.baseName()}-study.csv`);
    });
    $('study-png').addEventListener('click', () => {
      $(CHART_ID).toBlob((blob) => blob && download(blob, `${this.baseName()}-study.png`));
    });
    $('study-save').addEventListener('click', () => this.saveFile());
    $('study-open').addEventListener('click', () => $('study-file').click());
    $('study-file').addEventListener('change', async (e) => {
      const [file] = e.target.files;
      e.target.value = '';
      if (file) await this.openFile(file);
    });
    window.addEventListener('resize', () => this.drawChart());
    // The length unit shown changed (main.js keeps it in the state): the set-up's ranges (what
    // is typed there, converted), the table and the chart show the varied lengths in it.
    for (const r of document.querySelectorAll('input[name="unit"]')) {
      r.addEventListener('change', () => {
        // main.js's own listener, which stores the new unit, runs after this one.
        const before = this.state.unit;
        const s = this.setup;
        const typed = [
          ['study-from', s?.field, s?.values ? s.values[0] : s?.from],
          ['study-to', s?.field, s?.values ? s.values[s.values.length - 1] : s?.to],
          ['study-and-from', s?.and?.field, s?.and?.from],
          ['study-and-to', s?.and?.field, s?.and?.to],
        ].filter(([, path]) => path).map(([id, path, stored]) => [id, path, stored, $(id).value]);
        setTimeout(() => {
          this.showSetup();
          for (const [id, path, stored, text] of typed) carryTyped($(id), text, stored, path, before, this.state.unit);
          if (this.report) this.showReport();
        });
      });
    }
  }

  /** The design was edited: a table of an earlier design says so (the numbers stay readable). */
  designChanged() {
    if (this.running) {
      // A study belongs to the design it started from: an edit stops it.
      this.editedWhileRunning = true;
      this.stop();
      return;
    }
    if (!this.report) return;
    const traced = this.tracedScenario;
    if (traced === JSON.stringify(this.state.scenario)) return;
    this.message('The design has changed since this study ran: Run again to see the study of the design as it is now.');
  }

  /** The state was replaced (a new design): follow it. */
  setState(state) {
    this.state = state;
    this.showSetup();
  }
}

/** A prefilled bound: 3 significant figures, so the steps land on readable values. */
function round(x) {
  return Number(x.toPrecision(3));
}
