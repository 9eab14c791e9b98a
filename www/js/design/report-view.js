// Shows a trace report and the closed-form figures: the delivered share with its 95 % figure,
// the loss budget by mechanism and by segment, the light turned back at the exit face and where
// it ended, the bend table, the detector's share and the absolute figures. Text only through
// textContent (names from files are never HTML).

import { $, h } from '../dom.js';
import { exitFigureItems, exitFiguresNote } from './exit-figures.js';
import { formatCount, formatFixed, formatHalfWidth, formatQuantity, formatShare, formatShareCi, orDash } from '../format.js';

/** The colour of each budget share, by the core's key for it (the words and the order are the core's). */
export const MECHANISM_COLOURS = Object.freeze({
  delivered: '#1864ab',
  missed_entry: '#adb5bd',
  reflected_entry: '#868e96',
  leaked: '#d9480f',
  contact: '#862e9c',
  coating: '#0b7285',
  absorbed: '#f59f00',
  returned: '#2b8a3e',
  stopped: '#495057',
});

/** A share the colours above do not name yet: drawn, in a neutral grey, rather than left out. */
const UNNAMED_COLOUR = '#ced4da';

/** The budget's shares in the core's fixed order, as [key, words, colour]; set once the core runs. */
let mechanisms = [];

/**
 * Take the budget's shares from the core (`core.budget_mechanisms()`: [[key, words], …] in the
 * budget's order), before the first report is shown.
 */
export function setBudgetMechanisms(list) {
  mechanisms = list.map(([key, words]) => [key, words, MECHANISM_COLOURS[key] ?? UNNAMED_COLOUR]);
}

const KIND_NAMES = { straight: 'Straight', bend: 'Bend', taper: 'Taper' };

const fixed = (x, d) => orDash(formatFixed(x, d));

/** The core's note as a sentence: a capital letter first. */
const sentence = (text) => (text ? text.charAt(0).toUpperCase() + text.slice(1) : '');

/** Where an intensity window lies: "the 5° cone about the axis" or "27°–28° off axis". */
const windowText = (w) => (!w ? '—' : w.from_deg === 0 ? `the ${formatFixed(w.to_deg, 0)}° cone about the axis` : `${formatFixed(w.from_deg, 0)}°–${formatFixed(w.to_deg, 0)}° off axis`);

export function showProgress(u) {
  const bar = $('progress');
  bar.max = Math.max(1, u.raysTotal || 1);
  bar.value = u.raysDone || 0;
  let text;
  if (u.error) text = 'Not traced: see the message above the form.';
  else if (u.cancelled) text = `Stopped at ${formatCount(u.raysDone)} of ${formatCount(u.raysTotal)} rays.`;
  else if (u.done) text = `${formatCount(u.raysTotal)} rays traced in ${(u.elapsedMs / 1000).toFixed(1)} s.`;
  else text = `${formatCount(u.raysDone || 0)} of ${formatCount(u.raysTotal || 0)} rays…`;
  $('progress-text').textContent = text;
  $('cancel').disabled = u.done || u.cancelled || !!u.error;
  document.body.dataset.tracing = u.done || u.cancelled || u.error ? 'false' : 'true';
}

