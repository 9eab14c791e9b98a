// The design page's state: the scenario document (the same JSON the native command line reads),
// the text the user typed into each number field (kept verbatim so nothing typed is lost), and
// the chosen length unit. Plus keeping it: local storage, files, and share links.

import { parseNumber } from '../numbers.js';
import { readStored, store } from '../storage.js';

const STORAGE_KEY = 'tirtrace.design.v1';

export const MM_PER_INCH = 25.4;

/** The design a first visit starts from (an invented desk-lamp touch-ring indicator). */
export const STARTER = Object.freeze({
  version: 1,
  name: 'Desk lamp touch-ring indicator: 3 mm acrylic pipe, one bend',
  guide: {
    section: { round: { diameter_mm: 3 } },
    material: { library: 'pmma' },
    surroundings: { library: 'air' },
    // Acrylic's typical attenuation in the core's material library: the field follows the material.
    attenuation_db_per_m: 0.3,
  },
  route: [
    { straight: { length_mm: 5 } },
    { bend: { radius_mm: 8, angle_deg: 90, turn_deg: 0 } },
    { straight: { length_mm: 10 } },
  ],
  source: {
    emitter: { led: { area: { square: { side_mm: 0.5 } }, pattern: 'lambertian' } },
    wavelength_nm: 525,
    gap_mm: 0.3,
    gap_medium: { library: 'air' },
  },
  trace: { rays: 100000, seed: 1, max_interactions: 10000 },
});

export const clone = (x) => JSON.parse(JSON.stringify(x));

// ---------------------------------------------------------------- paths

/**
 * Split a field path in the core's syntax (`route[2].bend.radius_mm`, `source.offset_mm[0]`) into
 * keys and indices.
 */
export function pathKeys(path) {
  const keys = [];
  for (const part of path.split('.')) {
    const m = part.match(/^([^[\]]*)((?:\[\d+\])*)$/);
    if (!m) return null;
    if (m[1]) keys.push(m[1]);
    for (const idx of m[2].matchAll(/\[(\d+)\]/g)) keys.push(Number(idx[1]));
  }
  return keys;
}

/** The value at `path`, or undefined. */
export function getAt(obj, path) {
  const keys = pathKeys(path);
  if (!keys) return undefined;
  let v = obj;
  for (const k of keys) {
    if (v == null || typeof v !== 'object') return undefined;
    v = v[k];
  }
  return v;
}

/** Set the value at `path`, creating plain objects on the way. */
export function setAt(obj, path, value) {
  const keys = pathKeys(path);
  if (!keys || keys.length === 0) return;
  let v = obj;
  for (let i = 0; i < keys.length - 1; i += 1) {
    const k = keys[i];
    if (v[k] == null || typeof v[k] !== 'object') v[k] = typeof keys[i + 1] === 'number' ? [] : {};
    v = v[k];
  }
  v[keys[keys.length - 1]] = value;
}

/** Whether a field holds a length (converted by the mm / inch switch). */
export const isLength = (path) => /_mm(\[\d+\])?$/.test(path);

// ---------------------------------------------------------------- numbers

/** A stored value shown in the chosen unit, without trailing noise (e.g. 0.1181 in). */
export function showNumber(value, path, unit) {
  if (typeof value !== 'number' || !Number.isFinite(value)) return '';
  // Inches to 0.0001 in (2.5 µm) and at least three significant digits, so 2.5 mm shows as
  // 0.0984 (not 0.098425) and a 0.05 mm tolerance as 0.00197; the document keeps mm.
  if (unit === 'in' && isLength(path)) {
    const v = value / MM_PER_INCH;
    const decimals = v === 0 ? 4 : Math.min(12, Math.max(4, 2 - Math.floor(Math.log10(Math.abs(v)))));
    return String(Number(v.toFixed(decimals)));
  }
  return String(Number(value.toPrecision(10)));
}

/** A typed value in the chosen unit as stored (mm for lengths). */
export const toStored = (x, path, unit) => (unit === 'in' && isLength(path) ? x * MM_PER_INCH : x);

/**
 * The unit switch changed from `from` to `to` and the form has been redrawn from the design: put
 * back into `input` the `text` it held before, for the length at `path` whose stored value is
 * `stored` (mm). A text that only showed the stored value is left as redrawn; a number typed but
 * not used yet is written in the new unit (2 mm → 0.0787 in), and back exactly when untouched in
 * between (0.0787 in → 2 mm, not 1.99898); any other text stays as typed.
 */
export function carryTyped(input, text, stored, path, from, to) {
  if (from === to || !isLength(path) || text === showNumber(stored, path, from)) return;
  let exact;
  if (text === input.dataset.carriedText) exact = Number(input.dataset.carriedMm);
  else {
    const x = parseNumber(text);
    if (Number.isNaN(x)) {
      input.value = text;
      return;
    }
    exact = toStored(x, path, from);
  }
  input.value = showNumber(exact, path, to);
  input.dataset.carriedText = input.value;
  input.dataset.carriedMm = String(exact);
}

// ---------------------------------------------------------------- the page state

/**
 * `{ scenario, drafts, unit, study?, tolerances?, lastComplete? }`: `drafts` maps a field path to the text typed there when it
 * is not (yet) a number, so it survives a reload; `unit` is 'mm' or 'in'; `study` the study panel's
 * set-up (see study.js), absent until one is made; `tolerances` the tolerances panel's (tolerance.js);
 * `lastComplete` the last scenario without problems, kept only while the design has some.
 */
export function freshState(scenario = STARTER) {
  return { scenario: clone(scenario), drafts: {}, unit: 'mm' };
}

