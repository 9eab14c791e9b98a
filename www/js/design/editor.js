// The design form: source, pipe, route (a list of segments to add, move, remove and edit),
// mounts touching the pipe, detector and trace settings. It edits the scenario document in the
// page state and reports each change; it computes nothing.

import { h } from '../dom.js';
import { parseNumber } from '../numbers.js';
import { facePicture } from './face-picture.js';
import { getAt, isLength, setAt, showNumber, toStored } from './scenario.js';
import { coatingsPart } from './coatings.js';
import { dropZones, moveZones, zoneRows } from './zones.js';

/** “200,000”: a thousands separator or a decimal comma? Refused rather than guessed. */
const looksLikeThousands = (text) => /^\s*[+-]?[1-9]\d{0,2}(,\d{3})+\s*$/.test(text);

const idFor = (path) => `f-${path.replace(/[^A-Za-z0-9]+/g, '-')}`;

/** The key of a one-key object (a serde enum variant): { round: {…} } → 'round'. */
const variant = (obj) => (obj && typeof obj === 'object' ? Object.keys(obj)[0] : obj);

const SEGMENT_DEFAULTS = {
  straight: () => ({ straight: { length_mm: 10 } }),
  bend: () => ({ bend: { radius_mm: 10, angle_deg: 90, turn_deg: 0 } }),
  taper: (section) => ({ taper: { length_mm: 8, end_section: JSON.parse(JSON.stringify(section)) } }),
  corner: () => ({ corner: { angle_deg: 90, turn_deg: 0 } }),
};

const SEGMENT_NAMES = { straight: 'Straight', bend: 'Bend', taper: 'Taper', corner: 'Corner' };

/** How the zone builder names a mount. */
const MOUNT = { list: 'contacts', word: 'mount', id: 'contact', addId: 'add-contact', nameLabel: 'What touches the pipe' };

/** A bend's radius hint before the core has checked the design. */
const BEND_RADIUS_HINT = 'Of the pipe’s centre line; the inner radius is this less half the pipe’s size across the bend.';

/** Typed text quoted back in a message: never a whole paste. */
const quoted = (text) => {
  const t = String(text).trim();
  return `“${t.length > 24 ? `${t.slice(0, 24)}…` : t}”`;
};

/** Where a path's field sits, in the form's words: `route[1]…` → “Segment 2”, a mount → “Mount 1”. */
function placeOf(path) {
  const seg = path.match(/^route\[(\d+)\]/);
  if (seg) return `Segment ${Number(seg[1]) + 1}`;
  const mount = path.match(/^guide\.contacts\[(\d+)\]/);
  if (mount) return `Mount ${Number(mount[1]) + 1}`;
  const coating = path.match(/^guide\.coatings\[(\d+)\]/);
  if (coating) return `Coating ${Number(coating[1]) + 1}`;
  if (path.startsWith('source')) return 'Light source';
  if (path.startsWith('guide')) return 'Light pipe';
  if (path.startsWith('receiver')) return 'Detector';
  if (path.startsWith('trace')) return 'Trace settings';
  return 'The design';
}

/** A message with its lengths in inches (the core words every length in mm). */
const inInches = (text) => text.replace(/(-?\d+(?:\.\d+)?(?:e-?\d+)?) mm\b/g, (_, x) => `${Number((Number(x) / 25.4).toPrecision(4))} in`);

export class Editor {
  /**
   * @param root element to render into
   * @param state the page state ({ scenario, drafts, unit })
   * @param materials the core's material list
   * @param onChange called after every edit with { structural: bool }
   */
  constructor(root, state, materials, onChange, readTable = null) {
    this.root = root;
    /** The core's reader of a pasted intensity table (text → { points, … }, throws a sentence). */
    this.readTable = readTable ?? (() => {
      throw new Error('The table cannot be read here');
    });
    this.state = state;
    this.materials = materials;
    this.onChange = onChange;
    /** Messages shown under fields: path → text. */
    this.messages = new Map();
    /** Under each bend's radius: its inner radius (route index → text), from showBendHints. */
    this.bendHints = new Map();
  }

  get s() {
    return this.state.scenario;
  }

  // ------------------------------------------------------------ building blocks

