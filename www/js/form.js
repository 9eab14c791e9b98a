// The entry form: entries ↔ inputs, the fields that appear with a choice, and the core's
// validation messages shown inline next to the field they name.

import { $, h } from './dom.js';
import { formatIndex, formatPlain } from './format.js';
import { parseNumber } from './numbers.js';
import { EXAMPLE_ENTRIES } from './state.js';

/** Entry key → input element id. */
const INPUT_OF_ENTRY = {
  material: 'material',
  material_n: 'material-n',
  wavelength_nm: 'wavelength',
  front: 'front',
  front_n: 'front-n',
  surroundings: 'surroundings',
  surroundings_n: 'surroundings-n',
  diameter_mm: 'diameter',
  launch_angle_is: 'launch-kind',
  launch_half_angle_deg: 'launch-angle',
  bend_inner_radius_mm: 'bend-radius',
  bend_angle_deg: 'bend-angle',
};

/**
 * JSON paths of the design document → the input that shows their message and the words that
 * name the field on screen. The longest matching prefix wins.
 */
const FIELD_OF_PATH = [
  ['version', null, 'Document version'],
  ['material.custom', 'material-n', 'Pipe index n'],
  ['material', 'material', 'Pipe material'],
  ['wavelength_nm', 'wavelength', 'Wavelength'],
  ['launch_medium.custom', 'front-n', 'Gel index n'],
  ['launch_medium', 'front', 'Medium in front of the entry face'],
  ['surroundings.custom', 'surroundings-n', 'Index n of the surroundings'],
  ['surroundings', 'surroundings', 'Surroundings'],
  ['diameter_mm', 'diameter', 'Pipe diameter'],
  ['launch_angle_is', 'launch-kind', 'The launch angle'],
  ['launch_half_angle_deg', 'launch-angle', 'Launch half-angle'],
  ['bend_inner_radius_mm', 'bend-radius', 'Inner bend radius'],
  ['bend_angle_deg', 'bend-angle', 'Bend angle'],
];

function fieldOfPath(path) {
  let best = null;
  for (const entry of FIELD_OF_PATH) {
    const [prefix] = entry;
    const matches = path === prefix || path.startsWith(prefix + '.');
    if (matches && (!best || prefix.length > best[0].length)) best = entry;
  }
  return best;
}

/** A core message made into a sentence that names its field: "must be more than 0 mm" → "Pipe diameter must be more than 0 mm". */
export function sentenceFor(label, message) {
  const text = String(message ?? '').trim();
  if (!label) return text;
  return /^[a-z]/.test(text) ? `${label} ${text}` : `${label}: ${text}`;
}

export class EntryForm {
  /**
   * @param {Array<{id:string,name:string,min_nm:number,max_nm:number,basis:string,source:string,note:string}>} materials
   * @param {(key: string, value: string) => void} onEntry called on every edit
   */
  constructor(materials, onEntry) {
    this.materials = new Map(materials.map((m) => [m.id, m]));
    this.onEntry = onEntry;
    this.fillMaterialOptions(materials);
    if (!this.materials.has('water')) {
      $('surroundings').querySelector('option[value="water"]')?.remove();
    }
    for (const [key, id] of Object.entries(INPUT_OF_ENTRY)) {
      const el = $(id);
      const event = el.tagName === 'SELECT' ? 'change' : 'input';
      el.addEventListener(event, () => {
        this.showChoiceFields();
        this.onEntry(key, el.value);
      });
    }
  }

  fillMaterialOptions(materials) {
    const select = $('material');
    const custom = select.querySelector('option[value="custom"]');
    for (const m of materials) {
      if (m.id === 'air') continue; // an air core guides nothing
      const option = document.createElement('option');
      option.value = m.id;
      option.textContent = m.name;
      select.insertBefore(option, custom);
    }
  }

