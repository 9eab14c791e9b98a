// The results panel: the core's figures with units and sensible significant figures, a plain
// verdict on the drawn bend, and the "stale" state when the entries have a problem.

import { $ } from './dom.js';
import { formatFixed, formatIndex, formatPercent, formatPlain, formatSig, orDash } from './format.js';

/** Set one figure: its value text ('' shows a dash), optional unit and explanation. */
function setFigure(id, value, { unit, explain } = {}) {
  const root = $(id);
  root.querySelector('.value').textContent = orDash(value);
  const unitEl = root.querySelector('.unit');
  if (unitEl && unit !== undefined) unitEl.textContent = unit;
  if (unitEl) unitEl.hidden = value === '' || unitEl.textContent === '';
  if (typeof explain === 'string') root.querySelector('.explain').textContent = explain;
  else if (explain instanceof Node) root.querySelector('.explain').replaceChildren(explain);
}

/** Strip a leading "no leak-free radius exists:" from the core's note (we say it already). */
function reasonFrom(note) {
  const text = String(note ?? '').trim();
  const stripped = text.replace(/^no leak-free radius exists\s*[:,.–-]\s*/i, '');
  return stripped.charAt(0).toUpperCase() + stripped.slice(1);
}

/** "√(n² − n_around²)" with a real subscript. */
function naFormula() {
  const out = document.createDocumentFragment();
  const sub = document.createElement('sub');
  sub.textContent = 'around';
  out.append('√(n² − n', sub, '²)');
  return out;
}

const isNum = (x) => typeof x === 'number' && Number.isFinite(x);

/**
 * Show the figures of a valid design.
 * @param {object} f the figures object from `figures(design)`
 * @param {object} design the design they belong to
 */
export function showFigures(f, design) {
  setFigure('fig-n', formatIndex(f.n_core), {
    explain: `Around it ${formatIndex(f.n_surroundings)}, in front ${formatIndex(f.n_launch)}.`,
  });

  if (isNum(f.critical_angle_deg)) {
    setFigure('fig-critical', formatFixed(f.critical_angle_deg, 2), {
      unit: '°',
      explain: "From the wall's normal; rays hitting the wall more steeply leak out.",
    });
  } else {
    setFigure('fig-critical', 'none', {
      unit: '',
      explain: 'The surroundings are not of lower index, so nothing is guided.',
    });
  }

  setFigure('fig-na', formatFixed(f.numerical_aperture, 3), {
    explain: f.numerical_aperture > 1 ? 'Above 1: wider than any cone from air.' : naFormula(),
  });

  if (f.acceptance_saturated) {
    setFigure('fig-acceptance', formatFixed(f.acceptance_half_angle_deg, 1), {
      unit: '°',
      explain: 'All rays from the front medium are accepted.',
    });
  } else {
    setFigure('fig-acceptance', formatFixed(f.acceptance_half_angle_deg, 1), {
      unit: '°',
      explain: 'In the front medium; wider rays are not guided.',
    });
  }

  setFigure('fig-fresnel', formatPercent(f.entry_fresnel_loss, 3), { unit: '%' });
  setFigure('fig-steepest', formatFixed(f.max_internal_angle_deg, 1), { unit: '°' });

  const ratioEl = $('fig-leak-free-ratio');
  if (isNum(f.leak_free_inner_radius_mm) && isNum(f.leak_free_ratio)) {
    setFigure('fig-leak-free', formatSig(f.leak_free_inner_radius_mm, 3), {
      unit: 'mm',
      explain: reasonFrom(f.leak_free_note),
    });
    ratioEl.textContent = `R/d = ${formatSig(f.leak_free_ratio, 3)}`;
    ratioEl.hidden = false;
  } else {
    setFigure('fig-leak-free', 'No leak-free radius exists', {
      unit: '',
      explain: reasonFrom(f.leak_free_note),
    });
    ratioEl.textContent = '';
    ratioEl.hidden = true;
  }
  $('fig-leak-free').classList.toggle('is-none', !isNum(f.leak_free_inner_radius_mm));

  setFigure('fig-coupling', formatPercent(f.lambertian_coupling, 3), { unit: '%' });
  setFigure('fig-delta', formatSig(f.relative_index_difference, 3));

  const verdict = $('verdict');
  const drawn = `The drawn bend (inner radius ${formatPlain(design.bend_inner_radius_mm, 6)} mm, ${formatPlain(design.bend_angle_deg, 6)}°, R/d ${formatSig(f.bend_ratio, 3)})`;
  // An LED's half-intensity angle is no hard edge: the verdict covers the light inside it only.
  const share = f.launch_power_in_cone;
  const partial = isNum(share) && share < 1;
  const beyond = partial ? ` The rest of the LED's light, ${formatPercent(1 - share, 2)} % of it, leaves beyond the half-intensity angle and may leak.` : '';
  if (!f.bend_leaks) {
    verdict.textContent = partial
      ? `${drawn} keeps inside the light within the half-intensity angle: ${formatPercent(share, 2)} % of the LED's power.${beyond}`
      : `${drawn} keeps all the launched light inside.`;
  } else if (isNum(f.leak_free_inner_radius_mm)) {
    const narrower = design.launch_half_angle_deg > 0 ? ', or launch a narrower cone' : '';
    verdict.textContent = `${drawn} leaks light. Open it to an inner radius of at least ${formatSig(f.leak_free_inner_radius_mm, 3)} mm${narrower}.${beyond}`;
  } else {
    verdict.textContent = `${drawn} leaks light, as any bend of this pipe does with this launch.`;
  }
  verdict.classList.toggle('leaks', Boolean(f.bend_leaks));
  verdict.classList.toggle('holds', !f.bend_leaks);
}

/** Dim the results and drawings (and say why) while the entries have problems and older results are shown. */
export function markStale(stale) {
  document.body.classList.toggle('results-stale', stale);
  $('stale-note').hidden = !stale;
}
