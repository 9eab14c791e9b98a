// Canvas drawing of the bent guide and its ray fan, to scale (one mm is the same length across
// and along), sharp on high-density screens. Geometry comes from the core's `bend_fan`.

/** Colours and strokes come from the style sheet so page and drawing agree. */
function palette() {
  const css = getComputedStyle(document.documentElement);
  const get = (name, fallback) => css.getPropertyValue(name).trim() || fallback;
  return {
    paper: get('--canvas-paper', '#ffffff'),
    body: get('--guide-body', '#e3f0f1'),
    wall: get('--guide-wall', '#1f2a36'),
    guided: get('--ray-guided', '#1864ab'),
    escaped: get('--ray-escaped', '#d9480f'),
    ink: get('--ink', '#1d2430'),
  };
}

/**
 * Size the canvas backing store to its CSS box times the device pixel ratio and return a
 * context that draws in CSS pixels, with the CSS size.
 */
export function prepareCanvas(canvas, pixelRatio = window.devicePixelRatio || 1) {
  const width = Math.max(1, Math.round(canvas.clientWidth));
  const height = Math.max(1, Math.round(canvas.clientHeight));
  const w = Math.round(width * pixelRatio);
  const h = Math.round(height * pixelRatio);
  if (canvas.width !== w) canvas.width = w;
  if (canvas.height !== h) canvas.height = h;
  const ctx = canvas.getContext('2d');
  ctx.setTransform(pixelRatio, 0, 0, pixelRatio, 0, 0);
  return { ctx, width, height };
}

/** A round length for a scale bar near `target` mm: 1, 2 or 5 × 10^k. */
function niceLength(target) {
  const k = Math.floor(Math.log10(target));
  const base = 10 ** k;
  for (const f of [5, 2, 1]) if (f * base <= target) return f * base;
  return base;
}

function polyline(ctx, xy, map) {
  ctx.beginPath();
  for (let i = 0; i + 1 < xy.length; i += 2) {
    const [px, py] = map(xy[i], xy[i + 1]);
    if (i === 0) ctx.moveTo(px, py);
    else ctx.lineTo(px, py);
  }
}

/**
 * Draw a fan from `bend_fan(design, rays)`: { walls: [Float64Array], rays: [{fate, xy}], bounds }.
 * Returns { guided, escaped } ray counts.
 */
export function drawBend(canvas, fan) {
  const { ctx, width, height } = prepareCanvas(canvas);
  const c = palette();
  ctx.fillStyle = c.paper;
  ctx.fillRect(0, 0, width, height);

  const { min_x, min_y, max_x, max_y } = fan.bounds;
  const spanX = Math.max(max_x - min_x, 1e-9);
  const spanY = Math.max(max_y - min_y, 1e-9);
  const pad = 14;
  const barRoom = 34; // space under the drawing for the scale bar
  const scale = Math.min((width - 2 * pad) / spanX, (height - 2 * pad - barRoom) / spanY);
  const ox = (width - spanX * scale) / 2;
  const oy = pad + (height - 2 * pad - barRoom - spanY * scale) / 2;
  // y of the core grows upward; the canvas's grows downward.
  const map = (x, y) => [ox + (x - min_x) * scale, oy + (max_y - y) * scale];

  // The guide's body: between its outer and inner side walls (the first two outlines).
  if (fan.walls.length >= 2) {
    const [a, b] = fan.walls;
    ctx.beginPath();
    for (let i = 0; i + 1 < a.length; i += 2) {
      const [px, py] = map(a[i], a[i + 1]);
      if (i === 0) ctx.moveTo(px, py);
      else ctx.lineTo(px, py);
    }
    for (let i = b.length - 2; i >= 0; i -= 2) ctx.lineTo(...map(b[i], b[i + 1]));
    ctx.closePath();
    ctx.fillStyle = c.body;
    ctx.fill();
  }

  let guided = 0;
  let escaped = 0;
  ctx.lineJoin = 'round';
  ctx.lineCap = 'round';
  // Guided rays first, escaping ones on top so they are never hidden.
  for (const pass of ['guided', 'escaped']) {
    for (const ray of fan.rays) {
      if ((ray.fate === 'escaped') !== (pass === 'escaped')) continue;
      if (pass === 'escaped') {
        escaped += 1;
        ctx.strokeStyle = c.escaped;
        ctx.lineWidth = 1.75;
        ctx.setLineDash([6, 4]);
        ctx.globalAlpha = 1;
      } else {
        guided += 1;
        ctx.strokeStyle = c.guided;
        ctx.lineWidth = 1;
        ctx.setLineDash([]);
        ctx.globalAlpha = 0.7;
      }
      polyline(ctx, ray.xy, map);
      ctx.stroke();
    }
  }
  ctx.setLineDash([]);
  ctx.globalAlpha = 1;

  ctx.strokeStyle = c.wall;
  ctx.lineWidth = 2;
  for (const wall of fan.walls) {
    polyline(ctx, wall, map);
    ctx.stroke();
  }

  // Scale bar, bottom left.
  const barMm = niceLength((width * 0.22) / scale);
  const barPx = barMm * scale;
  const x0 = pad;
  const y0 = height - 14;
  ctx.strokeStyle = c.ink;
  ctx.lineWidth = 2;
  ctx.beginPath();
  ctx.moveTo(x0, y0 - 5);
  ctx.lineTo(x0, y0);
  ctx.lineTo(x0 + barPx, y0);
  ctx.lineTo(x0 + barPx, y0 - 5);
  ctx.stroke();
  ctx.fillStyle = c.ink;
  ctx.font = '13px system-ui, sans-serif';
  ctx.textBaseline = 'bottom';
  ctx.fillText(`${Number(barMm.toPrecision(3))} mm`, x0 + barPx + 8, y0 + 2);

  return { guided, escaped };
}

/** Blank a canvas to the paper colour (before the first valid design). */
export function clearCanvas(canvas) {
  const { ctx, width, height } = prepareCanvas(canvas);
  ctx.fillStyle = palette().paper;
  ctx.fillRect(0, 0, width, height);
}

/**
 * Size a canvas that the core draws on: the backing store is in device pixels, and the core
 * scales its fonts and lines by the returned ratio, so the chart stays sharp on dense screens.
 */
export function sizeCanvasForCore(canvas) {
  const ratio = Math.min(4, Math.max(1, window.devicePixelRatio || 1));
  const width = Math.max(1, Math.round(canvas.clientWidth * ratio));
  const height = Math.max(1, Math.round(canvas.clientHeight * ratio));
  if (canvas.width !== width) canvas.width = width;
  if (canvas.height !== height) canvas.height = height;
  return { width, height, ratio };
}