export function showReport(report, figures, scenario) {
  const d = report.delivered;
  $('answer-value').textContent = formatShare(d.share, d.ci95);
  $('answer-ci').textContent = `± ${formatHalfWidth(d.ci95)} %`;
  $('answer').dataset.share = String(d.share);
  $('answer').dataset.ci95 = String(d.ci95);
  $('answer').dataset.rays = String(report.rays);
  $('answer-note').textContent = `Share of the light the ${scenario.source.emitter.beam ? 'beam' : 'LED'} emits, from ${formatCount(report.rays)} rays (± is the 95 % interval).`;

  // The numbers behind the intensity chart: every 1° ring up to the last lit one.
  const I = report.intensity;
  const lastLit = I.share_per_sr.reduce((last, v, k) => (v > 0 ? k : last), -1);
  $('intensity-rows').replaceChildren(...I.angle_deg.slice(0, lastLit + 1).map((a, k) => h('tr', {},
    h('td', { class: 'num', text: fixed(a, 1) }),
    h('td', { class: 'num', text: formatShare(I.share_per_sr[k], I.ci95_per_sr[k]) }),
    h('td', { class: 'num', text: formatHalfWidth(I.ci95_per_sr[k]) }))));

  // The numbers behind the exit map: made when its table is open (a cell per td).
  lastExitMap = report.exit_map;
  if ($('exit-map-data').open) showExitMapTable();

  // The numbers behind the far-field map: made when its table is open (a row per lit cell).
  lastFarField = report.far_field ?? null;
  if ($('far-field-data').open) showFarFieldTable();

  // Detector and absolute figures.
  const extra = [];
  if (report.receiver) extra.push(['On the detector', formatShareCi(report.receiver.share, report.receiver.ci95)]);
  const abs = report.absolute;
  const axis = report.intensity?.on_axis;
  const peak = report.intensity?.peak;
  if (abs) {
    const q = (v, unit) => formatQuantity(v.value, v.ci95, unit);
    extra.push(['Flux reaching the window', q(abs.delivered, abs.unit)]);
    if (abs.receiver) extra.push(['Flux on the detector', q(abs.receiver, abs.unit)]);
    extra.push([`Peak intensity (mean over ${windowText(peak)})`, q(abs.peak_intensity, abs.intensity_unit)]);
    extra.push([`On-axis intensity (mean over ${windowText(axis)})`, q(abs.on_axis_intensity, abs.intensity_unit)]);
    if (abs.mean_exit_luminance) extra.push(['Mean luminance of the exit face, along its axis', q(abs.mean_exit_luminance, 'cd/m²')]);
  }
  extra.push(...exitFigureItems(report.exit_figures));
  $('extra').replaceChildren(...extra.map(([k, v]) => h('div', { class: 'extra-item' }, h('dt', { text: k }), h('dd', { text: v }))));
  $('extra').hidden = extra.length === 0;
  const note = $('extra-note');
  if (abs && axis) {
    const sr = formatFixed(axis.solid_angle_sr, 3);
    const luminance = abs.mean_exit_luminance ? ' Mean luminance along the axis = on-axis intensity ÷ area of the exit face: the luminance of each point of the face, averaged over the face.' : '';
    note.textContent = `Intensities are means over at least ${sr} sr (the ${formatFixed(axis.to_deg, 0)}° cone about the exit axis, or a ring as large): a 1° ring holds too few rays to trust.${luminance}`;
  } else note.textContent = '';
  if (report.exit_figures) note.textContent = `${note.textContent} ${exitFiguresNote(report.exit_figures)}`.trim();
  note.hidden = note.textContent === '';

  // Budget by mechanism: one stacked bar and a table.
  const b = report.budget;
  const bar = $('budget-bar');
  bar.replaceChildren(
    ...mechanisms.filter(([k]) => b[k].share > 0).map(([k, label, colour]) =>
      h('span', { class: 'budget-piece', title: `${label}: ${formatShareCi(b[k].share, b[k].ci95)}`, style: `flex-grow:${b[k].share};background:${colour}` }),
    ),
  );
  $('budget-rows').replaceChildren(
    ...mechanisms.flatMap(([k, label, colour]) => [
      h('tr', { dataset: { mechanism: k } },
        h('th', { scope: 'row' }, h('span', { class: 'swatch', style: `background:${colour}`, 'aria-hidden': 'true' }), label),
        h('td', { class: 'num', text: formatShare(b[k].share, b[k].ci95) }),
        h('td', { class: 'num ci', text: `± ${formatHalfWidth(b[k].ci95)}` })),
      // Under the coatings' share, each coating's (the report lists them only when there are any).
      ...(k === 'coating' ? coatingRows(report.coatings || []) : []),
    ]),
    h('tr', { class: 'sum' }, h('th', { scope: 'row', text: 'Sum (energy check)' }), h('td', { class: 'num', text: formatFixed(100 * report.budget_sum, 6) }), h('td')),
  );

  // By segment. Coatings (when the design has any) are lost here too: light a coating absorbs
  // ends at its place on the route, as light lost into a mount does; each keeps its own figure.
  const contactsBySeg = new Map();
  for (const c of report.contacts || []) {
    contactsBySeg.set(c.segment, [...(contactsBySeg.get(c.segment) || []), c]);
  }
  const coatingsBySeg = new Map();
  (report.coatings || []).forEach((c, k) => {
    coatingsBySeg.set(c.segment, [...(coatingsBySeg.get(c.segment) || []), { ...c, k }]);
  });
  const sumLost = (list) => (list || []).reduce((a, c) => a + c.lost.share, 0);
  const lossOf = (s) => s.leaked.share + s.absorbed.share + sumLost(contactsBySeg.get(s.index)) + sumLost(coatingsBySeg.get(s.index));
  const maxLoss = Math.max(...report.segments.map(lossOf), 0);
  const coated = (report.coatings || []).length > 0;
  showCoatingKey(coated);
  $('segment-rows').replaceChildren(
    ...report.segments.map((s) => {
      const lost = contactsBySeg.get(s.index) || [];
      const coats = coatingsBySeg.get(s.index) || [];
      const coatLoss = sumLost(coats); // bar lengths only: the figures are in the columns beside
      const mountLoss = sumLost(lost);
      const bar = (share, cls) => h('span', { class: `seg-bar ${cls}`, style: `width:${maxLoss > 0 ? (100 * share) / maxLoss : 0}%` });
      const zones = [
        ...lost.map((c) => `${c.name || 'mount'}: ${formatShareCi(c.lost.share, c.lost.ci95)}`),
        ...coats.map((c) => `${c.name || `Coating ${c.k + 1}`} (${COATING_KINDS[c.kind] ?? c.kind}) absorbs ${formatShareCi(c.lost.share, c.lost.ci95)}`),
      ];
      return h('tr', { dataset: { segment: String(s.index) } },
        h('th', { scope: 'row', text: `${s.index + 1} · ${KIND_NAMES[s.kind] || s.kind}` }),
        h('td', { class: 'seg-bars' },
          h('span', { class: 'seg-track', 'aria-hidden': 'true' },
            bar(s.leaked.share, 'leak'), bar(s.absorbed.share, 'absorb'), bar(mountLoss, 'mount'), ...(coated ? [bar(coatLoss, 'coating')] : []))),
        h('td', { class: 'num', text: length(s.length_mm, 1) }),
        h('td', { class: 'num', text: formatShareCi(s.leaked.share, s.leaked.ci95) }),
        h('td', { class: 'num', text: formatShareCi(s.absorbed.share, s.absorbed.ci95) }),
        h('td', { text: zones.length ? zones.join('; ') : '—' }));
    }),
  );

  showTurnBack(report);
  showBends(figures, report);
}

