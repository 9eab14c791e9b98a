// The study panel's second mode, "Find the limit": the smallest bend radius at which that bend
// leaks at most X % of the light entering it, or the largest LED offset, gap or tilt keeping the
// delivered light within X % of the design's own. The number is the one picked with ⇆ (as for a
// sweep). The core runs the search step by step (StudyFinder): it names the next value, each
// value is one job of a worker pool (js/trace/pool.js with find: true: FindValueTracer in the
// workers, its batches merged in batch order by the merging worker; on the page itself where no
// worker can start), and the merged batches are recorded, so the answer is bit for bit that of
// `tirtrace study` on the same study file. This module only wires events and writes words; every
// number comes from the core.

import { $, h } from '../dom.js';
import { sizeCanvasForCore } from '../drawing.js';
import { messageOf } from '../errors.js';
import { formatHalfWidth, formatShare } from '../format.js';
import { parseNumber } from '../numbers.js';
import { MainThreadPool } from '../trace/main-thread-pool.js';
import { TracePool } from '../trace/pool.js';
import { carryTyped, clone, download, fileNameFor, isLength, MM_PER_INCH, showNumber, toStored } from './scenario.js';

/** Evaluations a search makes at most (the core's limit, for the progress line). */
const MOST_EVALUATIONS = 40;
/** Allowed loss when the designer has not changed it, %. */
export const DEFAULT_PERCENT = 1;

const shareText = (s) => (s ? `${formatShare(s.share, s.ci95)} ± ${formatHalfWidth(s.ci95)}` : '—');

/** The route index of a bend radius path (`route[1].bend.radius_mm` → 1), else null. */
export function bendOf(path) {
  const m = /^route\[(\d+)\]\.bend\.radius_mm$/.exec(path ?? '');
  return m ? Number(m[1]) : null;
}

export class FindPanel {
  /** study: the study panel (field labels, units, the picked field); core: the loaded core. */
  constructor({ core, state, study, onSaved }) {
    this.core = core;
    this.state = state;
    this.study = study;
    this.onSaved = onSaved;
    this.running = false;
    this.stopped = false;
    this.report = null;
    /** The last finished search (the core's StudyFinder), kept to redraw its chart. */
    this.finder = null;
    /** The pool tracing the values (made at the first run) and its job: { id, resolve }. */
    this.pool = null;
    this.job = null;
    /** Answers of the bend table's Find buttons: segment → { design, text, report }. */
    this.bendAnswers = new Map();
    this.build();
    this.setMode(this.state.findMode ?? 'sweep');
    this.watchBendTable();
  }

  // ------------------------------------------------------------ the bend table

  /**
   * The designer's table of bends (report-view.js) gets, per bend, a "Radius for ≤ X % leak"
   * cell with a Find button that runs this search for that bend; added here whenever the table
   * is redrawn, so the table's own code stays as it is.
   */
  watchBendTable() {
    const body = $('bend-rows');
    if (!body) return;
    const decorate = () => {
      const design = JSON.stringify(this.state.scenario);
      $('bend-find-head').textContent = `Radius for ≤ ${this.state.find?.percent ?? DEFAULT_PERCENT} % leak`;
      for (const tr of body.querySelectorAll('tr[data-segment]')) {
        if (tr.querySelector('td.bend-find')) continue;
        const segment = Number(tr.dataset.segment);
        const kept = this.bendAnswers.get(segment);
        const answer = kept?.design === design ? this.bendAnswerText(kept.report, segment) : '';
        const button = h('button', { type: 'button', class: 'bend-find-run', dataset: { segment: String(segment) } }, 'Find');
        button.addEventListener('click', () => this.findForBend(segment));
        tr.append(h('td', { class: 'bend-find' }, button, h('span', { class: 'bend-find-answer', text: answer })));
      }
    };
    new MutationObserver(decorate).observe(body, { childList: true });
    decorate();
  }

