// Wiring of the design page: load the core, restore the design, and on every edit check it,
// redraw the route, and trace it in the workers, showing each sharper answer as it arrives.
// All physics and geometry come from the core; this file passes data along.

import { loadCore, registerServiceWorker } from '../core.js';
import { $, h, setStatus } from '../dom.js';
import { sizeCanvasForCore } from '../drawing.js';
import { messageOf, withFullStop } from '../errors.js';
import { formatCount, formatIndex } from '../format.js';
import { store } from '../storage.js';
import { MainThreadPool } from '../trace/main-thread-pool.js';
import { TracePool } from '../trace/pool.js';
import { Editor } from './editor.js';
import { FATES, RouteView, heatColour, heatGradientCss } from './route-view.js';
import { showLeakLine } from './leak-line.js';
import { clearReport, linkBendsToQuickLook, setBudgetMechanisms, setLengthUnit, showBends, showExitMapTable, showFarFieldTable, showFigures, showProgress, showReport } from './report-view.js';
import {
  LINK_WARN_CHARS, MAX_DESIGN_BYTES, STARTER, clone, download, fileNameFor, freshState, loadState, saveState,
  scenarioFromFragment, shareLink, tooLargeMessage,
} from './scenario.js';
import { demoList, demoText, traceWorker } from './sources.js';
import { FindPanel } from './find.js';
import { StudyPanel } from './study.js';
import { TolerancePanel } from './tolerance.js';

const UNREADABLE_KEY = 'tirtrace.design.unreadable.v1';
const KEEP_PATHS = 90;

function toolbarMessage(text, { kind = 'info', action } = {}) {
  const el = $('toolbar-msg');
  el.replaceChildren(document.createTextNode(text));
  if (action) {
    const run = () => {
      el.hidden = true;
      action.run();
    };
    el.append(' ', h('button', { type: 'button', text: action.label, onclick: run }));
  }
  el.dataset.kind = kind;
  el.hidden = !text;
}

/**
 * Put text on the clipboard; `text` may be a promise of it. Call it within the click (before any
 * await): where the browser can, the copy is asked for at once with the text to follow
 * (ClipboardItem with a promise), so that a browser which allows copying only during the click
 * (WebKit) allows it although the text takes a moment to make. Rejects when refused.
 */
function copyText(text) {
  const clip = navigator.clipboard;
  if (!clip) return Promise.reject(new Error('no clipboard here'));
  if (typeof ClipboardItem === 'function' && typeof clip.write === 'function') {
    const blob = Promise.resolve(text).then((t) => new Blob([t], { type: 'text/plain' }));
    return clip.write([new ClipboardItem({ 'text/plain': blob })]);
  }
  return Promise.resolve(text).then((t) => clip.writeText(t));
}

/** Offer the design as it is on the page as a file. */
function saveDesignFile() {
  const s = page.state.scenario;
  download(new Blob([`${JSON.stringify(s, null, 2)}\n`], { type: 'application/json' }), fileNameFor(s));
}

/**
 * Keep the page state in this browser. When storage refuses (full, or switched off) say so on a
 * line of its own under the toolbar (other messages, such as the way back to the previous design,
 * stay), and offer the design as a file; never claim it is kept. The note goes once storage takes
 * the design again.
 */
function keep(state) {
  const kept = saveState(state);
  const note = $('storage-msg');
  if (kept) {
    note.hidden = true;
    return true;
  }
  if (note.hidden) {
    note.replaceChildren(
      'Your design could not be kept in this browser (its storage is full or switched off): it will be lost when this page closes.',
      ' ',
      h('button', { type: 'button', text: 'Save it as a file', onclick: () => saveDesignFile() }),
    );
    note.hidden = false;
  }
  return false;
}

/** The core's exports (loadCore), once it runs. */
let core = null;

/**
 * A kept scenario as the core reads it: its defaults filled in, so the form has a value for
 * every field. One the core cannot read at all (a whole-number field holding 1.5, say, kept from
 * the last visit) is taken as it is: the form shows what it can and the check names the field;
 * one the form cannot show either is set aside (see start()).
 */
