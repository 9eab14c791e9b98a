// Error text for people, shared by both pages and the trace workers.

/** The readable message of anything thrown or rejected: an Error's message, else its text. */
export const messageOf = (e) => (e instanceof Error ? e.message : String(e ?? 'unknown problem'));

/** `text` ending with one full stop (or the ? ! … it already ends with), never two. */
export const withFullStop = (text) => {
  const t = String(text).trim().replace(/\.+$/, '');
  return /[?!…]$/.test(t) ? t : `${t}.`;
};