  /** Run the search for the bend at route index `segment` (the allowed loss as set, else 1 %). */
  async findForBend(segment) {
    if (this.running) return;
    const path = `route[${segment}].bend.radius_mm`;
    const button = this.study.editor.root.querySelector(`[data-vary-path="${CSS.escape(path)}"]`);
    const label = button?.dataset.varyLabel ?? path;
    const percent = this.state.find?.percent ?? DEFAULT_PERCENT;
    this.state.study = { ...(this.state.study ?? { steps: 4 }), field: path, label };
    delete this.state.study.values;
    this.state.find = null;
    this.setup();
    this.state.find.percent = percent;
    this.onSaved();
    this.study.showSetup();
    this.setMode('find');
    const cell = () => $('bend-rows').querySelector(`tr[data-segment="${segment}"] .bend-find-answer`);
    if (cell()) cell().textContent = 'Searching…';
    const design = JSON.stringify(this.state.scenario);
    this.onDone = (r) => {
      this.onDone = null;
      if (r) this.bendAnswers.set(segment, { design, report: r });
      if (cell()) cell().textContent = this.bendAnswerText(r, segment);
    };
    await this.run(true);
  }

  /** A bend's search report `r` (or null) in the bend table's words, lengths in the unit shown. */
  bendAnswerText(r, segment) {
    if (!r) return '';
    if (r.verdict !== 'found') {
      return { holds_everywhere: 'Holds over the whole range', holds_nowhere: 'Nowhere in the range', not_monotone: 'Not monotone: narrow the range' }[r.verdict] ?? 'See the study panel';
    }
    const n = (x) => sig3Shown(x, `route[${segment}].bend.radius_mm`, this.state.unit);
    const low = r.interval?.low == null ? `≤ ${n(r.from)}` : n(r.interval.low);
    const high = r.interval?.high == null ? `≥ ${n(r.to)}` : n(r.interval.high);
    return `${n(r.answer)} ${this.state.unit} centre line (95 %: ${low} to ${high})`;
  }

  // ------------------------------------------------------------ set-up