/** The state kept in this browser, or null. */
export function loadState() {
  const saved = readStored(STORAGE_KEY);
  if (saved && typeof saved === 'object' && saved.scenario && typeof saved.scenario === 'object') {
    return {
      scenario: saved.scenario,
      drafts: saved.drafts && typeof saved.drafts === 'object' ? saved.drafts : {},
      unit: saved.unit === 'in' ? 'in' : 'mm',
      // The study set up beside the design (study.js), when there is one.
      ...(saved.study && typeof saved.study === 'object' ? { study: saved.study } : {}),
      // The search set up beside it and the panel's mode (find.js), when there are.
      ...(saved.find && typeof saved.find === 'object' ? { find: saved.find } : {}),
      ...(saved.findMode === 'find' ? { findMode: 'find' } : {}),
      // The tolerances set up beside the design (tolerance.js), when there are some.
      ...(saved.tolerances && Array.isArray(saved.tolerances.spreads) ? { tolerances: saved.tolerances } : {}),
      // The last design without problems, kept while some entry needs fixing (main.js), so a
      // reload can show its results again.
      ...(saved.lastComplete && typeof saved.lastComplete === 'object' ? { lastComplete: saved.lastComplete } : {}),
    };
  }
  return null;
}

/** Keep the state in this browser; false when storage is unavailable. */
export const saveState = (state) => store(STORAGE_KEY, state);

// ---------------------------------------------------------------- share links

const toBase64Url = (bytes) => {
  let s = '';
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
};

const fromBase64Url = (text) => {
  const b = atob(text.replace(/-/g, '+').replace(/_/g, '/'));
  const out = new Uint8Array(b.length);
  for (let i = 0; i < b.length; i += 1) out[i] = b.charCodeAt(i);
  return out;
};

async function pipe(bytes, stream) {
  const out = new Response(new Blob([bytes]).stream().pipeThrough(stream));
  return new Uint8Array(await out.arrayBuffer());
}

/**
 * The most bytes of design text the page reads from a file or a share link: 2 MB. A design is a
 * few kB (the largest valid one some 100 kB); deflated text expands up to a thousandfold, so
 * without a bound a link of a few hundred kB could take gigabytes of the tab's memory.
 */
export const MAX_DESIGN_BYTES = 2_000_000;

/** Why a design text is refused for its size (the page adds its own opening). */
export const tooLargeMessage = (what) =>
  `${what} more than ${MAX_DESIGN_BYTES / 1e6} MB of text, and a design is a few kB`;

/** `bytes` inflated (deflate-raw), read chunk by chunk and stopped past MAX_DESIGN_BYTES. */
async function inflate(bytes) {
  const reader = new Blob([bytes]).stream().pipeThrough(new DecompressionStream('deflate-raw')).getReader();
  const chunks = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.length;
    if (size > MAX_DESIGN_BYTES) {
      reader.cancel().catch(() => {});
      return null;
    }
    chunks.push(value);
  }
  const out = new Uint8Array(size);
  let at = 0;
  for (const c of chunks) {
    out.set(c, at);
    at += c.length;
  }
  return out;
}

/**
 * A link to this page carrying the whole scenario in its fragment (never sent to a server):
 * `#d=` deflated JSON in base64url where the browser can compress, else `#j=` plain JSON.
 */
export async function shareLink(scenario, base = location.href) {
  const json = new TextEncoder().encode(JSON.stringify(scenario));
  const url = new URL(base);
  if (typeof CompressionStream === 'function') {
    url.hash = `d=${toBase64Url(await pipe(json, new CompressionStream('deflate-raw')))}`;
  } else {
    url.hash = `j=${toBase64Url(json)}`;
  }
  return url.href;
}

/**
 * Share links longer than this may not arrive whole: about 2,000 characters is the length
 * commonly given for a link that must work everywhere — older browsers, and mail and chat
 * programs, cut or refuse longer ones (common practice, no source). Current browsers open far
 * longer links, so a longer one is still made, with a warning and the file offered instead.
 */
export const LINK_WARN_CHARS = 2000;

/**
 * The scenario JSON text in a share-link fragment (`#d=…` or `#j=…`), null when the fragment is
 * none (empty, or an anchor on the page); throws a readable Error for a link that is malformed,
 * does not decode or expands beyond MAX_DESIGN_BYTES.
 */
export async function scenarioFromFragment(hash = location.hash) {
  const m = hash.match(/^#([dj])=(.*)$/s);
  if (!m) return null;
  if (!m[2]) throw new Error('it ends where its design should begin');
  if (!/^[A-Za-z0-9_-]+$/.test(m[2])) throw new Error('its design text holds characters a share link never has');
  let bytes;
  try {
    bytes = fromBase64Url(m[2]);
    if (m[1] === 'd' && bytes.length <= MAX_DESIGN_BYTES) bytes = await inflate(bytes);
  } catch {
    throw new Error('its design text does not decode');
  }
  if (bytes === null || bytes.length > MAX_DESIGN_BYTES) throw new Error(tooLargeMessage('it expands to'));
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw new Error('its design text does not decode');
  }
}

// ---------------------------------------------------------------- files

/** A file name from the design's name: plain letters, digits and dashes. */
export function fileNameFor(scenario) {
  const base = String(scenario?.name || 'light-guide')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 60);
  return `${base || 'light-guide'}.tirtrace.json`;
}

/** Offer `blob` as a download named `name`. */
export function download(blob, name) {
  const a = document.createElement('a');
  a.href = URL.createObjectURL(blob);
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(a.href), 10_000);
}
