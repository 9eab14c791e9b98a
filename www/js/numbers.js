// Numbers as people type them, shared by both pages.

/**
 * Read a number the way a person types it: surrounding spaces, a leading sign, a decimal comma
 * or point, an exponent. Anything else (empty text included) is NaN, which the page reports
 * against its field.
 */
export function parseNumber(text) {
  if (typeof text !== 'string') return Number.NaN;
  let t = text.trim().replace(/\u2212/g, '-');
  if (!t.includes('.') && (t.match(/,/g) || []).length === 1) t = t.replace(',', '.');
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t)) return Number.NaN;
  return Number(t);
}
