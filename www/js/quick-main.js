// Wiring: load the core (WebAssembly), restore the entries, and on every edit validate,
// compute, show and draw. All physics comes from the core; this file only passes data along.

import { loadCore, registerServiceWorker } from './core.js';
import { $, h, setStatus } from './dom.js';
import { messageOf } from './errors.js';
import { EntryForm } from './form.js';
import { clearCanvas, drawBend, sizeCanvasForCore } from './drawing.js';
import { markStale, showFigures } from './results.js';
import { EXAMPLE_ENTRIES, designFromEntries, entriesFromDesign, loadEntries, saveEntries } from './state.js';

/** Rays in the drawn fan: enough to see the pattern, few enough to tell them apart. */
const RAY_COUNT = 25;

/** Everything the page knows, in one place. */
const page = {
  core: null,
  form: null,
  entries: null,
  /** The last valid design with its figures and fan, kept (dimmed) while entries have problems. */
  lastGood: null,
};

function drawPictures() {
  const good = page.lastGood;
  const bendCanvas = $('bend-drawing');
  const chartCanvas = $('bend-chart');
  if (!good) {
    clearCanvas(bendCanvas);
    clearCanvas(chartCanvas);
    return;
  }
  const counts = drawBend(bendCanvas, good.fan);
  $('count-guided').textContent = String(counts.guided);
  $('count-escaped').textContent = String(counts.escaped);
  bendCanvas.dataset.guided = String(counts.guided);
  bendCanvas.dataset.escaped = String(counts.escaped);
  const { ratio } = sizeCanvasForCore(chartCanvas);
  try {
    page.core.draw_bend_chart('bend-chart', good.design, ratio);
  } catch (e) {
    page.form.showFormMessage(`The chart could not be drawn: ${messageOf(e)}`);
  }
}

/** Validate the current entries; show messages, or the new figures and drawings. */
function update() {
  const { core, form, entries } = page;
  const design = designFromEntries(entries);
  let problems;
  try {
    problems = core.validate(design);
    if (!Array.isArray(problems)) throw new Error('the check gave no list of problems');
  } catch (e) {
    problems = [{ field: '', message: `The entries could not be checked: ${messageOf(e)}` }];
  }
  form.showProblems(problems);
  if (problems.length > 0) {
    markStale(page.lastGood !== null);
    form.showHints(entries, null);
    return;
  }
  try {
    const figures = core.figures(design);
    const fan = core.bend_fan(design, RAY_COUNT);
    page.lastGood = { design, figures, fan };
  } catch (e) {
    form.showFormMessage(`The figures could not be computed: ${messageOf(e)}`);
    markStale(page.lastGood !== null);
    return;
  }
  markStale(false);
  showFigures(page.lastGood.figures, design);
  form.showHints(entries, page.lastGood.figures);
  drawPictures();
}

/** Keep the entries in this browser; when its storage is full or refuses, say so (never claim they are kept). */
function keepEntries(entries) {
  const kept = saveEntries(entries);
  if (!kept) setStatus('Your entries could not be kept in this browser (its storage is full or refused): they will be lost when the page closes.', 'error');
  else if ($('status').dataset.kind === 'error' && /could not be kept/.test($('status').textContent)) setStatus('Your entries are kept in this browser again.', 'ready');
  return kept;
}

function onEntry(key, value) {
  page.entries[key] = value;
  keepEntries(page.entries);
  update();
}

/** Redraw the canvases when their size changes (window resize, rotation, zoom). */
function watchCanvasSizes() {
  if (!('ResizeObserver' in window)) return;
  let pending = false;
  const observer = new ResizeObserver(() => {
    if (pending) return;
    pending = true;
    requestAnimationFrame(() => {
      pending = false;
      drawPictures();
    });
  });
  observer.observe($('bend-drawing'));
  observer.observe($('bend-chart'));
}

async function start() {
  try {
    page.core = await loadCore();
  } catch (e) {
    setStatus(`The calculator could not start: ${messageOf(e)}`, 'error');
    return;
  }
  let materials;
  try {
    materials = page.core.materials();
  } catch (e) {
    setStatus(`The material list could not be read: ${messageOf(e)}`, 'error');
    return;
  }
  // The form is never sent anywhere (Enter in a field would submit it).
  $('design-form').addEventListener('submit', (e) => e.preventDefault());
  page.form = new EntryForm(materials, onEntry);
  page.form.write(loadEntries());
  // Opened from a bend of the designer (quick.html#design=…): that bend's numbers.
  let opened = null;
  if (location.hash.startsWith('#design=')) {
    try {
      page.form.write(entriesFromDesign(JSON.parse(decodeURIComponent(location.hash.slice('#design='.length)))));
      opened = 'Showing the bend from your design, seen on its own (the bends and tapers before it are left out).';
      keepEntries(page.form.read());
    } catch (e) {
      opened = `The bend from the designer could not be shown (the link is damaged: ${messageOf(e)}); showing your last entries.`;
    }
    history.replaceState(null, '', location.pathname + location.search);
  }
  page.entries = page.form.read();
  $('reset').addEventListener('click', () => {
    page.form.write({ ...EXAMPLE_ENTRIES });
    page.entries = page.form.read();
    keepEntries(page.entries);
    update();
  });
  update();
  if (opened) setStatus(opened, opened.startsWith('Showing') ? 'ready' : 'error');
  watchCanvasSizes();
  // A newer build kept for offline use is offered in the status line, once the page is ready.
  let useNewBuild = null;
  const offerNewBuild = () => {
    const status = $('status');
    status.replaceChildren('A newer version is ready. ', h('button', { type: 'button', class: 'status-action', text: 'Use it', onclick: useNewBuild }));
    status.dataset.kind = 'ready';
  };
  const offline = await registerServiceWorker({
    onNewBuild: (use) => {
      useNewBuild = use;
      if (document.body.dataset.ready === 'true') offerNewBuild();
    },
  });
  setStatus(offline ? 'Ready · also works offline' : 'Ready', 'ready');
  document.body.dataset.ready = 'true';
  if (useNewBuild) offerNewBuild();
}

start();
