// The form's “Coatings” part: zones of the pipe's wall painted white, metallised, or painted
// black, each on one segment over a length (mm from its start) and an arc of the perimeter. It
// edits `guide.coatings` of the scenario document through the editor's fields; it computes
// nothing (the core checks each coating and traces it).

import { h } from '../dom.js';

/** The kinds a coating can be, as the document names them and as the form words them. */
const KINDS = [['white_paint', 'White paint'], ['metal', 'Metal (mirror)'], ['black', 'Black paint']];

/** A new coating of each kind: round numbers of our own for the designer to change. */
const NEW_KIND = {
  white_paint: () => ({ white_paint: { reflectance: 0.9 } }),
  metal: () => ({ metal: { reflectance: 0.9 } }),
  black: () => 'black',
};

/** The kind of a coating: 'white_paint', 'metal' or 'black'. */
const kindOf = (kind) => (kind && typeof kind === 'object' ? Object.keys(kind)[0] : kind);

/** The form's id of a field at `path` (the editor's rule). */
const idFor = (path) => `f-${path.replace(/[^A-Za-z0-9]+/g, '-')}`;

/** The part, built with the editor `ed`'s fields; `segOptions` lists the route's segments. */
export function coatingsPart(ed, segOptions) {
  const g = ed.s.guide;
  const list = g.coatings || [];
  const items = list.map((c, k) => {
    const p = `guide.coatings[${k}]`;
    const kind = kindOf(c.kind);
    const nameId = idFor(`${p}.name`);
    const name = h('input', { id: nameId, type: 'text', dataset: { path: `${p}.name` }, maxlength: '80' });
    name.value = c.name || '';
    name.addEventListener('input', () => {
      c.name = name.value;
      ed.changed(false);
    });
    const rows = [
      h('div', { class: 'field' }, h('label', { for: nameId, text: 'Name' }), name),
      ed.choice(`${p}.kind`, 'Coated with', KINDS, kind, (v) => {
        c.kind = NEW_KIND[v]();
      }),
    ];
    if (kind === 'white_paint') {
      rows.push(ed.num(`${p}.kind.white_paint.reflectance`, 'Reflectance', '', {
        hint: 'Share of the light reaching the paint that it sends back into the pipe, spread in all directions (0 to 1); the rest is absorbed.',
      }));
    } else if (kind === 'metal') {
      rows.push(ed.num(`${p}.kind.metal.reflectance`, 'Reflectance', '', {
        hint: 'Share of the light reaching the metal that it reflects like a mirror (0 to 1); the rest is absorbed.',
      }));
    }
    rows.push(
      ed.choice(`${p}.segment`, 'On segment', segOptions, String(c.segment), (v) => {
        c.segment = Number(v);
      }),
      h('div', { class: 'pair' }, ed.num(`${p}.from_mm`, 'From', 'mm'), ed.num(`${p}.to_mm`, 'To', 'mm')),
      h('div', { class: 'pair' }, ed.num(`${p}.sector_from_deg`, 'Around from', 'deg'), ed.num(`${p}.sector_to_deg`, 'Around to', 'deg')),
      h('button', {
        type: 'button',
        id: `coating-${k}-remove`,
        'aria-label': `Remove coating ${k + 1}${c.name ? ` (${c.name})` : ''}`,
        onclick: () => {
          list.splice(k, 1);
          if (list.length === 0) delete g.coatings;
          ed.remapDrafts('guide.coatings', (j) => (j === k ? null : j > k ? j - 1 : j));
          ed.changed(true, 'add-coating');
        },
        text: 'Remove this coating',
      }),
    );
    return h('li', { class: 'contact coating' }, ...rows);
  });
  return ed.part(
    'coatings',
    'Coatings',
    h('p', { class: 'hint', text: 'Paint or a metal layer on the pipe’s wall over a length of one segment (mm from its start) and an arc of its perimeter (degrees from the width axis toward the height axis). Light reaching the wall there meets the coating instead of bouncing off the bare wall.' }),
    h('ol', { class: 'contacts coatings' }, items),
    h('button', {
      type: 'button',
      id: 'add-coating',
      onclick: () => {
        g.coatings = list;
        list.push({ name: 'white paint', kind: NEW_KIND.white_paint(), segment: 0, from_mm: 0, to_mm: 2, sector_from_deg: 0, sector_to_deg: 360 });
        ed.changed(true, 'add-coating');
      },
      text: '+ Coating',
    }),
  );
}

/** Keep coatings on the segment they were on when segments `a` and `b` swap places. */
export function moveCoatings(scenario, a, b) {
  for (const c of scenario.guide.coatings || []) {
    if (c.segment === a) c.segment = b;
    else if (c.segment === b) c.segment = a;
  }
}

/** A removed segment `i` takes its coatings with it; later ones shift down. */
export function dropCoatings(ed, i) {
  const g = ed.s.guide;
  if (!g.coatings) return;
  const newIndex = [];
  let kept = 0;
  for (const c of g.coatings) newIndex.push(c.segment === i ? null : kept++);
  ed.remapDrafts('guide.coatings', (k) => newIndex[k] ?? null);
  g.coatings = g.coatings.filter((c) => c.segment !== i).map((c) => (c.segment > i ? { ...c, segment: c.segment - 1 } : c));
  if (g.coatings.length === 0) delete g.coatings;
}