  build() {
    const field = (id, label, unitId) => h('div', { class: 'field' },
      h('label', { for: id }, label, unitId ? h('span', { class: 'unit-label', id: unitId }) : null),
      h('input', { id, type: 'text', inputmode: 'decimal', autocomplete: 'off', spellcheck: 'false' }));
    const mode = h('div', { class: 'find-mode', role: 'radiogroup', 'aria-label': 'What to do with the number' },
      ...[['sweep', 'Sweep'], ['find', 'Find the limit']].map(([value, text]) => h('label', {},
        h('input', { type: 'radio', name: 'study-mode', value }), ` ${text}`)));
    this.block = h('div', { id: 'find-setup', hidden: true },
      h('p', { class: 'hint', id: 'find-what' }),
      h('div', { class: 'study-range' },
        field('find-from', 'From ', 'find-from-unit'),
        field('find-to', 'To ', 'find-to-unit'),
        field('find-percent', 'Allowed loss (%)'),
        h('div', { class: 'study-buttons' },
          h('button', { type: 'button', id: 'find-run', class: 'primary' }, 'Run'),
          h('button', { type: 'button', id: 'find-stop', disabled: true }, 'Stop'))),
      h('label', { id: 'find-every-line', class: 'check-line', hidden: true },
        h('input', { type: 'checkbox', id: 'find-every' }),
        ' Every bend together: each bend’s radius times the same factor (the range is this bend’s radius; the leak counted is this bend’s)'),
      h('p', { id: 'find-msg', class: 'study-msg', role: 'status', 'aria-live': 'polite', hidden: true }),
      h('p', { id: 'find-progress', class: 'progress-text' }),
      h('p', { id: 'find-answer', class: 'find-answer', hidden: true }),
      h('canvas', { id: 'find-chart', hidden: true, role: 'img', 'aria-label': 'Chart of the traced leak (or delivered light) at each value searched, with the allowed loss, the answer and its 95 % interval' }),
      h('div', { class: 'table-wrap', id: 'find-results', hidden: true },
        h('table', { class: 'study-table' }, h('thead', { id: 'find-head' }), h('tbody', { id: 'find-rows' }))),
      h('div', { class: 'study-files' },
        h('button', { type: 'button', id: 'find-csv' }, 'Table as CSV'),
        h('button', { type: 'button', id: 'find-png' }, 'Chart as PNG'),
        h('button', { type: 'button', id: 'find-open' }, 'Open search file…'),
        h('input', { type: 'file', id: 'find-file', accept: '.json,application/json', hidden: true }),
        h('button', { type: 'button', id: 'find-save' }, 'Save search file')));
    const card = $('study');
    card.querySelector('.study-field-line').before(mode);
    card.querySelector('.study-files').after(this.block);
    for (const r of mode.querySelectorAll('input')) r.addEventListener('change', () => this.setMode(r.value));
    $('find-run').addEventListener('click', () => this.run());
    $('find-every').addEventListener('change', () => {
      const f = this.setup();
      if (!f) return;
      f.every = $('find-every').checked;
      this.onSaved();
    });
    $('find-stop').addEventListener('click', () => this.stop('Stopped.'));
    $('find-save').addEventListener('click', () => this.saveFile());
    $('find-open').addEventListener('click', () => $('find-file').click());
    $('find-file').addEventListener('change', async (e) => {
      const [file] = e.target.files;
      e.target.value = '';
      if (file) await this.openFile(file);
    });
    $('find-png').addEventListener('click', () => {
      if ($('find-chart').hidden) return;
      $('find-chart').toBlob((blob) => blob && download(blob, `${this.baseName()}-search.png`));
    });
    $('find-csv').addEventListener('click', () => {
      if (!this.csv) return;
      download(new Blob([this.csv], { type: 'text/csv' }), `${this.baseName()}-search.csv`);
    });
    window.addEventListener('resize', () => this.drawChart());
    // The length unit shown changed (main.js keeps it in the state): the range (what is typed
    // there, converted), the answer, the table and the chart show the searched length in it.
    for (const r of document.querySelectorAll('input[name="unit"]')) {
      r.addEventListener('change', () => {
        // main.js's own listener, which stores the new unit, runs after this one.
        const before = this.state.unit;
        const f = this.mode === 'find' ? this.state.find : null;
        const typed = f ? [['find-from', f.from], ['find-to', f.to]].map(([id, stored]) => [id, stored, $(id).value]) : [];
        setTimeout(() => {
          this.showSetup(false);
          for (const [id, stored, text] of typed) carryTyped($(id), text, stored, f.field, before, this.state.unit);
          if (!this.report) return;
          this.showReport();
          this.drawChart();
        });
      });
    }
    // A number picked with ⇆ (the study panel handles the click first): follow it.
    this.study.editor.root.addEventListener('click', (e) => {
      if (e.target.closest('.vary-pick')) queueMicrotask(() => this.showSetup(true));
    });
  }

  /** 'sweep' or 'find': which controls the panel shows. */
  setMode(mode) {
    this.mode = mode === 'find' ? 'find' : 'sweep';
    this.state.findMode = this.mode;
    for (const r of document.querySelectorAll('input[name="study-mode"]')) r.checked = r.value === this.mode;
    const card = $('study');
    card.dataset.mode = this.mode;
    const sweepOnly = [card.querySelector('.study-range'), $('study-progress'), $('study-results'), card.querySelector('.study-files')];
    for (const el of sweepOnly) el.hidden = this.mode === 'find' || (el.id === 'study-results' && !this.study.report);
    if (this.mode === 'find') $('study-values-note').hidden = true;
    this.block.hidden = this.mode !== 'find';
    this.showSetup(false);
  }

  get field() {
    return this.state.study?.field ?? null;
  }

  /** The search set-up for the picked field, prefilled when it is new. */
  setup(fresh = false) {
    const path = this.field;
    if (!path) return null;
    let f = this.state.find;
    if (!f || f.field !== path || fresh) {
      const value = Number(path.replace(/\[(\d+)\]/g, '.$1').split('.').reduce((v, k) => v?.[k], this.state.scenario));
      const x = Number.isFinite(value) ? value : 1;
      const bend = bendOf(path);
      f = bend !== null
        ? { field: path, smallest: true, from: round(Math.max(x * 0.4, 0.55 * sizeAcross(this.state.scenario))), to: round(Math.max(x * 3, 30)), percent: f?.percent ?? DEFAULT_PERCENT }
        : { field: path, smallest: false, from: round(x), to: round(x === 0 ? 1 : Math.abs(x) * 4), percent: f?.percent ?? 5 };
      this.state.find = f;
    }
    return f;
  }

