// Leakage along the route drawn flat, entry on the left and exit on the right, whatever way the
// 3D view is turned: the heat strip of the 3D view is hidden wherever the pipe runs toward the
// viewer, this line never is. Segment boundaries are marked and numbered as in the tables, and
// the length axis follows the unit shown. Drawing only: the shares come from the core.

import { h } from '../dom.js';
import { formatFixed } from '../format.js';

/** A length given in mm, in the unit shown. */
const lengthText = (mm, unit) => (unit === 'in' ? `${formatFixed(mm / 25.4, 3)} in` : `${formatFixed(mm, mm < 10 ? 1 : 0)} mm`);

/**
 * Fill `box` with the leakage line of `profile` (report.leak_along_route: equal bins along the
 * route, each a share of the emitted light) over `outline`'s segments, coloured by `colour`
 * (0 … 1 → CSS colour, the 3D view's ramp); `unit` is 'mm' or 'in'.
 */
export function showLeakLine(box, outline, profile, unit, colour) {
  const segments = outline?.segments || [];
  const shares = profile?.share || [];
  if (!segments.length || !shares.length) {
    box.replaceChildren();
    box.hidden = true;
    return;
  }
  box.hidden = false;
  const total = shares.length * profile.bin_mm;
  const max = Math.max(...shares);
  const bins = shares.map((s) => {
    const cell = h('span', { class: 'leak-bin' });
    cell.style.background = s > 0 && max > 0 ? colour(0.15 + 0.85 * (s / max)) : 'transparent';
    return cell;
  });
  const strip = h('div', { class: 'leak-bins', 'aria-hidden': 'true' }, bins);
  // Boundaries and numbers: each segment's share of the route's length.
  const marks = segments.map((seg) => {
    const left = (100 * seg.s_start_mm) / total;
    const width = (100 * seg.length_mm) / total;
    const mark = h('span', { class: 'leak-seg', dataset: { segment: String(seg.index) }, title: `Segment ${seg.index + 1}` }, `${seg.index + 1}`);
    mark.style.left = `${left}%`;
    mark.style.width = `${width}%`;
    return mark;
  });
  const ruler = h('div', { class: 'leak-segs' }, marks);
  // In words, for those who cannot see the colours: where the most light leaks.
  let worst = 0;
  shares.forEach((s, i) => { if (s > shares[worst]) worst = i; });
  const at = (worst + 0.5) * profile.bin_mm;
  const seg = segments.find((s) => at >= s.s_start_mm && at <= s.s_start_mm + s.length_mm) || segments[segments.length - 1];
  const words = max > 0
    ? `Most leakage ${lengthText(at, unit)} from the entry face, in segment ${seg.index + 1}.`
    : 'No light leaks out of the side of the pipe.';
  box.replaceChildren(
    h('p', { class: 'leak-line-title', text: 'Leakage along the route, straightened (entry face on the left, darker = more leaked):' }),
    strip,
    ruler,
    h('p', { class: 'leak-ends' }, h('span', { text: 'Entry, 0' }), h('span', { class: 'leak-words', text: words }), h('span', { text: `Exit, ${lengthText(total, unit)}` })),
  );
  box.dataset.worstSegment = max > 0 ? String(seg.index) : '';
}