function asRead(scenario) {
  try {
    return core.scenario_as_read(JSON.stringify(scenario));
  } catch {
    return clone(scenario);
  }
}

const page = {
  state: null,
  editor: null,
  view: null,
  pool: null,
  figures: null,
  report: null,
  /** The scenario the shown report belongs to. */
  reportScenario: null,
  /** The last scenario without problems (its results are shown, stale, while an entry needs fixing). */
  lastComplete: null,
  /** The trace running or last run: { id, stale } (stale: of the last complete design). */
  job: null,
  timer: 0,
};

const needFixing = (n) => `${n} ${n === 1 ? 'entry needs' : 'entries need'} fixing`;

// ------------------------------------------------------------ checking and tracing

/** Problems with the design as typed: text that is not a number, then the core's checks. */
function problemsOf(state) {
  const typed = page.editor.draftProblems();
  if (typed.length) return typed;
  const res = core.check_scenario(JSON.stringify(state.scenario));
  return res.ok ? [] : res.problems;
}

function showLoose(problems) {
  const box = $('form-problems');
  box.replaceChildren(...problems.map((p) => h('p', { text: p.message })));
  box.hidden = problems.length === 0;
}

function update() {
  const { state } = page;
  page.study?.designChanged();
  page.find?.designChanged();
  page.tolerances?.designChanged();
  $('design-name').textContent = state.scenario.name || 'Untitled design';
  let problems;
  try {
    problems = problemsOf(state);
  } catch (e) {
    problems = [{ field: 'design', message: `The design could not be checked: ${messageOf(e)}` }];
  }
  // While an entry needs fixing, the last complete design is kept beside it, so that a reload
  // shows its results again (as they stay shown while editing).
  if (problems.length) {
    if (page.lastComplete) state.lastComplete = page.lastComplete;
  } else {
    page.lastComplete = clone(state.scenario);
    delete state.lastComplete;
  }
  keep(state);
  page.editor.showAttenuationHint();
  showLoose(page.editor.showProblems(problems));
  document.body.dataset.problems = String(problems.length);
  if (problems.length) {
    setStatus(needFixing(problems.length), 'error');
    if (!page.report && page.lastComplete && !page.job?.stale) {
      // Nothing shown yet (the page has just opened): trace the last complete design again
      // (the same seed gives the same results).
      trace(page.lastComplete, { stale: true });
    } else if (!page.job?.stale) {
      page.pool.cancel();
    }
    $('stale-note').hidden = !page.report && !page.job?.stale;
    return;
  }
  $('stale-note').hidden = true;
  if (trace(state.scenario, { stale: false })) setStatus('Tracing…');
}

/**
 * Draw and trace `scenario`: its closed-form figures, its route and a trace in the workers.
 * `stale`: it is the last complete design, shown while the one in the form needs fixing.
 * Returns false when it could not be drawn (the status line says why).
 */
function trace(scenario, { stale }) {
  const json = JSON.stringify(scenario);
  try {
    page.figures = core.closed_form(json);
    showFigures(page.figures);
    page.editor.showBendHints(page.figures.bends);
    showBends(page.figures, null);
    if (!stale) {
      const material = page.editor.root.querySelector('#f-guide-material-hint');
      page.editor.materialHint = `n = ${formatIndex(page.figures.n_core)} at ${page.figures.wavelength_nm} nm (relative to air)`;
      if (material) material.textContent = page.editor.materialHint;
    }
    const outline = core.route_outline(json);
    if (outline.receiver) outline.receiver.round = scenario.receiver?.diameter_mm != null;
    page.view.setOutline(outline);
    showLeakLineNow();
  } catch (e) {
    setStatus(`Could not draw the design: ${messageOf(e)}`, 'error');
    return false;
  }
  page.pendingScenario = clone(scenario);
  const job = page.pool.start(json, { keepPaths: KEEP_PATHS });
  page.job = { id: job, stale };
  document.body.dataset.job = String(job);
  // The progress line follows the new trace at once, not when its first answer comes (a slow
  // first batch would leave the last trace's line, and its Stop button off, for seconds).
  showProgress({ job, raysDone: 0, raysTotal: scenario.trace?.rays ?? 0, done: false, cancelled: false, error: null });
  return true;
}