  /** A number field bound to `path`. */
  num(path, label, unit, { hint, step, inputmode = 'decimal' } = {}) {
    const id = idFor(path);
    const shownUnit = isLength(path) ? this.state.unit : unit;
    const draft = this.state.drafts[path];
    const input = h('input', {
      id,
      type: 'text',
      inputmode,
      spellcheck: 'false',
      autocomplete: 'off',
      dataset: { path },
      'aria-describedby': `${id}-msg${hint ? ` ${id}-hint` : ''}`,
      step,
    });
    input.value = draft ?? showNumber(getAt(this.s, path), path, this.state.unit);
    input.addEventListener('input', () => this.typed(path, input.value));
    input.addEventListener('change', () => this.settle(path, input));
    // Every number but the trace settings can be varied in a study (the study panel, study.js,
    // listens for clicks on these buttons; the pressed one is the number the study varies).
    const vary = path.startsWith('trace.')
      ? null
      : h('button', {
        type: 'button',
        class: 'vary-pick',
        dataset: { varyPath: path, varyLabel: label },
        'aria-pressed': String(this.state.study?.field === path),
        'aria-label': `Vary “${label}” in a study`,
        title: 'Vary this number in a study',
        text: '⇆',
      });
    // … and made within a tolerance (the tolerances panel, tolerance.js, listens for these).
    const tol = vary
      ? h('button', {
        type: 'button',
        class: 'tol-pick',
        dataset: { tolPath: path, tolLabel: label },
        'aria-pressed': String(Boolean(this.state.tolerances?.spreads?.some((t) => t.field === path))),
        'aria-label': `Add a tolerance on “${label}”`,
        title: 'Add a tolerance on this number',
        text: '±',
      })
      : null;
    return h(
      'div',
      { class: 'field' },
      // The unit is part of the field's name for a screen reader ("Chip side, mm"), not glued on.
      h('label', { for: id }, label, shownUnit ? h('span', { class: 'unit-label' }, h('span', { class: 'visually-hidden', text: ', ' }), shownUnit) : null),
      vary ? h('div', { class: 'with-vary' }, input, vary, tol) : input,
      hint ? h('p', { class: 'hint', id: `${id}-hint`, text: hint }) : null,
      this.msgEl(path),
    );
  }

  msgEl(path) {
    const text = this.messages.get(path);
    return h('p', { class: 'field-msg', id: `${idFor(path)}-msg`, dataset: { for: path }, hidden: !text, text: text || '' });
  }

  /** A select whose choice is applied by `apply(value)`; `value` is the current choice. */
  choice(key, label, options, value, apply, { hint } = {}) {
    const id = idFor(key);
    const sel = h(
      'select',
      { id, dataset: { path: key }, 'aria-describedby': `${id}-msg${hint != null ? ` ${id}-hint` : ''}` },
      options.map(([v, text]) => h('option', { value: v, text })),
    );
    sel.value = value;
    sel.addEventListener('change', () => {
      apply(sel.value);
      // What was typed under the replaced choice has no field any more.
      for (const path of Object.keys(this.state.drafts)) {
        if (path.startsWith(`${key}.`)) delete this.state.drafts[path];
      }
      this.changed(true, id);
    });
    // The pipe's material can be compared in a study (a list of library materials).
    const vary = key === 'guide.material'
      ? h('button', {
        type: 'button',
        class: 'vary-pick',
        dataset: { varyPath: 'guide.material.library', varyLabel: label },
        'aria-pressed': String(this.state.study?.field === 'guide.material.library'),
        'aria-label': `Compare “${label}” in a study`,
        title: 'Compare materials in a study',
        text: '⇆',
      })
      : null;
    return h(
      'div',
      { class: 'field' },
      h('label', { for: id, text: label }),
      vary ? h('div', { class: 'with-vary' }, sel, vary) : sel,
      hint != null ? h('p', { class: 'hint', id: `${id}-hint`, text: hint }) : null,
      this.msgEl(key),
    );
  }

  /**
   * A material choice at `path` ({ library } or { custom: constant n }); `onPick(before)` runs
   * after a choice is applied, with the choice it replaced.
   */
  material(path, label, { filter = () => true, hint, optional, onPick } = {}) {
    const given = getAt(this.s, path);
    const current = given || { library: 'air' };
    const isCustom = !!current.custom;
    const options = this.materials.filter(filter).map((m) => [m.id, m.name]);
    options.push(['custom', 'Another medium: index n']);
    if (optional) options.unshift(['', optional]);
    const value = optional && !given ? '' : isCustom ? 'custom' : current.library;
    const parts = [
      this.choice(path, label, options, value, (v) => {
        if (v === '') {
          const keys = path.split('.');
          delete getAt(this.s, keys.slice(0, -1).join('.'))[keys[keys.length - 1]];
        } else if (v === 'custom') {
          const n = current.custom?.n ?? 1.5;
          setAt(this.s, path, { custom: { model: 'constant', n } });
        } else {
          setAt(this.s, path, { library: v });
        }
        onPick?.(given);
      }, { hint }),
    ];
    if (isCustom && given) {
      if (current.custom.model === 'constant') {
        parts.push(this.num(`${path}.custom.n`, 'Index n (relative to air)', ''));
      } else {
        parts.push(h('p', { class: 'hint', text: `A ${current.custom.model} index model from the file (edit it in the file).` }));
      }
    }
    return parts;
  }

  // ------------------------------------------------------------ edits

