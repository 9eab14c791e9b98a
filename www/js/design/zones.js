// The form's rows for a zone of the pipe's wall — a mount touching it (`guide.contacts`) or a
// coating on it (`guide.coatings`): its name, where it sits (a segment, from/to along it in mm,
// around from/to in degrees), the button removing it, and keeping zones on their segment when
// the route's segments move or go. One builder for both kinds, so the two parts of the form
// place a zone alike. It edits the scenario document through the editor's fields; it computes
// nothing.

import { h } from '../dom.js';

/** The form's id of a field at `path` (the editor's rule). */
const idFor = (path) => `f-${path.replace(/[^A-Za-z0-9]+/g, '-')}`;

/**
 * The rows of zone `k` of `kind` (`{ list: 'contacts' | 'coatings', word: 'mount' | 'coating',
 * id: 'contact' | 'coating', addId, nameLabel }`) built with the editor `ed`'s fields: its name
 * first, then `middle` (what the kind adds: a coating's kind, say), where it sits among
 * `segOptions`, then `after` (a mount's material), and the button removing it.
 */
export function zoneRows(ed, kind, k, segOptions, { middle = [], after = [] } = {}) {
  const g = ed.s.guide;
  const list = g[kind.list];
  const zone = list[k];
  const p = `guide.${kind.list}[${k}]`;
  const nameId = idFor(`${p}.name`);
  const name = h('input', { id: nameId, type: 'text', dataset: { path: `${p}.name` }, maxlength: '80' });
  name.value = zone.name || '';
  name.addEventListener('input', () => {
    zone.name = name.value;
    ed.changed(false);
  });
  return [
    h('div', { class: 'field' }, h('label', { for: nameId, text: kind.nameLabel }), name),
    ...middle,
    ed.choice(`${p}.segment`, 'On segment', segOptions, String(zone.segment), (v) => {
      zone.segment = Number(v);
    }),
    h('div', { class: 'pair' }, ed.num(`${p}.from_mm`, 'From', 'mm'), ed.num(`${p}.to_mm`, 'To', 'mm')),
    h('div', { class: 'pair' }, ed.num(`${p}.sector_from_deg`, 'Around from', 'deg'), ed.num(`${p}.sector_to_deg`, 'Around to', 'deg')),
    ...after,
    h('button', {
      type: 'button',
      id: `${kind.id}-${k}-remove`,
      'aria-label': `Remove ${kind.word} ${k + 1}${zone.name ? ` (${zone.name})` : ''}`,
      onclick: () => {
        list.splice(k, 1);
        if (list.length === 0) delete g[kind.list];
        ed.remapDrafts(`guide.${kind.list}`, (j) => (j === k ? null : j > k ? j - 1 : j));
        ed.changed(true, kind.addId);
      },
      text: `Remove this ${kind.word}`,
    }),
  ];
}

/** Keep the zones of `guide[list]` on the segment they were on when segments `a` and `b` swap. */
export function moveZones(scenario, list, a, b) {
  for (const z of scenario.guide[list] || []) {
    if (z.segment === a) z.segment = b;
    else if (z.segment === b) z.segment = a;
  }
}

/** A removed segment `i` takes the zones of `guide[list]` on it with it; later ones shift down. */
export function dropZones(ed, list, i) {
  const g = ed.s.guide;
  if (!g[list]) return;
  const newIndex = [];
  let kept = 0;
  for (const z of g[list]) newIndex.push(z.segment === i ? null : kept++);
  ed.remapDrafts(`guide.${list}`, (k) => newIndex[k] ?? null);
  g[list] = g[list].filter((z) => z.segment !== i).map((z) => (z.segment > i ? { ...z, segment: z.segment - 1 } : z));
  if (g[list].length === 0) delete g[list];
}