function scheduleUpdate() {
  clearTimeout(page.timer);
  page.timer = setTimeout(update, 150);
}

function onTraceUpdate(u) {
  showProgress(u);
  if (u.error) {
    setStatus(u.error, 'error');
    showLoose([{ field: 'design', message: u.error }]);
    return;
  }
  if (u.report) {
    page.report = u.report;
    page.reportScenario = page.pendingScenario;
    showReport(u.report, page.figures, page.reportScenario);
    page.view.setReport(u.report);
    drawLegend(u.report);
    drawCharts();
    $('answer').dataset.done = String(u.done);
    $('answer').dataset.job = String(u.job);
  }
  if (u.cancelled) {
    setStatus('Stopped', 'ok');
  } else if (u.done) {
    const problems = Number(document.body.dataset.problems || 0);
    // The last complete design's trace, while an entry needs fixing: the status keeps saying so.
    if (page.job?.id === u.job && page.job.stale && problems) setStatus(needFixing(problems), 'error');
    else setStatus(`Traced ${formatCount(u.raysTotal)} rays`, 'ok');
    document.body.dataset.traced = String(u.job);
  }
}

/**
 * The report's charts, drawn by the core: the exit map's axes in the unit lengths are shown in
 * (its canvas's data-unit says which it was drawn in), the intensity in degrees.
 */
function drawCharts() {
  if (!page.report) return;
  const unit = page.state.unit;
  const charts = [
    ['exit-map', (ratio) => core.draw_exit_map('exit-map', page.report, ratio, unit), unit],
    ['intensity', (ratio) => core.draw_intensity('intensity', page.report, ratio), null],
    ['far-field', (ratio) => core.draw_far_field('far-field', page.report, ratio), null],
  ];
  // The detector's map, only when the traced design has a detector (shown before sizing).
  const detector = Boolean(page.report.receiver_map);
  $('receiver-map-card').hidden = !detector;
  if (detector) charts.push(['receiver-map', (ratio) => core.draw_receiver_map('receiver-map', page.report, ratio, unit), unit]);
  for (const [id, draw, drawnIn] of charts) {
    const canvas = $(id);
    const { ratio } = sizeCanvasForCore(canvas);
    try {
      draw(ratio);
      if (drawnIn) canvas.dataset.unit = drawnIn;
    } catch (e) {
      setStatus(`A chart could not be drawn: ${messageOf(e)}`, 'error');
    }
  }
}

/** The 3D view's key: how many of the drawn rays (a sample) met each fate, and the heat strip. */
function drawLegend(report) {
  const counts = {};
  const drawn = (report.paths || []).length;
  for (const p of report.paths || []) counts[p.fate] = (counts[p.fate] || 0) + 1;
  const items = Object.entries(FATES)
    .filter(([k]) => counts[k])
    .map(([k, style]) => {
      const span = document.createElement('span');
      span.className = 'key';
      span.dataset.fate = k;
      const sw = document.createElement('span');
      sw.className = 'swatch';
      sw.style.borderTopColor = style.colour;
      sw.setAttribute('aria-hidden', 'true');
      span.append(sw, `${counts[k]} ${style.label}`);
      return span;
    });
  // Kept paths hold at most so many points each (limits::PATH_POINTS in the core): say when a
  // drawn ray stops short of its end.
  const paths = report.paths || [];
  const parted = paths.filter((p) => p.parts_left?.length).length;
  if (parted) {
    // The key's dot takes the colour of the most frequent kind of part drawn.
    const kinds = {};
    for (const p of paths) for (const part of p.parts_left || []) kinds[part.fate] = (kinds[part.fate] || 0) + 1;
    const most = Object.keys(kinds).sort((a, b) => kinds[b] - kinds[a])[0];
    const dot = document.createElement('span');
    dot.className = 'dot-swatch';
    dot.style.background = (FATES[most] || FATES.leaked).colour;
    dot.setAttribute('aria-hidden', 'true');
    const key = h('span', { class: 'key parts-key' });
    key.append(dot, `${parted} left part of their light on the way (dots: where, coloured by what became of it)`);
    items.push(key);
  }
  const cut = paths.filter((p) => p.cut_short);
  if (cut.length) {
    const points = Math.max(...cut.map((p) => p.points.length));
    items.push(h('span', {
      class: 'key cut-key',
      text: `${cut.length} of the ${paths.length} drawn rays are cut short after ${points} points (no more are kept); the rays themselves went on to their ends`,
    }));
  }
  const heat = document.createElement('span');
  heat.className = 'key heat-key';
  const ramp = document.createElement('span');
  ramp.className = 'heat-ramp';
  ramp.style.background = heatGradientCss();
  ramp.setAttribute('aria-hidden', 'true');
  const max = page.view.heatMax;
  const bin = page.state.unit === 'in' ? `${(page.view.heatBinMm / 25.4).toPrecision(2)} in` : `${page.view.heatBinMm.toPrecision(2)} mm`;
  heat.append(ramp, max > 0 ? `Leakage along the pipe: darkest, ${(100 * max).toPrecision(2)} % of the light within ${bin}` : 'No leakage along the pipe');
  const lead = document.createElement('span');
  lead.className = 'key key-lead';
  lead.textContent = drawn > 0 ? `Drawn rays, ${formatCount(drawn)} of the ${formatCount(report.rays)} traced (the budget counts them all):` : 'No rays drawn.';
  $('route-legend').replaceChildren(lead, ...items, heat);
  showLeakLineNow();
}

