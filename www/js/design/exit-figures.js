// The exit figures of a trace report (the core's exit_figures): the exit face's uniformity and
// the exit beam's half-intensity full angle, as [label, text] pairs for the report's figure list.
// Text only; the core computes every number and interval.

import { formatFixed, formatPlain, formatQuantity } from '../format.js';

/** The core's counting rule for the uniformity's blocks, as a percentage ("20"). */
const within = (u) => formatPlain(100 * u.counted_within_relative_ci95, 3);

/** "0.75 ± 0.07": a ratio with its 95 % half-width, two decimals. */
const ratio = (v) => formatQuantity(v.value, v.ci95, '').trim();

/**
 * The figure list's rows for `f` (a report's exit_figures; absent in a report from before
 * them): least over greatest irradiance and the coefficient of variation on the exit face, with
 * how many blocks counted, and the half-intensity full angle. Figures the core could not give
 * (too few blocks known well enough, an intensity that never falls to half) read as a dash with
 * the reason.
 */
export function exitFigureItems(f) {
  if (!f) return [];
  const u = f.exit_face_uniformity;
  const blocks = `${u.blocks_counted} of ${u.blocks_on_face} blocks`;
  const rows = [];
  rows.push([
    `Exit face uniformity, least ÷ greatest (${blocks})`,
    u.min_over_max ? ratio(u.min_over_max) : `— (fewer than two blocks known to ±${within(u)} %)`,
  ]);
  const cv = u.coefficient_of_variation;
  rows.push([
    `Exit face variation, standard deviation ÷ mean (${blocks})`,
    cv ? `${formatFixed(cv.value, 3)} (95 %: ${formatFixed(cv.low95, 3)} to ${formatFixed(cv.high95, 3)})` : '—',
  ]);
  const a = f.half_intensity_full_angle_deg;
  const angle = (v) => `${formatFixed(v.value, 1)}°${Number.isFinite(v.ci95) ? ` ± ${formatFixed(v.ci95, 1)}°` : ' (no interval below two rays)'}`;
  rows.push(['Half-intensity full angle of the exit beam', a ? angle(a) : '— (does not fall to half within 90°)']);
  return rows;
}

/** The rule behind the uniformity rows, for the note under the figures. */
export function exitFiguresNote(f) {
  if (!f) return '';
  const u = f.exit_face_uniformity;
  const n = u.blocks;
  return `Uniformity: the exit face is cut into ${n} × ${n} blocks; a block counts when it lies wholly on the face and its share is known to ±${within(u)} %. Variation has the blocks' own noise taken out. Half-intensity angle: where the intensity first falls to half the on-axis value (or a clearly brighter ring's), both sides of the axis.`;
}