  showSetup(fresh) {
    if (this.mode !== 'find') return;
    const f = this.setup(fresh && !this.running);
    const label = f ? this.study.labelOf(f.field) : '';
    $('find-run').disabled = !f || this.running;
    $('find-stop').disabled = !this.running;
    if (!f) {
      $('find-what').textContent = 'Press ⇆ beside a number in “Describe”: a bend’s radius (smallest that leaks little) or the LED’s offset, gap or tilt (largest that keeps the light).';
      return;
    }
    const bend = bendOf(f.field);
    $('find-what').textContent = bend !== null
      ? `The smallest “${label}” at which at most the allowed share of the light entering bend ${bend + 1} leaks from it.`
      : `The largest “${label}” at which the delivered light stays within the allowed loss of the design’s own.`;
    const unit = this.study.unitOf(f.field);
    for (const id of ['find-from-unit', 'find-to-unit']) $(id).textContent = unit;
    $('find-from').value = showNumber(f.from, f.field, this.state.unit);
    $('find-to').value = showNumber(f.to, f.field, this.state.unit);
    $('find-percent').value = String(f.percent);
    $('find-every-line').hidden = bend === null;
    $('find-every').checked = bend !== null && !!f.every;
  }

  /** The design's value at `path` now (a bend's centre-line radius, mm). */
  radiusNow(path) {
    return Number(path.replace(/\[(\d+)\]/g, '.$1').split('.').reduce((v, k) => v?.[k], this.state.scenario));
  }

  /** For a report over a factor on every bend: the picked bend's path and radius, else null. */
  scaleOf(r) {
    if (!r.field.includes('[*]')) return null;
    const bend = r.criterion.bend_leak_at_most?.bend;
    if (bend === undefined) return null;
    const path = `route[${bend}].bend.radius_mm`;
    return { path, r0: this.tracedRadius ?? this.radiusNow(path) };
  }

  /** The study document with this search (the JSON `tirtrace study` reads). */
  document() {
    const f = this.setup();
    const bend = bendOf(f.field);
    let find = {
      [f.smallest ? 'smallest' : 'largest']: f.field,
      from: f.from,
      to: f.to,
      ...(bend !== null ? { bend_leak_at_most_percent: f.percent } : { delivered_loss_at_most_percent: f.percent }),
    };
    if (bend !== null && f.every) {
      // Every bend together: a factor on every radius, the range this bend's radius over its own,
      // the leak counted this bend's.
      const r0 = this.radiusNow(f.field);
      find = { smallest: 'route[*].bend.radius_mm', from: f.from / r0, to: f.to / r0, bend, bend_leak_at_most_percent: f.percent };
    }
    const name = `${this.state.scenario.name || 'Untitled design'}: ${f.smallest ? 'smallest' : 'largest'} ${this.study.labelOf(f.field)}`;
    return { version: 1, name, scenario: clone(this.state.scenario), find };
  }

  /** A core problem in the form's words (From, To, Allowed loss). */
  inWords(problem) {
    const names = {
      'find.from': 'From',
      'find.to': 'To',
      'find.bend_leak_at_most_percent': 'Allowed loss (%)',
      'find.delivered_loss_at_most_percent': 'Allowed loss (%)',
    };
    let text = problem.message;
    for (const [path, name] of Object.entries(names)) text = text.split(path).join(name);
    if (problem.field === 'find' || problem.field.startsWith('scenario')) return text.split(this.field).join(this.study.labelOf(this.field));
    return text;
  }

  // ------------------------------------------------------------ running

