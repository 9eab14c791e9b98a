// The page's state: what the user typed (kept verbatim, so nothing is lost on reload) and the
// quick-look design document built from it (the same JSON the native command line reads).

import { parseNumber } from './numbers.js';
import { readStored, store } from './storage.js';

const STORAGE_KEY = 'tirtrace.quick-look.entries.v1';

/** The example the page starts from (invented values: a 3 mm acrylic pipe round a 90° bend). */
export const EXAMPLE_ENTRIES = Object.freeze({
  material: 'pmma',          // a library id, or 'custom'
  material_n: '1.49',        // used when material is 'custom'
  wavelength_nm: '587.6',
  front: 'air',              // 'air' or 'gel'
  front_n: '1.46',           // used when front is 'gel'
  surroundings: 'air',       // 'air', 'water', 'cladding' or 'custom'
  surroundings_n: '1.402',   // used when surroundings is 'cladding' or 'custom'
  diameter_mm: '3',
  launch_angle_is: 'cone_edge', // or 'half_intensity'
  launch_half_angle_deg: '30',
  bend_inner_radius_mm: '6',
  bend_angle_deg: '90',
});

function constant(text) {
  return { custom: { model: 'constant', n: parseNumber(text) } };
}

/** The quick-look design document for a set of entries (numbers may be NaN while typing). */
export function designFromEntries(e) {
  return {
    version: 1,
    material: e.material === 'custom' ? constant(e.material_n) : { library: e.material },
    wavelength_nm: parseNumber(e.wavelength_nm),
    surroundings:
      e.surroundings === 'cladding' || e.surroundings === 'custom'
        ? constant(e.surroundings_n)
        : { library: e.surroundings },
    launch_medium: e.front === 'gel' ? constant(e.front_n) : { library: 'air' },
    diameter_mm: parseNumber(e.diameter_mm),
    launch_half_angle_deg: parseNumber(e.launch_half_angle_deg),
    launch_angle_is: e.launch_angle_is,
    bend_inner_radius_mm: parseNumber(e.bend_inner_radius_mm),
    bend_angle_deg: parseNumber(e.bend_angle_deg),
  };
}

/**
 * Entries showing a quick-look design document (the inverse of designFromEntries), e.g. one the
 * designer made of a bend: a library material by name, a custom one by its constant index; the
 * surroundings as air, water or “another medium of index n”; the launch medium as air or a gel.
 * Throws on a document the form cannot show.
 */
export function entriesFromDesign(d) {
  const lib = (m) => m?.library;
  const n = (m) => {
    const c = m?.custom;
    if (c?.model !== 'constant' || !Number.isFinite(c.n)) throw new Error('a medium is neither a library material nor a constant index');
    return String(c.n);
  };
  const text = (x) => {
    if (!Number.isFinite(x)) throw new Error('a number is missing');
    return String(Number(x.toPrecision(10)));
  };
  const around = lib(d.surroundings);
  const front = lib(d.launch_medium);
  return {
    material: lib(d.material) ?? 'custom',
    material_n: lib(d.material) ? EXAMPLE_ENTRIES.material_n : n(d.material),
    wavelength_nm: text(d.wavelength_nm),
    front: front === 'air' ? 'air' : 'gel',
    front_n: front === 'air' ? EXAMPLE_ENTRIES.front_n : n(d.launch_medium),
    surroundings: around === 'air' || around === 'water' ? around : 'custom',
    surroundings_n: around === 'air' || around === 'water' ? EXAMPLE_ENTRIES.surroundings_n : n(d.surroundings),
    diameter_mm: text(d.diameter_mm),
    launch_angle_is: d.launch_angle_is === 'half_intensity' ? 'half_intensity' : 'cone_edge',
    launch_half_angle_deg: text(d.launch_half_angle_deg),
    bend_inner_radius_mm: text(d.bend_inner_radius_mm),
    bend_angle_deg: text(d.bend_angle_deg),
  };
}

/** Entries restored from this browser's storage, falling back to the example field by field. */
export function loadEntries() {
  const entries = { ...EXAMPLE_ENTRIES };
  const saved = readStored(STORAGE_KEY);
  if (saved && typeof saved === 'object') {
    for (const key of Object.keys(EXAMPLE_ENTRIES)) {
      if (typeof saved[key] === 'string') entries[key] = saved[key];
    }
  }
  return entries;
}

/** Keep the entries in this browser. Returns false when storage is unavailable. */
export const saveEntries = (entries) => store(STORAGE_KEY, entries);