  /** Text typed into a number field: store the number, or keep the text as a draft. */
  typed(path, text) {
    const x = parseNumber(text);
    const label = this.labelOf(path) ?? path;
    if (looksLikeThousands(text)) {
      this.state.drafts[path] = text;
      this.setMessage(path, `${label}: ${quoted(text)} could be read two ways: write it without a thousands separator (e.g. ${text.trim().replace(/,/g, '')}), or with a decimal point`);
    } else if (Number.isFinite(x)) {
      delete this.state.drafts[path];
      setAt(this.s, path, toStored(x, path, this.state.unit));
      this.setMessage(path, null);
    } else {
      this.state.drafts[path] = text;
      this.setMessage(path, `${label} must be a number${text.trim() ? `, got ${quoted(text)}` : ' (it is empty)'}`);
    }
    this.changed(false);
  }

  /** On leaving a field, show a valid number in its tidy form. */
  settle(path, input) {
    if (this.state.drafts[path] === undefined) {
      input.value = showNumber(getAt(this.s, path), path, this.state.unit);
    }
  }

  changed(structural, focusId) {
    if (structural) this.render(focusId);
    this.onChange({ structural });
  }

  /** Show (or clear, with null) the message under a field. Returns whether a field showed it. */
  setMessage(path, text) {
    if (text) this.messages.set(path, text);
    else this.messages.delete(path);
    const el = this.root.querySelector(`.field-msg[data-for="${CSS.escape(path)}"]`);
    const input = this.root.querySelector(`[data-path="${CSS.escape(path)}"]`);
    if (input) input.setAttribute('aria-invalid', text ? 'true' : 'false');
    if (!el) return false;
    el.hidden = !text;
    el.textContent = text || '';
    return true;
  }

  /** Problems from typing: fields whose text is not a number (`says` as the core words it, after the field). */
  draftProblems() {
    return Object.entries(this.state.drafts)
      .filter(([field]) => this.root.querySelector(`[data-path="${CSS.escape(field)}"]`))
      .map(([field, text]) => {
        const says = looksLikeThousands(String(text))
          ? `: ${quoted(text)} could be read two ways: write it without a thousands separator, or with a decimal point`
          : `must be a number${String(text).trim() ? `, got ${quoted(text)}` : ' (it is empty)'}`;
        return { field, says, message: `${field}${says.startsWith(':') ? '' : ' '}${says}` };
      });
  }

  /**
   * Under each bend's radius, its inner radius and the leak-free inner radius from the core's
   * closed form (`bends` as closed_form gives them): the tables and the quick look speak of the
   * inner radius, the form asks the centre line's.
   */
  showBendHints(bends) {
    const mm = (x) => (this.state.unit === 'in' ? `${Number((x / 25.4).toPrecision(4))} in` : `${Number(x.toPrecision(4))} mm`);
    this.bendHints = new Map((bends || []).map((b) => [b.segment, `Inner radius ${mm(b.inner_radius_mm)} (the centre line's less half the pipe's ${mm(b.size_across_mm)} across the bend)${b.leak_free_inner_radius_mm == null ? '' : `; leak-free from ${mm(b.leak_free_inner_radius_mm)} inner`}.`]));
    for (const [segment, text] of this.bendHints) {
      const el = this.root.querySelector(`#${idFor(`route[${segment}].bend.radius_mm`)}-hint`);
      if (el) el.textContent = text;
    }
  }

  /** The label of the field at `path` as the form shows it, without its unit (null when not shown). */
  labelOf(path) {
    const input = this.root.querySelector(`[data-path="${CSS.escape(path)}"]`);
    const label = input && this.root.querySelector(`label[for="${CSS.escape(input.id)}"]`);
    if (!label) return null;
    const unit = label.querySelector('.unit-label')?.textContent ?? '';
    return label.textContent.slice(0, label.textContent.length - unit.length).trim();
  }

  /**
   * A problem in the form's words: the field's label, then what the core says after the path
   * ("Radius (centre line) must be more than 1.5 mm (…), got 1"); lengths in the form's unit.
   * `withPlace` adds where the field is ("Segment 2 · "), for the list above the form.
   */
  inWords(p, path = p.field, { withPlace = false } = {}) {
    const says = p.says || p.message;
    const label = this.labelOf(path);
    let text;
    if (!label) text = p.message;
    else if (says.startsWith(':')) text = `${label}${says}`;
    else if (/^[a-z]/.test(says)) text = `${label} ${says}`;
    else text = says; // a sentence of its own ("The mount “clip” ends at …")
    if (this.state.unit === 'in') text = inInches(text);
    text = text.charAt(0).toUpperCase() + text.slice(1);
    return withPlace && label ? `${placeOf(path)} · ${text}` : text;
  }

  /** Show the core's problems under their fields; returns those no field could show, in the form's words. */
  showProblems(problems) {
    for (const path of [...this.messages.keys()]) {
      if (this.state.drafts[path] === undefined) this.setMessage(path, null);
    }
    const loose = [];
    for (const p of problems) {
      if (this.setMessage(p.field, this.inWords(p))) continue;
      // A problem about a whole object (e.g. `route[1].bend`) goes to its first field.
      const input = this.root.querySelector(`[data-path^="${CSS.escape(p.field)}"]`);
      const text = `${placeOf(p.field)}: ${p.says || p.message}`;
      if (!input || !this.setMessage(input.dataset.path, text)) loose.push({ ...p, message: this.inWords(p, p.field, { withPlace: true }) });
    }
    return loose;
  }

