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
