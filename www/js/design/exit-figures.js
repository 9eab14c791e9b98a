// The exit figures of a trace report (the core's exit_figures): the exit face's uniformity, the
// detector's when the design has one, and the exit beam's half-intensity full angle, as [label, text] pairs for the report's figure list.
// Text only; the core computes every number and interval.

import { formatFixed, formatPlain } from '../format.js';

/** The core's counting rule for the uniformity's blocks, as a percentage ("20"). */
const within = (u) => formatPlain(100 * u.counted_within_relative_ci95, 3);

/** "0.75 (95 %: 0.68 to 0.81)": a figure with the ends of its 95 % interval, `digits` decimals. */
const bounded = (v, digits) => `${formatFixed(v.value, digits)} (95 %: ${formatFixed(v.low95, digits)} to ${formatFixed(v.high95, digits)})`;

/**
 * The two uniformity rows of one surface (`place`: "Exit face", "On the detector:") from its
 * uniformity `u`: least ÷ greatest and the coefficient of variation, each with how many blocks
 * counted; a dash with the reason when fewer than two blocks are known well enough.
 */
function uniformityRows(place, u) {
  const blocks = `${u.blocks_counted} of ${u.blocks_on_face} blocks`;
  const cv = u.coefficient_of_variation;
  return [
    [
      `${place} uniformity, least ÷ greatest (${blocks})`,
      u.min_over_max ? bounded(u.min_over_max, 2) : `— (fewer than two blocks known to ±${within(u)} %)`,
    ],
    [`${place} variation, standard deviation ÷ mean (${blocks})`, cv ? bounded(cv, 3) : '—'],
  ];
}

/**
 * The figure list's rows for `f` (a report's exit_figures; absent in a report from before
 * them): least over greatest irradiance and the coefficient of variation on the exit face, then
 * on the detector when the design has one, with how many blocks counted, and the half-intensity
 * full angle. Figures the core could not give (too few blocks known well enough, an intensity
 * that never falls to half) read as a dash with the reason.
 */
export function exitFigureItems(f) {
  if (!f) return [];
  const rows = uniformityRows('Exit face', f.exit_face_uniformity);
  if (f.receiver_uniformity) rows.push(...uniformityRows('On the detector:', f.receiver_uniformity));
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
  const where = f.receiver_uniformity ? 'the exit face and the detector are each' : 'the exit face is';
  return `Uniformity: ${where} cut into ${n} × ${n} blocks; a block counts when it lies wholly on the surface and its share is known to ±${within(u)} %. Least ÷ greatest leans low (the extremes are picked from noisy blocks); its interval allows for that. Variation has the blocks' own noise taken out. Half-intensity angle: where the intensity first falls to half the on-axis value (or a clearly brighter ring's), both sides of the axis.`;
}