  /**
   * Move the drafts (and their messages) of list items when items move: `map(i)` gives an item's
   * new index, or null when it is gone. `list` is 'route', 'guide.contacts' or 'guide.coatings'.
   */
  remapDrafts(list, map) {
    const re = new RegExp(`^${list.replace('.', '\\.')}\\[(\\d+)\\](.*)$`);
    const moved = {};
    for (const [path, text] of Object.entries(this.state.drafts)) {
      const m = path.match(re);
      if (!m) {
        moved[path] = text;
        continue;
      }
      const to = map(Number(m[1]));
      if (to != null) moved[`${list}[${to}]${m[2]}`] = text;
    }
    this.state.drafts = moved;
    this.messages.clear();
  }

  // ------------------------------------------------------------ the form

  render(focusId) {
    const active = focusId || document.activeElement?.id;
    this.root.replaceChildren(
      this.sourcePart(),
      this.pipePart(),
      this.routePart(),
      this.contactsPart(),
      coatingsPart(this, this.segmentOptions()),
      this.receiverPart(),
      this.tracePart(),
    );
    if (active) document.getElementById(active)?.focus();
  }

  part(id, title, ...children) {
    return h('fieldset', { class: `part part-${id}`, id: `part-${id}` }, h('legend', { text: title }), ...children);
  }

  sourcePart() {
    const src = this.s.source;
    const kind = variant(src.emitter);
    const rows = [
      this.choice('source.emitter', 'Kind of source', [['led', 'LED'], ['beam', 'Collimated beam (laser or lens)']], kind, (v) => {
        src.emitter =
          v === 'beam'
            ? { beam: { diameter_mm: 1, divergence_half_angle_deg: 1 } }
            : { led: { area: { square: { side_mm: 0.5 } }, pattern: 'lambertian' } };
      }),
    ];
    if (kind === 'led') {
      const led = src.emitter.led;
      const area = variant(led.area);
      rows.push(
        this.choice(
          'source.emitter.led.area',
          'Emitting area',
          [['square', 'Square chip'], ['disk', 'Round chip'], ['rectangle', 'Rectangular chip']],
          area,
          (v) => {
            if (v === 'disk') led.area = { disk: { diameter_mm: 0.5 } };
            else if (v === 'rectangle') led.area = { rectangle: { width_mm: 1.6, height_mm: 0.8 } };
            else led.area = { square: { side_mm: 0.5 } };
          },
          { hint: 'A side-emitting package is its emitting window facing the entry; Tilt and Tilt toward set its beam’s angle to the pipe when it does not face it squarely.' },
        ),
      );
      if (area === 'disk') rows.push(this.num('source.emitter.led.area.disk.diameter_mm', 'Chip diameter', 'mm'));
      else if (area === 'rectangle') {
        rows.push(
          h(
            'div',
            { class: 'pair' },
            this.num('source.emitter.led.area.rectangle.width_mm', 'Chip width', 'mm', {
              hint: 'Along the pipe’s width when not tilted; Tilt toward turns it (90: along the height).',
            }),
            this.num('source.emitter.led.area.rectangle.height_mm', 'Chip height', 'mm'),
          ),
        );
      } else rows.push(this.num('source.emitter.led.area.square.side_mm', 'Chip side', 'mm'));
      const pattern = variant(led.pattern);
      rows.push(
        this.choice(
          'source.emitter.led.pattern',
          'Beam shape',
          [['lambertian', 'Lambertian (a bare chip)'], ['half_intensity', 'From the half-intensity angle'], ['table', 'From a table of intensity vs angle']],
          pattern,
          (v) => {
            if (v === 'half_intensity') led.pattern = { half_intensity: { half_angle_deg: 60 } };
            else if (v === 'table') led.pattern = { table: { points: [[0, 1], [30, 0.9], [60, 0.5], [90, 0]] } };
            else led.pattern = 'lambertian';
          },
        ),
      );
      if (pattern === 'half_intensity') {
        rows.push(this.num('source.emitter.led.pattern.half_intensity.half_angle_deg', 'Half-intensity angle', 'deg', {
          hint: 'Angle off axis where the intensity falls to half, from the LED data sheet (60 for a Lambertian chip).',
        }));
      } else if (pattern === 'table') {
        rows.push(this.tableField());
      }
    } else {
      rows.push(
        this.num('source.emitter.beam.diameter_mm', 'Beam diameter', 'mm'),
        this.num('source.emitter.beam.divergence_half_angle_deg', 'Divergence half-angle', 'deg'),
        h('p', { class: 'caution', role: 'note', text: 'Laser source: never look into the beam or a fibre end; classify and label it to IEC 60825-1 and your local rules.' }),
      );
    }
    rows.push(
      this.num('source.wavelength_nm', 'Wavelength', 'nm', { hint: 'Blue ≈ 465, green ≈ 525, amber ≈ 590, red ≈ 630, infrared 850 or 940.' }),
      this.num('source.gap_mm', 'Gap to the entry face', 'mm', this.s.guide.entry_face?.pocket
        ? { hint: 'Below 0 the LED sits inside the pocket (up to the pocket’s depth); all of its emitting area must fit in it.' }
        : {}),
      ...this.material('source.gap_medium', 'In the gap', { filter: (m) => m.id === 'air' || m.id === 'water' || m.id === 'propylene_glycol' }),
      h('div', { class: 'pair' }, this.num('source.offset_mm[0]', 'Offset across', 'mm'), this.num('source.offset_mm[1]', 'Offset up', 'mm')),
      h('div', { class: 'pair' }, this.num('source.tilt_deg', 'Tilt', 'deg'), this.num('source.tilt_toward_deg', 'Tilt toward', 'deg')),
    );
    const flux = src.flux ? variant(src.flux) : 'none';
    rows.push(
      this.choice('source.flux', 'Source output (for absolute figures)', [['none', 'Not given (shares only)'], ['lm', 'Luminous flux, lm'], ['mw', 'Radiant flux, mW']], flux, (v) => {
        if (v === 'none') delete src.flux;
        else src.flux = { [v]: src.flux ? Object.values(src.flux)[0] : 1 };
      }),
    );
    if (flux !== 'none') rows.push(this.num(`source.flux.${flux}`, flux === 'lm' ? 'Luminous flux' : 'Radiant flux', flux === 'lm' ? 'lm' : 'mW'));
    if (kind === 'led' && (src.gap_mm ?? 0) < 0.5) {
      rows.push(h('p', { class: 'caution', role: 'note', text: 'LED close to a plastic pipe: check the temperature at the entry face in the real product (acrylic softens near 105 °C, polycarbonate near 150 °C).' }));
    }
    return this.part('source', 'Light source', ...rows);
  }