  async run(fromBendTable = null) {
    const f = this.setup();
    if (!f || this.running) return;
    if (!fromBendTable) {
      const problems = [];
      const read = {};
      for (const [key, id, label] of [['from', 'find-from', 'From'], ['to', 'find-to', 'To'], ['percent', 'find-percent', 'Allowed loss (%)']]) {
        const x = parseNumber($(id).value);
        if (Number.isNaN(x)) problems.push(`${label} must be a number, got “${$(id).value}”`);
        else read[key] = key === 'percent' ? x : toStored(x, f.field, this.state.unit);
      }
      if (problems.length) {
        this.message(problems.join('; '), 'error');
        return;
      }
      Object.assign(f, read);
      this.onSaved();
    }
    if (fromBendTable) f.every = false; // the bend table's Find is for that bend alone
    this.tracedRadius = bendOf(f.field) !== null ? this.radiusNow(f.field) : null;
    const text = JSON.stringify(this.document());
    let finder;
    try {
      finder = new this.core.StudyFinder(text);
    } catch (e) {
      const problems = e.problems ?? [{ field: 'find', message: messageOf(e) }];
      this.message(problems.map((p) => this.inWords(p)).join(' · '), 'error');
      this.onDone?.(null);
      return;
    }
    this.running = true;
    this.stopped = false;
    this.report = null;
    this.csv = null;
    this.finder?.free();
    this.finder = null;
    $('find-answer').hidden = true;
    $('find-results').hidden = true;
    $('find-chart').hidden = true;
    $('study').dataset.findState = 'running';
    this.showSetup(false);
    this.message('Searching: every value is traced with the same rays…');
    let asked = 0;
    try {
      await this.ensurePool();
      if (this.stopped) return; // stopped while the workers were starting
      for (let x = finder.next_value(); x !== undefined && x !== null; x = finder.next_value()) {
        asked += 1;
        $('find-progress').textContent = `Evaluation ${asked} (at most ${MOST_EVALUATIONS}): ${this.study.labelOf(f.field)} = ${showNumber(x, f.field, this.state.unit)} ${this.study.unitOf(f.field)}`;
        const u = await this.traceValue(text, x);
        if (this.stopped || u.cancelled) return;
        if (u.error) throw new Error(u.error);
        finder.record_merged(x, u.report);
      }
      this.report = finder.report();
      this.csv = finder.csv();
      $('find-progress').textContent = '';
      this.showReport();
      // Kept to redraw the chart (in another unit, at another size) until the next search.
      this.finder = finder;
      finder = null;
      $('find-chart').hidden = false;
      this.paintChart();
      this.finish(`Done: ${asked} values traced, ${this.report.rays.toLocaleString('en')} rays each, the same rays at every value.`);
      this.onDone?.(this.report);
    } catch (e) {
      this.finish(`The search stopped: ${messageOf(e)}`, 'error');
    } finally {
      finder?.free();
      if (this.stopped) this.onDone?.(null);
    }
  }

  /**
   * Draw the last finished search's chart (the core draws it, a searched length in the unit
   * shown; the canvas's data-unit says which); nothing when there is none. Throws what the core
   * throws.
   */
  paintChart() {
    if (!this.finder || $('find-chart').hidden) return;
    const { ratio } = sizeCanvasForCore($('find-chart'));
    const { unit } = this.state;
    this.finder.draw_chart('find-chart', ratio, unit);
    $('find-chart').dataset.unit = unit;
  }

  /** Draw the chart again (another unit, another size); a failure is said in the panel. */
  drawChart() {
    try {
      this.paintChart();
    } catch (e) {
      this.message(`The chart could not be drawn: ${messageOf(e)}`, 'error');
    }
  }

  stop(text) {
    if (!this.running) return;
    this.stopped = true;
    this.finish(text);
    if (this.job) this.pool.cancel();
  }

  /** The pool that traces the values: workers, or the page itself where none can start. */
  async ensurePool() {
    if (this.pool) return;
    const onUpdate = (u) => this.onUpdate(u);
    try {
      this.pool = new TracePool({ find: true, onUpdate, ...this.study.traceWorker });
      await this.pool.ready();
      $('study').dataset.findTracer = 'workers';
    } catch {
      // No workers here (e.g. a file:// page): trace on the page, more slowly.
      this.pool?.dispose();
      this.pool = new MainThreadPool({ Tracer: this.core.FindValueTracer, find: true, onUpdate });
      $('study').dataset.findTracer = 'page';
    }
  }

  /** Trace the search's value x as one pool job: resolves with the job's last update. */
  traceValue(text, x) {
    return new Promise((resolve) => {
      this.job = { id: this.pool.start(text, { x, keepPaths: 0 }), resolve };
    });
  }

