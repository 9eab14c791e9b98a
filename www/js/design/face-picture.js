// A small side view of an end face's shape beside its choice on the form: the pipe's end, the
// face and the way the light goes. A sketch only: the 3D view draws the face to scale.

const NS = 'http://www.w3.org/2000/svg';

/**
 * Each face in a 64 × 36 box, the pipe to the left, its end plane at x = 40, its height axis up:
 * the body, the side walls, the face's line.
 */
const SHAPES = {
  flat: { body: 'M4 6 L40 6 L40 30 L4 30 Z', walls: 'M4 6 L40 6 M4 30 L40 30', face: 'M40 6 L40 30' },
  dome: { body: 'M4 6 L40 6 Q54 18 40 30 L4 30 Z', walls: 'M4 6 L40 6 M4 30 L40 30', face: 'M40 6 Q54 18 40 30' },
  // The cut rises from the lower (−height) edge towards the upper one.
  cut: { body: 'M4 6 L52 6 L40 30 L4 30 Z', walls: 'M4 6 L52 6 M4 30 L40 30', face: 'M40 30 L52 6' },
  // A pocket (entry only): the end scooped out, concave towards the LED.
  pocket: { body: 'M4 6 L40 6 L40 10 Q30 18 40 26 L40 30 L4 30 Z', walls: 'M4 6 L40 6 M4 30 L40 30', face: 'M40 6 L40 10 Q30 18 40 26 L40 30' },
  textured: {
    body: 'M4 6 L40 6 L40 30 L4 30 Z',
    walls: 'M4 6 L40 6 M4 30 L40 30',
    face: 'M40 6 l2 2 l-2 2 l2 2 l-2 2 l2 2 l-2 2 l2 2 l-2 2 l2 2 l-2 2 l2 2 l-2 2',
  },
};

/** An <svg> picture of face `kind` at `end` ('entry': mirrored, the light comes in from the left). */
export function facePicture(kind, end) {
  const shape = SHAPES[kind] ?? SHAPES.flat;
  const svg = document.createElementNS(NS, 'svg');
  svg.setAttribute('viewBox', '0 0 64 36');
  svg.setAttribute('width', '64');
  svg.setAttribute('height', '36');
  svg.setAttribute('class', 'face-picture');
  svg.setAttribute('aria-hidden', 'true');
  const g = document.createElementNS(NS, 'g');
  if (end === 'entry') g.setAttribute('transform', 'translate(64 0) scale(-1 1)');
  for (const [d, cls] of [[shape.body, 'face-body'], [shape.walls, 'face-wall'], [shape.face, 'face-line'],
    [end === 'entry' ? 'M62 18 L14 18 M18 15 L14 18 L18 21' : 'M10 18 L60 18 M56 15 L60 18 L56 21', 'face-ray']]) {
    const p = document.createElementNS(NS, 'path');
    p.setAttribute('d', d);
    p.setAttribute('class', cls);
    g.append(p);
  }
  svg.append(g);
  return svg;
}