  tableField() {
    const path = 'source.emitter.led.pattern.table.points';
    const id = idFor(path);
    const points = getAt(this.s, path) || [];
    const area = h('textarea', { id, rows: '5', spellcheck: 'false', dataset: { path }, 'aria-describedby': `${id}-hint ${id}-msg` });
    area.value = this.state.drafts[path] ?? points.map(([a, r]) => `${a}, ${r}`).join('\n');
    const note = h('p', { class: 'hint', id: `${id}-note`, hidden: true });
    area.addEventListener('input', () => {
      // The core reads the paste (header row, separators, decimal commas, a table across the axis).
      let table = null;
      try {
        table = this.readTable(area.value);
      } catch (e) {
        this.state.drafts[path] = area.value;
        this.setMessage(path, e instanceof Error ? e.message : String(e));
      }
      if (table) {
        delete this.state.drafts[path];
        setAt(this.s, path, table.points);
        this.setMessage(path, null);
      }
      const did = [table?.header_skipped && 'the first row was read as a header and left out',
        table?.halves_averaged && 'the table runs from −90° to 90°: its two halves were averaged at each angle (the pattern is taken as the same all round the axis)'].filter(Boolean);
      note.hidden = did.length === 0;
      note.textContent = did.length ? `Read: ${did.join('; ')}.` : '';
      this.changed(false);
    });
    return h(
      'div',
      { class: 'field' },
      h('label', { for: id, text: 'Relative intensity vs angle' }),
      area,
      h('p', { class: 'hint', id: `${id}-hint`, text: 'One row per angle: degrees off axis, then relative intensity. Paste two columns from a data sheet or a spreadsheet, with or without a header row, 0–90° or −90° to 90°.' }),
      note,
      this.msgEl(path),
    );
  }

  sectionFields(prefix, section, onKind) {
    const kind = variant(section);
    return [
      this.choice(prefix, 'Cross-section', [['round', 'Round'], ['rectangular', 'Rectangular']], kind, onKind),
      kind === 'round'
        ? this.num(`${prefix}.round.diameter_mm`, 'Diameter', 'mm')
        : h('div', { class: 'pair' }, this.num(`${prefix}.rectangular.width_mm`, 'Width', 'mm'), this.num(`${prefix}.rectangular.height_mm`, 'Height', 'mm')),
    ];
  }

