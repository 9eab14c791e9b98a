// The form's “Coatings” part: zones of the pipe's wall painted white, metallised, or painted
// black, each on one segment over a length (mm from its start) and an arc of the perimeter. It
// edits `guide.coatings` of the scenario document through the editor's fields; it computes
// nothing (the core checks each coating and traces it).

import { h } from '../dom.js';
import { zoneRows } from './zones.js';

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

/** How the zone builder names a coating. */
const COATING = { list: 'coatings', word: 'coating', id: 'coating', addId: 'add-coating', nameLabel: 'Name' };

/** The part, built with the editor `ed`'s fields; `segOptions` lists the route's segments. */
export function coatingsPart(ed, segOptions) {
  const g = ed.s.guide;
  const list = g.coatings || [];
  const items = list.map((c, k) => {
    const p = `guide.coatings[${k}]`;
    const kind = kindOf(c.kind);
    const middle = [
      ed.choice(`${p}.kind`, 'Coated with', KINDS, kind, (v) => {
        c.kind = NEW_KIND[v]();
      }),
    ];
    if (kind === 'white_paint') {
      middle.push(ed.num(`${p}.kind.white_paint.reflectance`, 'Reflectance', '', {
        hint: 'Share of the light reaching the paint that it sends back into the pipe, spread in all directions (0 to 1); the rest is absorbed.',
      }));
    } else if (kind === 'metal') {
      middle.push(ed.num(`${p}.kind.metal.reflectance`, 'Reflectance', '', {
        hint: 'Share of the light reaching the metal that it reflects like a mirror (0 to 1); the rest is absorbed.',
      }));
    }
    const rows = zoneRows(ed, COATING, k, segOptions, { middle });
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