/** The leakage along the route, straightened, for the route drawn and its trace (none while the
 * route drawn has not been traced yet). */
function showLeakLineNow() {
  const report = page.view.report;
  showLeakLine($('leak-line'), page.view.outline, report?.leak_along_route, page.state.unit, heatColour, report?.coating_along_route);
}

// ------------------------------------------------------------ replacing the design

/** Load another design (example, file, link), keeping the current one to go back to. */
function replaceDesign(scenario, how) {
  const previous = { ...clone(page.state), lastComplete: page.lastComplete };
  page.state.scenario = scenario;
  page.state.drafts = {};
  page.editor.messages.clear();
  page.editor.render();
  $('f-name').value = page.state.scenario.name || '';
  page.view.fitted = false;
  clearReport();
  update();
  toolbarMessage(`${how}.`, {
    action: {
      label: 'Back to the previous design',
      run: () => {
        page.state.scenario = previous.scenario;
        page.state.drafts = previous.drafts;
        // Its own last complete design (when an entry of it needs fixing), traced again.
        page.lastComplete = previous.lastComplete;
        page.report = null;
        page.job = null;
        page.editor.messages.clear();
        page.editor.render();
        $('f-name').value = page.state.scenario.name || '';
        page.view.fitted = false;
        clearReport();
        update();
      },
    },
  });
}

/** The message for a share link that cannot be read, and what is shown instead. */
function damagedLink(e, instead) {
  toolbarMessage(`The share link is damaged or incomplete (copy it again from where it was sent): ${messageOf(e)}. ${instead}`, { kind: 'error' });
}

/** Take the share link out of the address bar (a reload then shows the design as edited). */
const forgetLink = () => history.replaceState(null, '', location.pathname + location.search);

/** A share link arriving in this tab (pasted into the address bar, or followed from another page). */
async function onHashChange() {
  let text;
  try {
    text = await scenarioFromFragment();
    if (text == null) return; // an anchor on the page, or no fragment
    const s = readScenario(text);
    forgetLink();
    replaceDesign(s, `Opened the design from the link: “${s.name || 'untitled'}”`);
  } catch (e) {
    forgetLink();
    damagedLink(e, 'Your design is unchanged.');
  }
}

/**
 * Check a scenario given as text (file, link); returns it as the core reads it (its defaults
 * filled in) or throws a readable Error.
 */
function readScenario(text) {
  try {
    JSON.parse(text);
  } catch (e) {
    throw new Error(`it is not JSON (${messageOf(e)})`);
  }
  const res = core.check_scenario(text);
  if (!res.ok) {
    const list = res.problems.slice(0, 3).map((p) => p.message).join('; ');
    throw new Error(`${list}${res.problems.length > 3 ? `; and ${res.problems.length - 3} more` : ''}`);
  }
  return core.scenario_as_read(text);
}