  pipePart() {
    const g = this.s.guide;
    const toKind = (sec, v) => {
      const [hw] = Object.values(Object.values(sec)[0]);
      return v === 'round' ? { round: { diameter_mm: hw } } : { rectangular: { width_mm: hw, height_mm: hw } };
    };
    return this.part(
      'pipe',
      'Light pipe',
      ...this.sectionFields('guide.section', g.section, (v) => {
        g.section = toKind(g.section, v);
      }),
      ...this.material('guide.material', 'Material', {
        filter: (m) => m.id !== 'air' && m.id !== 'water',
        hint: this.materialHint ?? '',
        onPick: (before) => this.followAttenuation(before),
      }),
      ...this.material('guide.surroundings', 'Around the pipe'),
      ...this.material('guide.exit_medium', 'Beyond the window (exit face)', { optional: 'The same as around the pipe' }),
      this.num('guide.attenuation_db_per_m', 'Bulk attenuation', 'dB/m', { hint: this.attenuationHint() }),
      ...this.faceFields('entry'),
      ...this.faceFields('exit'),
    );
  }

  /**
   * The shape of the entry or exit face (`end`): its choice with a small picture, and its number
   * (a dome's radius, a cut's angle, a textured face's roughness). Flat is the document without it.
   */
  faceFields(end) {
    const g = this.s.guide;
    const key = `${end}_face`;
    const path = `guide.${key}`;
    const kind = variant(g[key] ?? 'flat');
    const section = end === 'entry' ? g.section : this.lastSection();
    const [hw, hh] = section.round
      ? [section.round.diameter_mm / 2, section.round.diameter_mm / 2]
      : [section.rectangular.width_mm / 2, section.rectangular.height_mm / 2];
    const rim = section.round ? hw : Math.hypot(hw, hh);
    const options = [['flat', 'Flat'], ['dome', end === 'entry' ? 'Domed: a lens over the LED' : 'Domed: a lens'], ['cut', 'Cut at an angle']];
    if (end === 'entry') options.push(['pocket', 'Pocket over the LED (concave)']);
    if (end === 'exit') options.push(['textured', 'Textured: diffusing']);
    const label = end === 'entry' ? 'Entry face (towards the LED)' : 'Exit face';
    const select = this.choice(path, label, options, kind, (v) => {
      if (v === 'flat') delete g[key];
      // Starting values only: a dome half as wide again as the section, a 20° cut, a light texture.
      else if (v === 'dome') g[key] = { dome: { radius_mm: Number((1.5 * rim).toPrecision(2)) } };
      else if (v === 'cut') g[key] = { cut: { angle_deg: 20 } };
      // A pocket as deep as its radius, its mouth two thirds of the section's smaller size.
      else if (v === 'pocket') {
        const r = Number((Math.min(hw, hh) * 2 / 3).toPrecision(2));
        g[key] = { pocket: { radius_mm: r, depth_mm: r } };
      }
      else g[key] = { textured: { roughness: 0.3 } };
    });
    select.classList.add('face-choice');
    select.querySelector('label').after(facePicture(kind, end));
    const fields = [select];
    if (kind === 'dome') {
      fields.push(this.num(`${path}.dome.radius_mm`, end === 'entry' ? 'Entry dome radius of curvature' : 'Exit dome radius of curvature', 'mm',
        { hint: "More than half the pipe's size across its corners; the dome meets the side wall on the end's rim." }));
    } else if (kind === 'cut') {
      fields.push(this.num(`${path}.cut.angle_deg`, end === 'entry' ? 'Entry cut angle to the section' : 'Exit cut angle to the section', '°',
        { hint: "From the pipe's lower edge (along its height) rising towards the upper one; more than 0° and at most 60°." }));
    } else if (kind === 'pocket') {
      fields.push(h('div', { class: 'pair' },
        this.num(`${path}.pocket.radius_mm`, 'Pocket radius of curvature', 'mm'),
        this.num(`${path}.pocket.depth_mm`, 'Pocket depth', 'mm')));
      fields.push(h('p', { class: 'hint', text: "The LED sits under the pocket's mouth. The depth is at most the radius and less than the first straight's length; the mouth stays inside the section." }));
    } else if (kind === 'textured') {
      fields.push(this.num(`${path}.textured.roughness`, 'Exit face roughness', '',
        { hint: 'Spread of the surface\'s facet slopes (microfacet model): 0.01 is all but polished, 1 diffuses strongly.' }));
    }
    return fields;
  }

  /** The library entry of a material choice ({ library: id }), or undefined. */
  libraryMaterial(choice) {
    return choice?.library ? this.materials.find((m) => m.id === choice.library) : undefined;
  }

  /**
   * Whether the pipe's attenuation is its material's typical value (the core's material library),
   * and so follows the material; a value typed apart from it is the designer's own and is kept.
   */
  attenuationFollows(choice = this.s.guide.material) {
    const m = this.libraryMaterial(choice);
    return Boolean(m) && this.state.drafts['guide.attenuation_db_per_m'] === undefined
      && this.s.guide.attenuation_db_per_m === m.attenuation_db_per_m;
  }

  /** After the pipe's material changed from `before`: its typical attenuation, unless the designer's own. */
  followAttenuation(before) {
    const m = this.libraryMaterial(this.s.guide.material);
    if (m && (this.s.guide.attenuation_db_per_m === undefined || this.attenuationFollows(before))) {
      this.s.guide.attenuation_db_per_m = m.attenuation_db_per_m;
    }
  }

