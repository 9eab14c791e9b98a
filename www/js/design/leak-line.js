// Leakage along the route drawn flat, entry on the left and exit on the right, whatever way the
// 3D view is turned: the heat strip of the 3D view is hidden wherever the pipe runs toward the
// viewer, this line never is. Segment boundaries are marked and numbered as in the tables, and
// the length axis follows the unit shown. Drawing only: the shares come from the core.

import { h } from '../dom.js';
import { formatFixed } from '../format.js';

/**
 * The strip of light absorbed by coatings: light to dark teal (the colour the 3D view gives rays
 * a coating absorbs). Kept apart from the leakage: absorbed light does not leave the pipe (it
 * warms the coating), so it lights nothing beside it — mixed in, a black mask that stops stray
 * light would read as the worst leak.
 */
const COATING_RAMP = [[227, 250, 252], [102, 217, 232], [11, 114, 133], [8, 58, 68]];

export function coatingColour(x) {
  const t = Math.min(1, Math.max(0, x)) * (COATING_RAMP.length - 1);
  const i = Math.min(COATING_RAMP.length - 2, Math.floor(t));
  const f = t - i;
  const c = COATING_RAMP[i].map((v, k) => Math.round(v + f * (COATING_RAMP[i + 1][k] - v)));
  return `rgb(${c[0]},${c[1]},${c[2]})`;
}

/** A strip of `shares`, each bin coloured by `colour` relative to the largest. */
function strip(shares, colour, cls) {
  const max = Math.max(...shares);
  const bins = shares.map((s) => {
    const cell = h('span', { class: 'leak-bin' });
    cell.style.background = s > 0 && max > 0 ? colour(0.15 + 0.85 * (s / max)) : 'transparent';
    return cell;
  });
  return h('div', { class: cls, 'aria-hidden': 'true' }, bins);
}

/** The bin with the most of `shares`, and where it is: its middle (mm) and its segment. */
function worstOf(shares, binMm, segments) {
  let worst = 0;
  shares.forEach((s, i) => { if (s > shares[worst]) worst = i; });
  const at = (worst + 0.5) * binMm;
  const seg = segments.find((s) => at >= s.s_start_mm && at <= s.s_start_mm + s.length_mm) || segments[segments.length - 1];
  return { at, seg, max: shares[worst] };
}

/** A length given in mm, in the unit shown. */
const lengthText = (mm, unit) => (unit === 'in' ? `${formatFixed(mm / 25.4, 3)} in` : `${formatFixed(mm, mm < 10 ? 1 : 0)} mm`);

/**
 * Fill `box` with the leakage line of `profile` (report.leak_along_route: equal bins along the
 * route, each a share of the emitted light) over `outline`'s segments, coloured by `colour`
 * (0 … 1 → CSS colour, the 3D view's ramp); `unit` is 'mm' or 'in'. With `coated`
 * (report.coating_along_route, present only when the design has coatings), a second strip
 * under it, in its own colour, shows where coatings absorb light.
 */
export function showLeakLine(box, outline, profile, unit, colour, coated) {
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
  const bins = strip(shares, colour, 'leak-bins');
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
  const { at, seg } = worstOf(shares, profile.bin_mm, segments);
  const words = max > 0
    ? `Most leakage ${lengthText(at, unit)} from the entry face, in segment ${seg.index + 1}.`
    : 'No light leaks out of the side of the pipe.';
  // Light the coatings absorb, beside the leakage (never added to it).
  const absorbed = coated?.share?.length === shares.length ? coated.share : null;
  const coatedParts = [];
  if (absorbed) {
    const most = worstOf(absorbed, coated.bin_mm, segments);
    coatedParts.push(
      h('p', { class: 'leak-line-title coat-line-title', text: 'Absorbed by coatings along the route (not leaked: it stays in the coating; darker = more absorbed):' }),
      strip(absorbed, coatingColour, 'leak-bins coat-bins'),
      h('p', { class: 'leak-ends coat-words', text: most.max > 0
        ? `Coatings absorb most ${lengthText(most.at, unit)} from the entry face, in segment ${most.seg.index + 1}.`
        : 'The coatings absorb no light.' }),
    );
    box.dataset.worstCoatedSegment = most.max > 0 ? String(most.seg.index) : '';
  } else {
    delete box.dataset.worstCoatedSegment;
  }
  box.replaceChildren(
    h('p', { class: 'leak-line-title', text: 'Leakage along the route, straightened (entry face on the left, darker = more leaked):' }),
    bins,
    ruler,
    h('p', { class: 'leak-ends' }, h('span', { text: 'Entry, 0' }), h('span', { class: 'leak-words', text: words }), h('span', { text: `Exit, ${lengthText(total, unit)}` })),
    ...coatedParts,
  );
  box.dataset.worstSegment = max > 0 ? String(seg.index) : '';
}