const COATING_KINDS = { 'white paint': 'white paint', metal: 'metal', black: 'black paint' };

/**
 * The segment table's key and last heading name coatings only when the design has any (a design
 * without shows the table as it always has).
 */
function showCoatingKey(coated) {
  const key = document.querySelector('.segment-table .seg-key');
  const head = document.querySelector('.segment-table thead th:last-child');
  if (!key || !head) return;
  let item = key.querySelector('.seg-key-coating');
  if (coated && !item) {
    item = h('span', { class: 'seg-key-item seg-key-coating' }, h('span', { class: 'seg-bar coating' }), 'coatings');
    key.append(' ', item);
  } else if (!coated && item) {
    if (item.previousSibling?.nodeType === Node.TEXT_NODE) item.previousSibling.remove();
    item.remove();
  }
  head.textContent = coated ? 'Mounts and coatings' : 'Mounts';
}

/** A budget row per coating: its name, kind and segment, and the share it absorbs. */
function coatingRows(coatings) {
  return coatings.map((c, k) =>
    h('tr', { class: 'budget-part', dataset: { coating: String(k) } },
      h('th', { scope: 'row', text: `${c.name || `Coating ${k + 1}`} (${COATING_KINDS[c.kind] ?? c.kind}, segment ${c.segment + 1}): absorbs` }),
      h('td', { class: 'num', text: formatShare(c.lost.share, c.lost.ci95) }),
      h('td', { class: 'num ci', text: `± ${formatHalfWidth(c.lost.ci95)}` })));
}

/** The exit map of the last report shown, for its table. */
let lastExitMap = null;

/**
 * The exit map as a table: a row per cell across the height (top first), a column per cell across
 * the width, each cell's irradiance in % of the emitted light per mm² (length units follow the
 * page's); empty cells blank.
 */