async function loadDemos() {
  try {
    const list = await demoList();
    const sel = $('demo');
    for (const d of list) {
      const o = document.createElement('option');
      o.value = d.file;
      o.textContent = d.name;
      sel.append(o);
    }
  } catch {
    // Examples unavailable: the menu stays empty.
  }
}

function wireToolbar() {
  $('demo').addEventListener('change', async (e) => {
    const file = e.target.value;
    e.target.value = '';
    if (!file) return;
    try {
      const text = await demoText(file);
      const s = readScenario(text);
      replaceDesign(s, `Opened the example “${s.name}”`);
    } catch (err) {
      toolbarMessage(`The example could not be opened: ${messageOf(err)}`, { kind: 'error' });
    }
  });
  $('open-file').addEventListener('click', () => $('file-input').click());
  $('file-input').addEventListener('change', async (e) => {
    const file = e.target.files?.[0];
    e.target.value = '';
    if (!file) return;
    try {
      if (file.size > MAX_DESIGN_BYTES) throw new Error(tooLargeMessage('it holds'));
      const s = readScenario(await file.text());
      replaceDesign(s, `Opened ${file.name}`);
    } catch (err) {
      toolbarMessage(`${file.name} could not be opened: ${messageOf(err)}. Your design is unchanged.`, { kind: 'error' });
    }
  });
  $('paste-design').addEventListener('click', () => {
    $('paste-msg').hidden = true;
    $('paste-dialog').showModal();
    $('paste-text').focus();
  });
  $('paste-use').addEventListener('click', () => {
    try {
      const s = readScenario($('paste-text').value);
      $('paste-dialog').close();
      $('paste-text').value = '';
      replaceDesign(s, `Pasted the design “${s.name || 'untitled'}”`);
    } catch (err) {
      $('paste-msg').textContent = `This text cannot be used: ${messageOf(err)}. Your design is unchanged.`;
      $('paste-msg').hidden = false;
    }
  });
  /** A note when some fields hold text that is not a number (the file or link has their last numbers). */
  const pendingNote = () => {
    const n = page.editor.draftProblems().length;
    return n ? ` Note: ${n} ${n === 1 ? 'field holds' : 'fields hold'} text that is not a number; ${n === 1 ? 'its' : 'their'} last valid value is used.` : '';
  };
  $('new-design').addEventListener('click', () => {
    replaceDesign(core.new_scenario(), 'Started a new design');
  });
  $('save-file').addEventListener('click', () => {
    const s = page.state.scenario;
    saveDesignFile();
    const note = pendingNote();
    if (note) toolbarMessage(`Saved ${fileNameFor(s)}.${note}`, { kind: 'error' });
  });
  // On a narrow screen the file actions open and close behind one button.
  $('file-actions-toggle').addEventListener('click', () => {
    const open = $('file-actions').classList.toggle('open');
    $('file-actions-toggle').setAttribute('aria-expanded', String(open));
  });
  // On a narrow screen the answer card keeps to the answer; the notes and the absolute figures
  // open below it with one tap.
  $('more-figures').addEventListener('click', () => {
    const open = document.querySelector('.answer-card').classList.toggle('more');
    $('more-figures').setAttribute('aria-expanded', String(open));
    $('more-figures').textContent = open ? 'Fewer figures ▴' : 'More figures ▾';
  });
  // A page opened as a file (the single file) has no address another machine can open: it
  // offers the design's text instead, for “Paste a design…” there.
  const asFile = location.protocol === 'file:';
  if (asFile) {
    $('share').textContent = 'Copy design text';
    $('share').title = 'A page opened as a file has no link another machine can open: copy the design as text to paste there';
  }
  $('share').addEventListener('click', async () => {
    if (asFile) {
      const text = `${JSON.stringify(page.state.scenario, null, 2)}\n`;
      try {
        await copyText(text);
        toolbarMessage(`Design text copied (${formatCount(text.length)} characters): paste it with “Paste a design…” on the other machine. A link cannot travel from a page opened as a file.${pendingNote()}`);
      } catch {
        toolbarMessage(`The design text could not be copied here (the browser refused). Use Save file and send the file: a link cannot travel from a page opened as a file.${pendingNote()}`, { kind: 'error' });
      }
      return;
    }
    // The link is made (compressed) after the click; the copy is asked for within the click, so
    // that browsers which allow it only then (WebKit) do (copyText hands over a promise of it).
    const making = shareLink(page.state.scenario, location.href.split('#')[0]);
    const copied = copyText(making).then(() => true, () => false);
    const link = await making;
    $('share').dataset.link = link;
    const long = link.length > LINK_WARN_CHARS;
    const warning = long
      ? ` It is longer than ${formatCount(LINK_WARN_CHARS)} characters, which some browsers, mail and chat programs cut or refuse: if it does not arrive whole, send the design as a file instead (Save file).`
      : '';
    const kind = long ? 'error' : 'info';
    if (await copied) {
      toolbarMessage(`Share link copied (${formatCount(link.length)} characters). It carries the whole design; nothing is sent anywhere.${warning}${pendingNote()}`, { kind });
    } else {
      // Refused: the link in a dialog to copy by hand (never spelled out in the toolbar).
      toolbarMessage(`Share link made (${formatCount(link.length)} characters); this browser did not let the page copy it, so it is shown to copy by hand.${warning}${pendingNote()}`, { kind });
      $('link-msg').textContent = `This browser did not let the page copy the link (${formatCount(link.length)} characters): copy it from here.${warning}`;
      $('link-text').value = link;
      $('link-dialog').showModal();
      $('link-text').select();
    }
  });
  $('link-copy').addEventListener('click', async () => {
    const text = $('link-text').value;
    try {
      await copyText(text);
      $('link-msg').textContent = 'Copied.';
    } catch {
      $('link-text').select();
      $('link-msg').textContent = 'This browser did not let the page copy it: the link is selected, copy it with the keyboard or the menu.';
    }
  });
  $('export-csv').addEventListener('click', () => {
    if (!page.report) {
      toolbarMessage('Nothing traced yet.', { kind: 'error' });
      return;
    }
    try {
      const csv = core.report_csv(page.report, page.reportScenario?.name ?? '');
      download(new Blob([csv], { type: 'text/csv' }), fileNameFor(page.reportScenario).replace(/\.tirtrace\.json$/, '-budget.csv'));
    } catch (e) {
      toolbarMessage(`The CSV could not be made: ${messageOf(e)}`, { kind: 'error' });
    }
  });
  for (const r of document.querySelectorAll('input[name="unit"]')) {
    r.addEventListener('change', () => {
      page.state.unit = r.value;
      page.editor.render();
      keep(page.state);
      setLengthUnit(page.state.unit);
      page.view.setUnit(page.state.unit);
      showLeakLineNow();
      if (page.report) drawLegend(page.report);
      if (page.figures) page.editor.showBendHints(page.figures.bends);
      if (page.report) {
        showReport(page.report, page.figures, page.reportScenario);
        drawCharts();
      } else if (page.figures) showBends(page.figures, null);
      // The messages word their lengths in the unit shown.
      try {
        showLoose(page.editor.showProblems(problemsOf(page.state)));
      } catch {
        // The check failed: the messages stay as they were; the next edit shows why.
      }
    });
  }
  $('cancel').addEventListener('click', () => page.pool.cancel());
  for (const b of document.querySelectorAll('[data-view]')) {
    b.addEventListener('click', () => (b.dataset.view === 'fit' ? page.view.fit() : page.view.view(b.dataset.view)));
  }
  for (const b of document.querySelectorAll('button.png')) {
    b.addEventListener('click', () => {
      const id = b.dataset.canvas;
      const scenario = page.reportScenario || page.state.scenario;
      const title = b.closest('figure')?.querySelector('.picture-title')?.textContent ?? id;
      const traced = page.report ? `${page.report.rays.toLocaleString('en')} rays, seed ${page.report.seed}` : 'not traced yet';
      const caption = [`${title} · ${scenario.name || 'Untitled design'}`, `tirtrace · ${traced} · ${new Date().toISOString().slice(0, 10)}`];
      withCaption($(id), caption).toBlob((blob) => blob && download(blob, `${fileNameFor(scenario).replace(/\.tirtrace\.json$/, '')}-${id}.png`));
    });
  }
  $('f-name').addEventListener('input', (e) => {
    page.state.scenario.name = e.target.value;
    scheduleUpdate();
  });
}