  /** A pool update: the job's last one (done, cancelled or failed) ends the value's wait. */
  onUpdate(u) {
    if (!this.job || u.job !== this.job.id || !u.done) return;
    const { resolve } = this.job;
    this.job = null;
    resolve(u);
  }

  finish(text, kind = 'ok') {
    this.running = false;
    $('study').dataset.findState = 'done';
    this.message(text, kind);
    this.showSetup(false);
  }

  /** The design was edited: a running search is stopped (its values no longer describe it). */
  designChanged() {
    if (this.running) this.stop('The design changed, so the search was stopped: press Run to search the design as it is now.');
  }

  setState(state) {
    this.stop('A new design was opened, so the search was stopped.');
    this.state = state;
    this.setMode(state.findMode ?? 'sweep');
  }

  // ------------------------------------------------------------ showing

  /** The answer in the designer's words. */
  answerText(r) {
    const scale = this.scaleOf(r);
    const field = scale ? scale.path : r.field;
    const unit = this.study.unitOf(field);
    const n = (x) => {
      const shown = `${sig3Shown(scale ? x * scale.r0 : x, field, this.state.unit)}${unit ? ` ${unit}` : ''}`;
      return scale ? `${shown} (× ${Number(x.toPrecision(3))})` : shown;
    };
    const pct = r.criterion.bend_leak_at_most ? r.criterion.bend_leak_at_most.fraction * 100 : r.criterion.delivered_loss_at_most.fraction * 100;
    const bend = r.criterion.bend_leak_at_most?.bend;
    const label = this.study.labelOf(r.field);
    const what = bend !== undefined
      ? `${r.direction === 'smallest' ? 'Smallest' : 'Largest'} ${scale ? `centre-line radius of bend ${bend + 1}, every bend scaled alike,` : bendOf(r.field) !== null ? 'centre-line radius' : `“${label}”`} for ≤ ${pct} % leak in bend ${bend + 1}`
      : `Largest “${label}” keeping delivered within ${pct} % of the design’s own`;
    switch (r.verdict) {
      case 'found': {
        const low = r.interval?.low == null ? `${n(r.from)} or below` : n(r.interval.low);
        const high = r.interval?.high == null ? `${n(r.to)} or above` : n(r.interval.high);
        let text = `${what}: ${n(r.answer)} (95 %: ${low} to ${high})`;
        if (r.bend?.answer_inner_radius_mm != null) text += ` — inner radius ${n(r.bend.answer_inner_radius_mm)}`;
        if (r.bend) {
          text += r.bend.leak_free_centre_radius_mm == null
            ? '; closed form: no radius is leak-free for every ray'
            : `; closed form, leak-free for every ray: ${n(r.bend.leak_free_centre_radius_mm)}`;
        }
        return text;
      }
      case 'holds_everywhere': return `${what}: it holds over the whole range ${n(r.from)} to ${n(r.to)}.`;
      case 'holds_nowhere': return `${what}: nowhere in the range ${n(r.from)} to ${n(r.to)}.`;
      case 'not_monotone': return `${what}: not monotone: narrow the range (the criterion changes more than once, or the wrong way, between ${n(r.from)} and ${n(r.to)}).`;
      default: return `${what}: the design has problems at some values of the range: ${r.evaluations.flatMap((e) => e.problems ?? []).map((p) => this.inWords(p))[0] ?? ''}`;
    }
  }

