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

/** Decimals of a percentage with 95 % half-width `ci` (a share): two significant digits of the
 * half-width decide them, at least 1 and at most 3; 1 without a half-width. */
function shareDecimals(ci) {
  const c = isNum(ci) ? 100 * ci : 0;
  return c > 0 ? Math.min(3, Math.max(1, 1 - Math.floor(Math.log10(c)))) : 1;
}

/**
 * A share 0…1 as a percentage (without the % sign) with as many decimals as its 95 % half-width
 * `ci` (also a share) warrants: two significant digits of the half-width decide them, at least 1
 * and at most 3; 1 without a half-width. A dash when `share` is not a number.
 */
export function formatShare(share, ci) {
  return orDash(formatFixed(isNum(share) ? 100 * share : Number.NaN, shareDecimals(ci)));
}

/**
 * A half-width `ci` (its value) shown with `decimals` decimals; when that rounds to zero it says
 * so: "< 0.001" (less than the last shown unit), never "0.000". A dash when it is not a number
 * (an interval from fewer than two rays).
 */
function halfWidthText(ci, decimals) {
  if (!isNum(ci)) return '\u2014';
  const text = formatFixed(Math.abs(ci), decimals);
  if (Number(text) !== 0) return text;
  return `< ${formatFixed(10 ** -decimals, decimals)}`;
}

/** A share's 95 % half-width as a percentage (without the % sign), as `formatShare` shows it:
 * "0.4", or "< 0.001" when it rounds to zero. */
export const formatHalfWidth = (ci) => halfWidthText(isNum(ci) ? 100 * ci : ci, shareDecimals(ci));

/** A share and its 95 % half-width as percentages: "12.3 % ± 0.4", "99.961 % ± < 0.001". */
export const formatShareCi = (share, ci) => `${formatShare(share, ci)} % ± ${formatHalfWidth(ci)}`;

/**
 * An amount (a flux, an intensity) with 3 significant figures: plain from 0.01 to 10⁶ ("1620",
 * "0.0347"), else in exponent notation ("1.23e-4"). A dash when it is not a number. For figures
 * with a unit, use `formatQuantity`, which never needs the exponent.
 */
export function formatAmount(x) {
  if (!isNum(x)) return '\u2014';
  const a = Math.abs(x);
  if (x === 0 || (a >= 0.01 && a < 1e6)) return formatPlain(x, 3);
  return minus(x.toExponential(2));
}

/**
 * The units a quantity may be shown in, largest first, as [size in the report's unit, name]: the
 * report's unit (lm, mW, cd, mW/sr, cd/m²) and its SI submultiples, so that small values read
 * without an exponent.
 */
const UNIT_STEPS = {
  lm: [[1, 'lm'], [1e-3, 'mlm'], [1e-6, '\u00b5lm'], [1e-9, 'nlm']],
  mW: [[1e3, 'W'], [1, 'mW'], [1e-3, '\u00b5W'], [1e-6, 'nW']],
  cd: [[1, 'cd'], [1e-3, 'mcd'], [1e-6, '\u00b5cd'], [1e-9, 'ncd']],
  'mW/sr': [[1e3, 'W/sr'], [1, 'mW/sr'], [1e-3, '\u00b5W/sr'], [1e-6, 'nW/sr']],
  'cd/m²': [[1, 'cd/m²']],
};

/**
 * A quantity and its 95 % half-width in `unit` (as the report names it) or a submultiple chosen
 * so that the value reads plainly: "716 ± 3 mlm", "45.2 ± < 0.1 µW", "12,300 ± 410 cd/m²". The
 * value has 3 significant figures (whole numbers from 1000 up, with thousands separators); the
 * half-width has the same decimals, or says "< " the last shown unit when it rounds to zero, or a
 * dash when it is not a number. Never in exponent notation. A dash when the value is not a
 * number.
 */
export function formatQuantity(value, ci, unit) {
  if (!isNum(value)) return '\u2014';
  const steps = UNIT_STEPS[unit] || [[1, unit]];
  const base = steps.find(([f]) => f === 1) || steps[0];
  if (value === 0 && ci === 0) return `0 ${base[1]}`; // no ray at all: exactly nothing
  // Pick the unit from the value rounded to 3 figures (999.7 mcd is 1.00 cd), or from the
  // half-width when the value is 0.
  const size = Number(Math.abs(value > 0 || value < 0 ? value : isNum(ci) ? ci : 0).toPrecision(3));
  const [factor, name] = size > 0 ? steps.find(([f]) => size >= f) || steps[steps.length - 1] : base;
  const rounded = Number((value / factor).toPrecision(3));
  const magnitude = rounded === 0 ? 0 : Math.floor(Math.log10(Math.abs(rounded)));
  const decimals = Math.max(0, 2 - magnitude);
  if (decimals > 0) return `${formatFixed(rounded, decimals)} ± ${halfWidthText(isNum(ci) ? ci / factor : ci, decimals)} ${name}`;
  // 1000 and up: whole numbers with separators, the half-width rounded to the value's last
  // significant place (52,300 ± 1,200).
  const place = 10 ** Math.max(0, magnitude - 2);
  const grouped = (x) => minus(x.toLocaleString('en', { maximumFractionDigits: 0 }));
  let ciText = '\u2014';
  if (isNum(ci)) {
    const c = Math.round(Math.abs(ci / factor) / place) * place;
    ciText = c > 0 ? grouped(c) : `< ${grouped(place)}`;
  }
  return `${grouped(rounded)} ± ${ciText} ${name}`;
}

/** A whole count with thousands separators: "100,000". */
export const formatCount = (n) => n.toLocaleString('en');