/** A copy of a chart's canvas with a caption strip under it (what, which design, how traced). */
function withCaption(canvas, lines) {
  const scale = canvas.width / Math.max(1, canvas.clientWidth || canvas.width);
  const line = Math.round(18 * scale);
  const out = document.createElement('canvas');
  out.width = canvas.width;
  out.height = canvas.height + line * lines.length + Math.round(12 * scale);
  const g = out.getContext('2d');
  g.fillStyle = '#ffffff';
  g.fillRect(0, 0, out.width, out.height);
  g.drawImage(canvas, 0, 0);
  g.fillStyle = '#212529';
  g.font = `${Math.round(13 * scale)}px system-ui, sans-serif`;
  g.textBaseline = 'top';
  lines.forEach((text, k) => g.fillText(text, Math.round(8 * scale), canvas.height + Math.round(6 * scale) + k * line, out.width - Math.round(16 * scale)));
  return out;
}

// ------------------------------------------------------------ tables and selects

/**
 * Mark each table wrap whose table is wider than it (data-overflow, shadows in design.css), show
 * a line under it saying it scrolls sideways, and let the keyboard reach it.
 */
function watchTableWidths() {
  const observer = new ResizeObserver((entries) => {
    for (const e of entries) {
      const wrap = e.target.closest('.table-wrap');
      if (!wrap) continue;
      const over = wrap.scrollWidth - wrap.clientWidth > 1;
      wrap.dataset.overflow = String(over);
      wrap.nextElementSibling.hidden = !over;
      if (over) {
        wrap.tabIndex = 0;
        wrap.setAttribute('role', 'region');
        wrap.setAttribute('aria-label', `${wrap.closest('section, figure')?.querySelector('h2, h3, figcaption')?.textContent.trim() || 'Table'}, scrolls sideways`);
      } else {
        wrap.removeAttribute('tabindex');
        wrap.removeAttribute('role');
        wrap.removeAttribute('aria-label');
      }
    }
  });
  for (const wrap of document.querySelectorAll('.table-wrap')) {
    wrap.after(h('p', { class: 'scroll-cue', text: 'Scroll sideways for more columns →', hidden: true }));
    observer.observe(wrap);
    observer.observe(wrap.querySelector('table'));
  }
}