  /** The attenuation field's hint: the material's typical value, its source, and which applies. */
  attenuationHint() {
    const m = this.libraryMaterial(this.s.guide.material);
    if (!m) return 'Absorption and scattering in the material, in the visible. A medium given by its index has no typical value here: enter its own.';
    const typical = `${m.name}: ${m.attenuation_db_per_m} dB/m in the visible (${m.attenuation_source})`;
    return this.attenuationFollows()
      ? `The material's typical absorption and scattering; it follows the material you choose, and a value you type is kept. ${typical}.`
      : `Your own value, kept when the material changes. Typical for ${typical}.`;
  }

  /** Bring the attenuation hint up to date (after typing; the form is not drawn again then). */
  showAttenuationHint() {
    const el = this.root.querySelector('#f-guide-attenuation-db-per-m-hint');
    if (el) el.textContent = this.attenuationHint();
  }

  routePart() {
    const route = this.s.route;
    const cards = route.map((seg, i) => this.segmentCard(seg, i, route.length));
    const add = (kind) => () => {
      route.push(SEGMENT_DEFAULTS[kind](this.lastSection()));
      this.changed(true, `add-${kind}`);
    };
    return this.part(
      'route',
      'Route, from the LED to the window',
      h('ol', { class: 'segments' }, cards),
      h(
        'div',
        { class: 'add-row' },
        h('button', { type: 'button', id: 'add-straight', onclick: add('straight'), text: '+ Straight' }),
        h('button', { type: 'button', id: 'add-bend', onclick: add('bend'), text: '+ Bend' }),
        h('button', { type: 'button', id: 'add-taper', onclick: add('taper'), text: '+ Taper' }),
        h('button', { type: 'button', id: 'add-corner', onclick: add('corner'), text: '+ Corner' }),
      ),
    );
  }

  /** The section at the end of the route (where a new taper starts). */
  lastSection(upTo = this.s.route.length) {
    let sec = this.s.guide.section;
    for (const seg of this.s.route.slice(0, upTo)) if (seg.taper) sec = seg.taper.end_section;
    return sec;
  }

  segmentCard(seg, i, count) {
    const kind = variant(seg);
    const p = `route[${i}].${kind}`;
    const move = (to) => () => {
      const r = this.s.route;
      [r[i], r[to]] = [r[to], r[i]];
      moveZones(this.s, 'contacts', i, to);
      moveZones(this.s, 'coatings', i, to);
      this.remapDrafts('route', (k) => (k === i ? to : k === to ? i : k));
      this.changed(true, `seg-${to}-${to < i ? 'up' : 'down'}`);
    };
    const remove = () => {
      this.s.route.splice(i, 1);
      dropZones(this, 'contacts', i);
      dropZones(this, 'coatings', i);
      this.remapDrafts('route', (k) => (k === i ? null : k > i ? k - 1 : k));
      this.changed(true, 'add-straight');
    };
    const fields = [];
    if (kind === 'straight') fields.push(this.num(`${p}.length_mm`, 'Length', 'mm'));
    if (kind === 'bend') {
      fields.push(
        h('div', { class: 'pair' }, this.num(`${p}.radius_mm`, 'Radius (centre line)', 'mm', { hint: this.bendHints.get(i) ?? BEND_RADIUS_HINT }), this.num(`${p}.angle_deg`, 'Bend angle', 'deg')),
        this.num(`${p}.turn_deg`, 'Turns toward', 'deg', { hint: '0: toward the pipe’s width axis, 90: toward its height axis, 180: the other way.' }),
      );
    }
    if (kind === 'corner') {
      const corner = seg.corner;
      fields.push(
        h('div', { class: 'pair' },
          this.num(`${p}.angle_deg`, 'Turn angle', 'deg', { hint: 'A reflecting corner: a flat face halfway across the turn reflects the light round it; 90 gives a 45° face.' }),
          this.num(`${p}.turn_deg`, 'Turns toward', 'deg', { hint: '0: toward the pipe’s width axis, 90: toward its height axis, 180: the other way.' })),
        this.choice(`${p}.coating`, 'Reflecting face', [['bare', 'Bare (total internal reflection)'], ['coated', 'Coated (mirror)']], corner.coating ? 'coated' : 'bare', (v) => {
          if (v === 'bare') delete corner.coating;
          else corner.coating = { reflectance: 0.9 };
        }),
      );
      if (corner.coating) fields.push(this.num(`${p}.coating.reflectance`, 'Coating reflectance', 'fraction', { hint: 'From 0 to 1; what the coating does not reflect it absorbs.' }));
    }
    if (kind === 'taper') {
      fields.push(
        this.num(`${p}.length_mm`, 'Length', 'mm'),
        ...this.sectionFields(`${p}.end_section`, seg.taper.end_section, (v) => {
          const [hw] = Object.values(Object.values(seg.taper.end_section)[0]);
          seg.taper.end_section = v === 'round' ? { round: { diameter_mm: hw } } : { rectangular: { width_mm: hw, height_mm: hw } };
        }).map((el) => {
          el.querySelector('label').textContent = el.querySelector('select') ? 'End cross-section' : el.querySelector('label').textContent;
          return el;
        }),
      );
    }
    return h(
      'li',
      { class: `segment segment-${kind}`, dataset: { index: String(i) } },
      h(
        'div',
        { class: 'segment-head' },
        h('span', { class: 'segment-number', text: String(i + 1) }),
        h('select', {
          id: `seg-${i}-kind`,
          'aria-label': `Segment ${i + 1} kind`,
          onchange: (e) => {
            const v = e.target.value;
            this.s.route[i] = SEGMENT_DEFAULTS[v](this.lastSection(i));
            this.remapDrafts('route', (k) => (k === i ? null : k));
            this.changed(true, `seg-${i}-kind`);
          },
        }, Object.entries(SEGMENT_NAMES).map(([v, t]) => h('option', { value: v, text: t, selected: v === kind }))),
        h('span', { class: 'segment-tools' },
          h('button', { type: 'button', id: `seg-${i}-up`, class: 'icon', 'aria-label': `Move segment ${i + 1} up`, disabled: i === 0, onclick: move(i - 1), text: '↑' }),
          h('button', { type: 'button', id: `seg-${i}-down`, class: 'icon', 'aria-label': `Move segment ${i + 1} down`, disabled: i === count - 1, onclick: move(i + 1), text: '↓' }),
          h('button', { type: 'button', id: `seg-${i}-remove`, class: 'icon', 'aria-label': `Remove segment ${i + 1}`, disabled: count === 1, onclick: remove, text: '✕' })),
      ),
      h('div', { class: 'segment-fields' }, fields),
      this.msgEl(`route[${i}]`),
    );
  }