export function showExitMapTable() {
  const m = lastExitMap;
  if (!m) return;
  const n = m.cells;
  const centre = (k, size) => -size / 2 + ((k + 0.5) * size) / n;
  const per = lengthUnit === 'in' ? 'in²' : 'mm²';
  const scale = lengthUnit === 'in' ? 25.4 * 25.4 : 1;
  $('exit-map-head').replaceChildren(h('tr', {},
    h('th', { scope: 'col', text: `height ↓ / width →, ${lengthUnit} (% per ${per})` }),
    ...Array.from({ length: n }, (_, i) => h('th', { scope: 'col', class: 'num', text: length(centre(i, m.width_mm), 2) }))));
  const rows = [];
  for (let r = n - 1; r >= 0; r -= 1) {
    rows.push(h('tr', {},
      h('th', { scope: 'row', class: 'num', text: length(centre(r, m.height_mm), 2) }),
      ...Array.from({ length: n }, (_, i) => {
        const v = m.share_per_area[r * n + i];
        return h('td', { class: 'num', text: v > 0 ? formatFixed(100 * v * scale, 3) : '' });
      })));
  }
  $('exit-map-rows').replaceChildren(...rows);
}

/** The far-field map of the last report shown, for its table. */
let lastFarField = null;

/**
 * The far-field map as a table: a row per cell that holds light, by vertical angle from the top
 * and then by horizontal angle (cell centres, degrees), with its intensity in % of the emitted
 * light per sr and, when the source has a flux, in cd or mW/sr, each with its 95 % interval. The
 * cells without light are left out (the map shows them as no light).
 */
export function showFarFieldTable() {
  const f = lastFarField;
  if (!f) return;
  const n = f.cells;
  const abs = f.absolute;
  const centre = (k) => -90 + (k + 0.5) * f.cell_deg;
  $('far-field-head').replaceChildren(h('tr', {},
    h('th', { scope: 'col', class: 'num', text: 'Horizontal angle, °' }),
    h('th', { scope: 'col', class: 'num', text: 'Vertical angle, °' }),
    h('th', { scope: 'col', class: 'num', text: 'Intensity, % of the emitted light per sr' }),
    h('th', { scope: 'col', class: 'num', text: '± 95 %' }),
    ...(abs ? [h('th', { scope: 'col', class: 'num', text: 'Intensity (± 95 %)' })] : [])));
  const rows = [];
  for (let r = n - 1; r >= 0; r -= 1) {
    for (let c = 0; c < n; c += 1) {
      const k = r * n + c;
      if (!(f.share[k] > 0)) continue;
      rows.push(h('tr', {},
        h('td', { class: 'num', text: fixed(centre(c), 0) }),
        h('td', { class: 'num', text: fixed(centre(r), 0) }),
        h('td', { class: 'num', text: formatShare(f.share_per_sr[k], f.ci95_per_sr[k]) }),
        h('td', { class: 'num', text: formatHalfWidth(f.ci95_per_sr[k]) }),
        ...(abs ? [h('td', { class: 'num', text: formatQuantity(abs.intensity[k], abs.ci95[k], abs.intensity_unit) })] : [])));
    }
  }
  $('far-field-rows').replaceChildren(...rows);
}

/** The unit lengths are shown in ('mm' or 'in'; documents and the core keep mm). */
let lengthUnit = 'mm';

/** A length given in mm, in the unit shown: 0.1 µm steps in mm, 0.0001 in steps in inches. */
const length = (x_mm, mmDecimals) => (lengthUnit === 'in' ? fixed(x_mm / 25.4, 4) : fixed(x_mm, mmDecimals));

/** Show the tables' lengths in `unit` ('mm' or 'in') from now on, column heads included. */
export function setLengthUnit(unit) {
  lengthUnit = unit === 'in' ? 'in' : 'mm';
  for (const th of document.querySelectorAll('[data-length-head]')) th.textContent = `${th.dataset.lengthHead}, ${lengthUnit}`;
  $('exit-map-caption').textContent = `Irradiance on the exit face, % of the emitted light per ${lengthUnit}², by cell: rows across the height, columns across the width (cell centres)`;
}

/** Gives the quick look's address for a bend (route index), or null: set once by the page. */
let quickLookOf = () => null;

/** Set how a bend's row links to the quick look (a function of the bend's route index). */
export function linkBendsToQuickLook(addressOf) {
  quickLookOf = addressOf;
}