/** A select shows its whole choice on hover and focus (a narrow one cuts a long name). */
function titleSelects() {
  const title = (e) => {
    const el = e.target;
    if (el instanceof HTMLSelectElement) el.title = el.selectedOptions[0]?.textContent || '';
  };
  for (const type of ['focusin', 'mouseover', 'change']) document.addEventListener(type, title);
}

// ------------------------------------------------------------ start

async function start() {
  try {
    core = await loadCore();
  } catch (e) {
    setStatus(`The calculator could not start: ${messageOf(e)}`, 'error');
    return;
  }
  setBudgetMechanisms(core.budget_mechanisms());
  let fromLink = null;
  try {
    const text = await scenarioFromFragment();
    if (text) fromLink = readScenario(text);
  } catch (e) {
    forgetLink();
    damagedLink(e, 'Showing your last design.');
  }
  page.state = loadState() || freshState(STARTER);
  const materials = core.materials();
  try {
    page.state.scenario = asRead(page.state.scenario);
    page.editor = new Editor($('editor'), page.state, materials, () => scheduleUpdate(), (text) => core.read_intensity_table(text));
    page.editor.render();
  } catch {
    // A kept design this page cannot show (damaged storage, or from a different version):
    // keep its text aside, start from the starter design, and say so.
    const setAside = store(UNREADABLE_KEY, loadState());
    page.state = freshState(STARTER);
    page.state.scenario = asRead(page.state.scenario);
    page.editor = new Editor($('editor'), page.state, materials, () => scheduleUpdate(), (text) => core.read_intensity_table(text));
    page.editor.render();
    toolbarMessage(
      `The design kept in this browser could not be shown (it is damaged or from another version); ${setAside
        ? `it is set aside under “${UNREADABLE_KEY}” in this browser's storage`
        : "this browser's storage refused to set it aside, so it is lost"}. Starting from the example design.`,
      { kind: 'error' },
    );
  }
  // The last complete design, when the kept one needs fixing: only one the core accepts.
  const last = page.state.lastComplete;
  page.lastComplete = last && core.check_scenario(JSON.stringify(last)).ok ? asRead(last) : null;
  // The form is never sent anywhere (Enter in a field would submit it).
  $('editor').addEventListener('submit', (e) => e.preventDefault());
  for (const r of document.querySelectorAll('input[name="unit"]')) r.checked = r.value === page.state.unit;
  setLengthUnit(page.state.unit);
  $('f-name').value = page.state.scenario.name || '';
  page.view = new RouteView($('route-view'));
  page.view.setUnit(page.state.unit);
  $('exit-map-data').addEventListener('toggle', () => $('exit-map-data').open && showExitMapTable());
  $('far-field-data').addEventListener('toggle', () => $('far-field-data').open && showFarFieldTable());
  // The trace workers' script and the core compiled here, handed to each worker (none fetches
  // anything itself). Without them the pools start the workers' own module script.
  let workers = {};
  let workersUnavailable = null;
  try {
    workers = await traceWorker();
  } catch (e) {
    workersUnavailable = messageOf(e);
  }
  page.pool = new TracePool({ onUpdate: onTraceUpdate, ...workers });
  page.study = new StudyPanel({
    core,
    state: page.state,
    editor: page.editor,
    onSaved: () => keep(page.state),
    openDesign: (scenario, how) => replaceDesign(readScenario(JSON.stringify(scenario)), how),
    traceWorker: workers,
  });
  page.find = new FindPanel({ core, state: page.state, study: page.study, onSaved: () => keep(page.state) });
  page.tolerances = new TolerancePanel({
    core,
    state: page.state,
    editor: page.editor,
    onSaved: () => keep(page.state),
    openDesign: (scenario, how) => replaceDesign(readScenario(JSON.stringify(scenario)), how),
    traceWorker: workers,
  });
  wireToolbar();
  watchTableWidths();
  titleSelects();
  loadDemos();
  // Each bend of the table opens in the quick look with its own numbers (the core makes them).
  linkBendsToQuickLook((segment) => {
    const design = core.quick_design_for_bend(JSON.stringify(page.state.scenario), segment);
    return `quick.html#design=${encodeURIComponent(JSON.stringify(design))}`;
  });
  try {
    await page.pool.ready();
    document.body.dataset.tracer = 'workers';
    if (workersUnavailable) document.body.dataset.workerScript = 'module';
  } catch (e) {
    // No workers here (a browser that refuses them, e.g. from a file:// page): trace on the page.
    page.pool.dispose();
    page.pool = new MainThreadPool({ Tracer: core.Tracer, onUpdate: onTraceUpdate });
    document.body.dataset.tracer = 'page';
    toolbarMessage(`Tracing on the page itself, more slowly: ${withFullStop(messageOf(e))}`);
  }
  if (fromLink) {
    replaceDesign(fromLink, `Opened the design from the link: “${fromLink.name || 'untitled'}”`);
    history.replaceState(null, '', location.pathname + location.search);
  } else {
    update();
  }
  document.body.dataset.ready = 'true';
  window.addEventListener('hashchange', () => onHashChange());
  window.addEventListener('resize', () => drawCharts());
  // Only a served page (http or https) can have a service worker; a file opened from disk has none.
  registerServiceWorker({
    onNewBuild: (use) => toolbarMessage('A newer version of tirtrace has been kept for offline use.', {
      action: { label: 'Use it now (reloads the page)', run: use },
    }),
  });
}

start();