  showReport() {
    const r = this.report;
    const answer = $('find-answer');
    answer.textContent = this.answerText(r);
    answer.dataset.verdict = r.verdict;
    answer.dataset.answer = String(r.answer ?? '');
    answer.dataset.low = String(r.interval?.low ?? '');
    answer.dataset.high = String(r.interval?.high ?? '');
    answer.hidden = false;
    const scale = this.scaleOf(r);
    const field = scale ? scale.path : r.field;
    const unit = this.study.unitOf(field);
    const bend = r.criterion.bend_leak_at_most !== undefined;
    $('find-head').replaceChildren(h('tr', {}, [
      `${this.study.labelOf(field)}${unit ? ` (${unit})` : ''}${scale ? ', every bend scaled alike' : ''}`,
      bend ? 'Leak of the light entering the bend (%)' : 'Delivered (%)',
      'Meets the allowed loss',
      'Problems',
    ].map((t) => h('th', { scope: 'col', text: t }))));
    $('find-rows').replaceChildren(...r.evaluations.map((e) => h('tr', { dataset: { value: String(e.value) } },
      h('th', { scope: 'row', class: 'num', text: scale ? `${showNumber(Number((e.value * scale.r0).toPrecision(6)), field, this.state.unit)} (× ${Number(e.value.toPrecision(3))})` : showNumber(Number(e.value.toPrecision(6)), r.field, this.state.unit) }),
      h('td', { class: 'num', text: bend ? (e.bend_leak_fraction == null ? '—' : formatShare(e.bend_leak_fraction, 1e-4)) : shareText(e.delivered) }),
      h('td', { text: e.holds === undefined ? '—' : e.holds ? 'yes' : 'no' }),
      h('td', { class: 'problem', text: (e.problems ?? []).map((p) => this.inWords(p)).join(' · ') }))));
    $('find-results').hidden = false;
  }

  message(text, kind = 'info') {
    const el = $('find-msg');
    el.textContent = text;
    el.dataset.kind = kind;
    el.hidden = !text;
  }

  // ------------------------------------------------------------ files

  baseName() {
    return fileNameFor(this.state.scenario).replace(/\.tirtrace\.json$/, '');
  }

  saveFile() {
    if (!this.setup()) return;
    const text = `${JSON.stringify(this.document(), null, 2)}\n`;
    download(new Blob([text], { type: 'application/json' }), `${this.baseName()}.search.json`);
  }

  async openFile(file) {
    let doc;
    try {
      doc = JSON.parse(await file.text());
    } catch (e) {
      this.message(`${file.name} is not a study file (JSON): ${messageOf(e)}`, 'error');
      return;
    }
    const find = doc?.find;
    const path = find?.smallest ?? find?.largest;
    if (!doc?.scenario || typeof path !== 'string') {
      this.message(`${file.name} is not a search file: it needs a scenario and find.smallest or find.largest`, 'error');
      return;
    }
    try {
      this.study.openDesign(doc.scenario, `Opened the design of the search “${doc.name || file.name}”`);
    } catch (e) {
      this.message(`The design in ${file.name} cannot be used: ${messageOf(e)}`, 'error');
      return;
    }
    // Every bend together (a factor on route[*]): shown as the counted bend's radius.
    const every = path.includes('[*]') && Number.isInteger(find.bend);
    const field = every ? `route[${find.bend}].bend.radius_mm` : path;
    const r0 = every ? this.radiusNow(field) : 1;
    this.state.study = { ...(this.state.study ?? { steps: 4 }), field, label: this.study.labelOf(field) };
    this.state.find = {
      field,
      smallest: typeof find.smallest === 'string',
      from: find.from * r0,
      to: find.to * r0,
      percent: find.bend_leak_at_most_percent ?? find.delivered_loss_at_most_percent ?? DEFAULT_PERCENT,
      ...(every ? { every: true } : {}),
    };
    this.onSaved();
    this.study.showSetup();
    this.setMode('find');
    this.message(`Search “${doc.name || file.name}” opened: press Run.`);
  }
}

/** The guide's largest section size, mm (a bend's centre-line radius must exceed half of it). */
function sizeAcross(scenario) {
  const s = scenario?.guide?.section ?? {};
  const size = s.round ? s.round.diameter_mm : Math.max(s.rectangular?.width_mm ?? 0, s.rectangular?.height_mm ?? 0);
  return Number.isFinite(size) ? size : 0;
}

/**
 * A value of the field at `path` (stored units) in `unit`, to three significant figures in that
 * unit: 24.437 mm reads 24.4 mm or 0.962 in (not 24.4 mm converted, 0.9606 in).
 */
function sig3Shown(x, path, unit) {
  const shown = unit === 'in' && isLength(path) ? x / MM_PER_INCH : x;
  return String(Number(shown.toPrecision(3)));
}

/** A prefilled bound: 3 significant figures. */
function round(x) {
  return Number(x.toPrecision(3));
}

