// Number formatting for the page. Every function returns '' for a value that is not a finite
// number, so the page can never print NaN, Infinity or undefined.

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