  /** The route's segments as choices: [index, “2 · Bend”]. */
  segmentOptions() {
    return this.s.route.map((seg, i) => [String(i), `${i + 1} · ${SEGMENT_NAMES[variant(seg)]}`]);
  }

  contactsPart() {
    const g = this.s.guide;
    const list = g.contacts || [];
    const segOptions = this.segmentOptions();
    const items = list.map((_, k) => h(
      'li',
      { class: 'contact' },
      ...zoneRows(this, MOUNT, k, segOptions, { after: this.material(`guide.contacts[${k}].medium`, 'Its material') }),
    ));
    return this.part(
      'contacts',
      'Mounts touching the pipe',
      h('p', { class: 'hint', text: 'A clip, rib or glue spot touching the pipe over a length of one segment (mm from its start) and an arc of its perimeter (degrees from the width axis toward the height axis). Light reaching the wall there can pass into it.' }),
      h('ol', { class: 'contacts' }, items),
      h('button', {
        type: 'button',
        id: 'add-contact',
        onclick: () => {
          g.contacts = list;
          list.push({ name: 'clip', segment: 0, from_mm: 0, to_mm: 2, sector_from_deg: 0, sector_to_deg: 90, medium: { library: 'polycarbonate' } });
          this.changed(true, 'add-contact');
        },
        text: '+ Mount',
      }),
    );
  }

  receiverPart() {
    const r = this.s.receiver;
    const kind = !r ? 'none' : r.diameter_mm != null ? 'disk' : 'window';
    const rows = [
      this.choice('receiver', 'Detector beyond the exit face', [['none', 'None'], ['disk', 'Round (e.g. a photodiode or an eye pupil)'], ['window', 'Rectangular window']], kind, (v) => {
        const distance = r?.distance_mm ?? 1;
        if (v === 'none') delete this.s.receiver;
        else if (v === 'disk') this.s.receiver = { diameter_mm: 3, distance_mm: distance };
        else this.s.receiver = { width_mm: 4, height_mm: 2, distance_mm: distance };
      }),
    ];
    if (kind === 'disk') rows.push(this.num('receiver.diameter_mm', 'Diameter', 'mm'));
    if (kind === 'window') rows.push(h('div', { class: 'pair' }, this.num('receiver.width_mm', 'Width', 'mm'), this.num('receiver.height_mm', 'Height', 'mm')));
    if (kind !== 'none') rows.push(this.num('receiver.distance_mm', 'Distance from the exit face', 'mm'));
    return this.part('receiver', 'Detector', ...rows);
  }

  tracePart() {
    return this.part(
      'trace',
      'Trace',
      h('div', { class: 'pair' },
        this.num('trace.rays', 'Rays', '', { inputmode: 'numeric' }),
        this.num('trace.seed', 'Seed', '', { inputmode: 'numeric' })),
      this.num('trace.max_interactions', 'Wall hits per ray at most', '', { inputmode: 'numeric' }),
      h('p', { class: 'hint', text: 'More rays give a narrower ± figure (it shrinks as 1/√rays). The same seed gives the same answer, here and on the command line.' }),
    );
  }
}
