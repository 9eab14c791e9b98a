// Number formatting for both pages. The format* functions return '' for a value that is not a
// finite number, and the design page's tables show that as a dash (orDash), so no page can ever
// print NaN, Infinity or undefined.

const isNum = (x) => typeof x === 'number' && Number.isFinite(x);

/** Typographic minus instead of the hyphen. */
const minus = (s) => s.replace(/^-/, '\u2212');

/** A fixed number of decimals: angles (0.01°), indices (1e-4). */
export function formatFixed(x, decimals) {
  if (!isNum(x)) return '';
  const s = x.toFixed(decimals);
  return minus(/^-0(\.0*)?$/.test(s) ? s.slice(1) : s);
}

/** `sig` significant figures, trailing zeros kept ("3.00"), never in exponent notation. */
export function formatSig(x, sig) {
  if (!isNum(x)) return '';
  if (x === 0) return formatFixed(0, Math.max(0, sig - 1));
  const magnitude = Math.floor(Math.log10(Math.abs(x)));
  const decimals = Math.max(0, sig - 1 - magnitude);
  // Round first so 9.996 with 3 figures becomes "10.0", not "9.996".
  const rounded = Number(x.toPrecision(sig));
  const m2 = Math.floor(Math.log10(Math.abs(rounded)));
  return formatFixed(rounded, Math.max(0, Math.min(decimals, sig - 1 - m2)));
}

/** Up to `sig` significant figures with trailing zeros dropped ("587.6", "1620"). */
export function formatPlain(x, sig) {
  if (!isNum(x)) return '';
  return minus(String(Number(x.toPrecision(sig))));
}

/** A refractive index: four decimals, the precision of good catalogue data. */
export function formatIndex(n) {
  return formatFixed(n, 4);
}

/** A fraction 0…1 as a percentage with `sig` significant figures (without the % sign). */
export function formatPercent(fraction, sig = 3) {
  return formatSig(isNum(fraction) ? fraction * 100 : Number.NaN, sig);
}

/** A dash in place of an empty text (a value that is not a number), for figures and tables. */
export const orDash = (text) => (text === '' ? '\u2014' : text);

/**
 * A share 0…1 as a percentage (without the % sign) with as many decimals as its 95 % half-width
 * `ci` (also a share) warrants: two significant digits of the half-width decide them, at least 1
 * and at most 3; 1 without a half-width. A dash when `share` is not a number.
 */
export function formatShare(share, ci) {
  const c = isNum(ci) ? 100 * ci : 0;
  const decimals = c > 0 ? Math.min(3, Math.max(1, 1 - Math.floor(Math.log10(c)))) : 1;
  return orDash(formatFixed(isNum(share) ? 100 * share : Number.NaN, decimals));
}

/** A share and its 95 % half-width as percentages: "12.3 % ± 0.4". */
export const formatShareCi = (share, ci) => `${formatShare(share, ci)} % ± ${formatShare(ci, ci)}`;

/**
 * An amount (a flux, an intensity) with 3 significant figures: plain from 0.01 to 10⁶ ("1620",
 * "0.0347"), else in exponent notation ("1.23e-4"). A dash when it is not a number.
 */
export function formatAmount(x) {
  if (!isNum(x)) return '\u2014';
  const a = Math.abs(x);
  if (x === 0 || (a >= 0.01 && a < 1e6)) return formatPlain(x, 3);
  return minus(x.toExponential(2));
}

/** A whole count with thousands separators: "100,000". */
export const formatCount = (n) => n.toLocaleString('en');