/** A link opening the bend in the quick look (in a new tab), or nothing. */
function quickLink(segment) {
  let address = null;
  try {
    address = quickLookOf(segment);
  } catch {
    address = null; // the bend cannot be shown there: no link
  }
  return address
    ? h('a', { class: 'quick-link', href: address, target: '_blank', rel: 'noopener', id: `bend-${segment}-quick`, text: 'Quick look', 'aria-label': `Open segment ${segment + 1}'s bend in the quick look` })
    : null;
}

/**
 * Light turned back at the exit face (report.exit_turn_back): how much of the light reaching the
 * face (by total reflection and by Fresnel reflection) and of the emitted light, and where it
 * ended, each share of the emitted light with its 95 % interval. A breakdown of the budget above:
 * every row is part of the budget's row of the same kind.
 */
export function showTurnBack(report) {
  const t = report?.exit_turn_back;
  const box = $('turn-back');
  box.hidden = !t;
  if (!t) return;
  // A figure and its interval never break across lines.
  const ci = (s) => formatShareCi(s.share, s.ci95).replaceAll(' ', '\u00a0');
  const of = t.of_reaching;
  let summary;
  if (!of) summary = 'No light reaches the exit face.';
  else if (t.turned_back.share === 0) summary = 'Nothing is turned back at the exit face: the medium beyond it has the index of the pipe.';
  else {
    summary = `Turned back at the exit face: ${ci(of.turned_back)} of the light reaching it (by total reflection ${ci(of.by_total_reflection)}, `
      + `by Fresnel reflection ${ci(of.by_fresnel)}), that is ${ci(t.turned_back)} of the emitted light.`;
  }
  $('turn-back-summary').textContent = summary;
  box.dataset.share = String(of?.turned_back.share ?? 0);
  const e = t.ended;
  const rows = [['delivered_later', 'Reaches the window on a later pass', e.delivered_later]];
  for (const s of report.segments) {
    rows.push([`leaked-${s.index}`, `Leaks out of segment ${s.index + 1} · ${KIND_NAMES[s.kind] || s.kind}`, s.leaked_after_turn_back]);
  }
  rows.push(['contact', 'Lost into mounts touching the pipe', e.contact], ['coating', 'Absorbed by coatings on the wall', e.coating], ['returned', 'Comes back out of the entry face', e.returned],
    ['absorbed', 'Absorbed in the material', e.absorbed], ['stopped', 'Stopped by the wall-hit limit', e.stopped]);
  const shown = rows.filter(([, , s]) => s.share > 0);
  $('turn-back-rows').replaceChildren(
    ...shown.map(([key, label, s]) =>
      h('tr', { dataset: { end: key } },
        h('th', { scope: 'row', text: label }),
        h('td', { class: 'num', text: formatShare(s.share, s.ci95) }),
        h('td', { class: 'num ci', text: `± ${formatHalfWidth(s.ci95)}` }))),
  );
  $('turn-back-ends').hidden = shown.length === 0;
  $('turn-back-note').hidden = shown.length === 0;
}

/** The part of a bend's traced leak that leaked after a turn back at the exit face, in words. */
function afterTurnBackText(seg) {
  const part = seg?.leaked_after_turn_back;
  if (!part || !(part.share > 0)) return '';
  if (part.share === seg.leaked.share) return 'All of it after a turn back at the exit face';
  return `Of which ${formatShareCi(part.share, part.ci95)} after a turn back at the exit face`;
}

/**
 * A bend's mark: the closed-form verdict for the light on its way to the exit face, told apart
 * from what the trace shows once it is in. A bend the closed form calls leak-free reads "Leaks
 * on return" when every ray that leaked there had been turned back at the exit face
 * first, and "Leaks in trace" when some leaked on the way out (light a mount scattered,
 * say); the title carries the closed form's reasoning.
 */
function bendMark(bf, seg) {
  if (bf.verdict !== 'ok') return { kind: 'leaks', text: 'Leaks' };
  const leaked = seg?.leaked?.share ?? 0;
  if (!(leaked > 0)) return { kind: 'ok', text: 'No leak expected' };
  const after = seg?.leaked_after_turn_back?.share ?? 0;
  if (after === leaked) return { kind: 'back', text: 'Leaks on return' };
  return { kind: 'back', text: 'Leaks in trace' };
}

