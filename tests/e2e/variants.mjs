// Variant scenarios that reach the parts the examples do not, built on an example scenario:
// a tabulated, tilted, offset LED; a rectangular bar with a taper, a bend across its height, a
// clip and a window receiver; a round pipe with a bare and a coated reflecting corner; a beam
// through a high-index gel; shaped faces (a domed entry and a
// cut exit; a pocket over the LED and a domed exit; a cut entry and a textured exit); coatings of
// every kind (white paint, metal, black) on a bend and a straight. Used by the wasm-vs-native test
// and by scripts/same_output.mjs.

/** `[[name, scenario], …]` built on `base` (the thermostat example). */
export function variantsOf(base) {
  return [
    ['variant_table_led', {
      ...base,
      source: { ...base.source, tilt_deg: 12, tilt_toward_deg: 200, offset_mm: [0.3, -0.2],
        emitter: { led: { area: { disk: { diameter_mm: 0.8 } },
          pattern: { table: { points: [[0, 1], [20, 0.95], [45, 0.6], [70, 0.15], [85, 0]] } } } } },
    }],
    ['variant_rect_taper', {
      ...base,
      guide: { section: { rectangular: { width_mm: 4, height_mm: 2 } }, material: { library: 'polycarbonate' },
        surroundings: { library: 'air' }, attenuation_db_per_m: 2,
        contacts: [{ segment: 1, from_mm: 0, to_mm: 3, sector_from_deg: 80, sector_to_deg: 100,
          medium: { library: 'pdms' } }] },
      route: [{ straight: { length_mm: 4 } },
        { taper: { length_mm: 8, end_section: { rectangular: { width_mm: 3, height_mm: 1.5 } } } },
        { bend: { radius_mm: 6, angle_deg: 75, turn_deg: 90 } }, { straight: { length_mm: 5 } }],
      receiver: { width_mm: 5, height_mm: 3, distance_mm: 2 },
    }],
    ['variant_corners', {
      ...base,
      guide: { ...base.guide, contacts: [] },
      route: [{ straight: { length_mm: 5 } }, { corner: { angle_deg: 70, turn_deg: 30 } },
        { straight: { length_mm: 6 } }, { corner: { angle_deg: 120, turn_deg: 200, coating: { reflectance: 0.93 } } },
        { straight: { length_mm: 4 } }],
    }],
    ['variant_coatings', {
      ...base,
      guide: { ...base.guide, coatings: [
        { name: 'white back', kind: { white_paint: { reflectance: 0.85 } }, segment: 1, from_mm: 2,
          to_mm: 12, sector_from_deg: 140, sector_to_deg: 220 },
        { name: 'mirror', kind: { metal: { reflectance: 0.92 } }, segment: 3, from_mm: 0, to_mm: 11.7,
          sector_from_deg: 0, sector_to_deg: 90 },
        { name: 'mask', kind: 'black', segment: 2, from_mm: 8, to_mm: 10 }] },
    }],
    ['variant_gel_beam', {
      ...base,
      source: { ...base.source, gap_mm: 0.5, gap_medium: { custom: { model: 'constant', n: 1.7 } },
        emitter: { beam: { diameter_mm: 2.5, divergence_half_angle_deg: 35 } } },
    }],
    ['variant_shaped_faces', {
      ...base,
      guide: { ...base.guide, entry_face: { dome: { radius_mm: 2.2 } }, exit_face: { cut: { angle_deg: 25 } } },
      source: { ...base.source, gap_mm: 1.2 },
      receiver: { diameter_mm: 6, distance_mm: 4 },
    }],
    ['variant_pocket_entry', {
      ...base,
      guide: { ...base.guide, entry_face: { pocket: { radius_mm: 1.2, depth_mm: 0.8 } }, exit_face: { dome: { radius_mm: 3 } } },
      source: { ...base.source, gap_mm: 0.1 },
      receiver: { diameter_mm: 6, distance_mm: 4 },
    }],
    ['variant_textured_exit', {
      ...base,
      guide: { ...base.guide, entry_face: { cut: { angle_deg: 15 } }, exit_face: { textured: { roughness: 0.35 } } },
      source: { ...base.source, gap_mm: 1.5 },
    }],
  ];
}
