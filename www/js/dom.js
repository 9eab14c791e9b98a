// The DOM helpers both pages use: find an element, build one, and set the status line.

/** The element with this id (null when there is none). */
export const $ = (id) => document.getElementById(id);

/** Build an element: h('p', { class: 'x', text: 'hello' }, child, …). */
export function h(tag, attrs = {}, ...children) {
  const el = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v == null || v === false) continue;
    if (k === 'text') el.textContent = v;
    else if (k === 'class') el.className = v;
    else if (k.startsWith('on')) el.addEventListener(k.slice(2), v);
    else if (k === 'dataset') Object.assign(el.dataset, v);
    else el.setAttribute(k, v === true ? '' : v);
  }
  for (const c of children.flat()) if (c != null && c !== false) el.append(c);
  return el;
}

/** The page's status line (#status): its text and its kind ('busy', 'ready', 'ok', 'error'). */
export function setStatus(text, kind = 'busy') {
  const el = $('status');
  el.textContent = text;
  el.dataset.kind = kind;
}