/** The per-bend table: closed-form leak-free radius for this launch, and the traced leakage. */
export function showBends(figures, report) {
  const rows = (figures?.bends || []).map((bf) => {
    const seg = report?.segments?.[bf.segment];
    const leaked = seg ? formatShareCi(seg.leaked.share, seg.leaked.ci95) : '…';
    const after = afterTurnBackText(seg);
    const mark = bendMark(bf, seg);
    return h('tr', { dataset: { segment: String(bf.segment), verdict: bf.verdict } },
      h('th', { scope: 'row', text: `${bf.segment + 1}` }),
      h('td', { class: 'num', text: `${fixed(bf.angle_deg, 0)}°` }),
      h('td', { class: 'num', text: length(bf.centre_radius_mm, 2) }),
      h('td', { class: 'num', text: length(bf.inner_radius_mm, 2) }),
      h('td', { class: 'num', text: fixed(bf.inner_radius_over_size, 2) }),
      h('td', { class: 'num', text: bf.leak_free_inner_radius_mm == null ? 'none exists' : length(bf.leak_free_inner_radius_mm, 2) }),
      h('td', { class: 'num bend-leak' }, leaked, ...(after ? [h('span', { class: 'turn-back-part', text: after })] : [])),
      h('td', {},
        h('span', { class: `mark mark-${mark.kind}`, text: mark.text, title: sentence(bf.note) }),
        quickLink(bf.segment)));
  });
  $('bend-rows').replaceChildren(...rows);
  $('bends-empty').hidden = rows.length > 0;
  $('bend-note').textContent = figures?.bend_note || '';
  showCorners(figures, report);
}

/** The per-corner table: the closed-form verdict at the face and the traced leakage. */
function showCorners(figures, report) {
  const corners = figures?.corners || [];
  const words = { ok: 'Totally reflected', leaks: 'Leaks', coated: 'Coated' };
  const rows = corners.map((cf) => {
    const seg = report?.segments?.[cf.segment];
    const leaked = seg ? formatShareCi(seg.leaked.share, seg.leaked.ci95) : '…';
    const kind = cf.verdict === 'leaks' ? 'leaks' : 'ok';
    return h('tr', { dataset: { segment: String(cf.segment), verdict: cf.verdict } },
      h('th', { scope: 'row', text: `${cf.segment + 1}` }),
      h('td', { class: 'num', text: `${fixed(cf.angle_deg, 0)}°` }),
      h('td', { class: 'num', text: `${fixed(cf.face_incidence_deg, 1)}°` }),
      h('td', { class: 'num', text: `${fixed(cf.smallest_incidence_deg, 1)}° to ${fixed(cf.largest_incidence_deg, 1)}°` }),
      h('td', { class: 'num', text: `${fixed(cf.critical_angle_deg, 1)}°` }),
      h('td', { class: 'num corner-leak', text: leaked }),
      h('td', {}, h('span', { class: `mark mark-${kind}`, text: words[cf.verdict] ?? cf.verdict, title: sentence(cf.note) })));
  });
  $('corner-rows').replaceChildren(...rows);
  $('corners').hidden = rows.length === 0;
}

/** The closed-form figures line: n, critical angle, NA, acceptance, entry Fresnel loss. */
export function showFigures(f) {
  const items = [
    ['Index n of the pipe', fixed(f.n_core, 4)],
    ['Critical angle', `${fixed(f.critical_angle_deg, 2)}°`],
    ['NA', fixed(f.numerical_aperture, 3)],
    ['Acceptance half-angle in the gap', f.acceptance_saturated ? '90° (all light)' : `${fixed(f.acceptance_half_angle_in_gap_deg, 1)}°`],
    ['Entry Fresnel loss (normal incidence)', `${fixed(100 * f.entry_fresnel_loss, 2)} %`],
  ];
  $('figures').replaceChildren(...items.map(([k, v]) => h('div', { class: 'fig' }, h('dt', { text: k }), h('dd', { text: v }))));
}

export function clearReport() {
  $('answer-value').textContent = '—';
  $('answer-ci').textContent = '';
  $('answer-note').textContent = '';
  $('extra-note').hidden = true;
  delete $('answer').dataset.share;
}