  /** Put entries into the inputs (on start and on "start again"). */
  write(entries) {
    for (const [key, id] of Object.entries(INPUT_OF_ENTRY)) {
      const el = $(id);
      const offered = (v) => el.tagName !== 'SELECT' || [...el.options].some((o) => o.value === v);
      // A stored choice this version does not offer falls back to the example's.
      el.value = offered(entries[key]) ? entries[key] : EXAMPLE_ENTRIES[key];
    }
    this.showChoiceFields();
  }

  /** Entries as the inputs hold them now. */
  read() {
    const entries = {};
    for (const [key, id] of Object.entries(INPUT_OF_ENTRY)) entries[key] = $(id).value;
    return entries;
  }

  showChoiceFields() {
    $('material-n-field').hidden = $('material').value !== 'custom';
    $('front-n-field').hidden = $('front').value !== 'gel';
    const around = $('surroundings').value;
    $('surroundings-n-field').hidden = !(around === 'cladding' || around === 'custom');
    $('surroundings-n-label').textContent =
      around === 'cladding' ? 'Cladding index n' : 'Index n of the surroundings';
  }

  /**
   * Show the core's validation messages next to their fields; messages naming no known field
   * are listed at the top of the form. An empty list clears every message.
   */
  showProblems(problems) {
    const byInput = new Map();
    const general = [];
    for (const p of problems) {
      const field = fieldOfPath(String(p.field ?? ''));
      const inputId = field?.[1];
      const sentence = sentenceFor(field?.[2] ?? p.field, p.message);
      if (inputId && !$(inputId).closest('.field').hidden) {
        if (!byInput.has(inputId)) byInput.set(inputId, []);
        byInput.get(inputId).push(sentence);
      } else {
        general.push(sentence);
      }
    }
    for (const id of new Set(Object.values(INPUT_OF_ENTRY))) {
      const el = $(id);
      const msg = $(`${id}-msg`);
      const lines = byInput.get(id);
      el.closest('.field').classList.toggle('has-problem', Boolean(lines));
      if (lines) {
        el.setAttribute('aria-invalid', 'true');
        msg.textContent = lines.join(' ');
        msg.hidden = false;
      } else {
        el.removeAttribute('aria-invalid');
        msg.textContent = '';
        msg.hidden = true;
      }
    }
    const box = $('form-problems');
    box.replaceChildren(...general.map((text) => h('p', { text })));
    box.hidden = general.length === 0;
  }

  /** A message for the whole form (e.g. the calculator failed), or null to clear it. */
  showFormMessage(text) {
    const box = $('form-problems');
    if (text) {
      box.replaceChildren(h('p', { text }));
      box.hidden = false;
    } else {
      box.replaceChildren();
      box.hidden = true;
    }
  }

  /**
   * Hints under the choices: the index the core computed at the wavelength and, for library
   * materials, the range their data cover and their source. `figures` may be null.
   */
  showHints(entries, figures) {
    const wavelength = formatPlain(parseNumber(entries.wavelength_nm), 5);
    const at = wavelength ? ` at ${wavelength} nm` : '';
    const m = this.materials.get(entries.material);
    const parts = [];
    if (figures) parts.push(`n = ${formatIndex(figures.n_core)}${at}`);
    if (m) {
      parts.push(`data cover ${formatPlain(m.min_nm, 6)}–${formatPlain(m.max_nm, 6)} nm`);
      parts.push(m.source);
    } else {
      parts.push('your constant index, at any wavelength');
    }
    $('material-hint').textContent = parts.join(' · ');

    const around = [];
    if (figures) around.push(`n = ${formatIndex(figures.n_surroundings)}${at}`);
    const water = this.materials.get('water');
    if (entries.surroundings === 'water' && water) around.push(water.source);
    if (entries.surroundings === 'cladding') around.push('a solid layer of lower index, e.g. a fibre cladding');
    $('surroundings-hint').textContent = around.join(' · ');

    const front = [];
    if (figures) front.push(`n = ${formatIndex(figures.n_launch)}`);
    front.push(entries.front === 'gel' ? 'fills the gap between the LED and the face' : 'a small gap between the LED and the face');
    $('front-hint').textContent = front.join(' · ');
  }
}
