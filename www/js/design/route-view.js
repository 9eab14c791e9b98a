// The routed pipe drawn in 3D (orthographic) on a canvas the user can turn (drag), zoom (wheel,
// pinch, + / −) and pan (shift-drag, two fingers, arrow keys with shift): the pipe from the core's
// outline, the leakage along it as a heat strip, and a sample of traced rays coloured by fate.
// Drawing only: every position comes from the core.

const FATE_STYLE = {
  delivered: { colour: '#1864ab', label: 'reach the window' },
  leaked: { colour: '#d9480f', label: 'leak out of the side' },
  contact: { colour: '#862e9c', label: 'lost into a mount' },
  coating: { colour: '#0b7285', label: 'absorbed by a coating' },
  returned: { colour: '#2b8a3e', label: 'come back out of the entry' },
  reflected_entry: { colour: '#868e96', label: 'reflected at the entry' },
  missed: { colour: '#adb5bd', label: 'miss the entry face' },
  stopped: { colour: '#495057', label: 'stopped (hit limit)' },
};

export const FATES = FATE_STYLE;

/** How each kind of coating is drawn on the pipe: fill, edge, and its name on the view. */
const COATING_STYLE = {
  white_paint: { fill: 'rgba(255, 255, 255, 0.92)', edge: '#495057', label: 'white paint' },
  metal: { fill: 'rgba(134, 142, 150, 0.75)', edge: '#343a40', label: 'metal' },
  black: { fill: 'rgba(33, 37, 41, 0.85)', edge: '#000000', label: 'black paint' },
};

/** Heat strip colours, light to dark (sequential; our own ramp). */
const HEAT = [
  [255, 236, 179],
  [253, 190, 95],
  [240, 120, 40],
  [200, 50, 20],
  [120, 10, 20],
];

export function heatColour(x) {
  const t = Math.min(1, Math.max(0, x)) * (HEAT.length - 1);
  const i = Math.min(HEAT.length - 2, Math.floor(t));
  const f = t - i;
  const c = HEAT[i].map((v, k) => Math.round(v + f * (HEAT[i + 1][k] - v)));
  return `rgb(${c[0]},${c[1]},${c[2]})`;
}

export const heatGradientCss = () => `linear-gradient(to right, ${HEAT.map((c) => `rgb(${c.join(',')})`).join(', ')})`;

const DEG = Math.PI / 180;
/**
 * Preset views [azimuth, elevation], relative to the board the LED sits on (the plane through
 * the LED across the entry axis): turned; edge-on with the pipe's width across the screen (bends
 * that turn toward the width, turn 0°/180°, in full); edge-on with its height across (bends
 * turning toward the height, 90°/270°, out of the first plane); and onto the board, along the
 * LED's axis.
 */
const VIEWS = { turned: [90, 35], plan: [90, 90], side: [90, 0], board: [0, 0] };

/**
 * Move text labels `{ x, y, w, h }` (centres and sizes, px) apart until no two boxes overlap
 * (with a 2 px gap): each overlapping pair is pushed apart along the axis where it overlaps
 * least, half each way. In place; returns the labels.
 */
export function separateLabels(labels, gap = 2) {
  for (let round = 0; round < 20; round += 1) {
    let moved = false;
    for (let i = 0; i < labels.length; i += 1) {
      for (let j = i + 1; j < labels.length; j += 1) {
        const [a, b] = [labels[i], labels[j]];
        const ox = (a.w + b.w) / 2 + gap - Math.abs(a.x - b.x);
        const oy = (a.h + b.h) / 2 + gap - Math.abs(a.y - b.y);
        if (ox <= 0 || oy <= 0) continue;
        moved = true;
        if (oy <= ox) {
          const s = a.y < b.y || (a.y === b.y && i < j) ? -1 : 1;
          a.y += (s * oy) / 2;
          b.y -= (s * oy) / 2;
        } else {
          const s = a.x < b.x ? -1 : 1;
          a.x += (s * ox) / 2;
          b.x -= (s * ox) / 2;
        }
      }
    }
    if (!moved) break;
  }
  return labels;
}

/** A "nice" scale-bar length (1, 2 or 5 × 10ⁿ) near `x`. */
function niceLength(x) {
  const p = 10 ** Math.floor(Math.log10(x));
  const m = x / p;
  return (m < 1.5 ? 1 : m < 3.5 ? 2 : m < 7.5 ? 5 : 10) * p;
}

/** The convex hull of screen points [x, y], counter-clockwise (Andrew's monotone chain). */
function convexHull(points) {
  const p = [...points].sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  if (p.length < 3) return p;
  const cross = (o, a, b) => (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
  const half = (list) => {
    const out = [];
    for (const q of list) {
      while (out.length >= 2 && cross(out[out.length - 2], out[out.length - 1], q) <= 0) out.pop();
      out.push(q);
    }
    out.pop();
    return out;
  };
  return [...half(p), ...half([...p].reverse())];
}

export class RouteView {
  constructor(canvas) {
    this.canvas = canvas;
    /** 'mm' or 'in': the unit of the scale bar. */
    this.unit = 'mm';
    this.outline = null;
    this.report = null;
    this.az = VIEWS.turned[0];
    this.el = VIEWS.turned[1];
    this.scale = 1; // CSS px per mm
    this.pan = [0, 0]; // CSS px
    this.fitted = false;
    this.pointers = new Map();
    this.wire();
    new ResizeObserver(() => this.draw()).observe(canvas);
  }

  setOutline(outline) {
    const first = !this.outline;
    this.outline = outline;
    // Rays and leakage of the previous route do not belong on this one.
    this.report = null;
    if (first || !this.fitted) this.fit();
    this.draw();
  }

  setReport(report) {
    this.report = report;
    this.draw();
  }

  view(name) {
    [this.az, this.el] = VIEWS[name];
    this.fit();
  }

  // ------------------------------------------------------------ projection

  project(p) {
    const [x, y, z] = p;
    const ca = Math.cos(this.az * DEG);
    const sa = Math.sin(this.az * DEG);
    const x1 = x * ca + z * sa;
    const z1 = -x * sa + z * ca;
    const ce = Math.cos(this.el * DEG);
    const se = Math.sin(this.el * DEG);
    const y2 = y * ce - z1 * se;
    return [x1, y2];
  }

  toScreen(p) {
    const [u, v] = this.project(p);
    const w = this.canvas.clientWidth;
    const hgt = this.canvas.clientHeight;
    return [w / 2 + this.pan[0] + u * this.scale, hgt / 2 + this.pan[1] - v * this.scale];
  }

  /** The scale bar's unit ('mm' or 'in'). */
  setUnit(unit) {
    this.unit = unit === 'in' ? 'in' : 'mm';
    this.draw();
  }

  /** The model's extent on the screen plane (projected mm): [lo, hi]. */
  extent() {
    const o = this.outline;
    let lo = [Infinity, Infinity];
    let hi = [-Infinity, -Infinity];
    const add = (p, r = 0) => {
      const [u, v] = this.project(p);
      lo = [Math.min(lo[0], u - r), Math.min(lo[1], v - r)];
      hi = [Math.max(hi[0], u + r), Math.max(hi[1], v + r)];
    };
    for (const seg of o.segments) for (const pt of seg.points) add(pt.centre, Math.max(pt.half_width_mm, pt.half_height_mm));
    for (const face of o.faces || []) for (const line of face.lines) for (const p of line) add(p);
    if (o.source_mm) add(o.source_mm);
    return [lo, hi];
  }

  /**
   * Keep the model on the canvas whatever the dragging, panning, zooming or keys did: at least
   * `margin` px of it stays inside each edge, and it is never zoomed below 60 px across.
   */
  keepInView() {
    if (!this.outline) return;
    const w = this.canvas.clientWidth;
    const hgt = this.canvas.clientHeight;
    const [lo, hi] = this.extent();
    const span = Math.max(hi[0] - lo[0], hi[1] - lo[1], 1e-3);
    if (span * this.scale < 60) this.scale = 60 / span;
    const margin = Math.min(40, w / 4, hgt / 4);
    // Screen box of the model.
    const x0 = w / 2 + this.pan[0] + lo[0] * this.scale;
    const x1 = w / 2 + this.pan[0] + hi[0] * this.scale;
    const y0 = hgt / 2 + this.pan[1] - hi[1] * this.scale;
    const y1 = hgt / 2 + this.pan[1] - lo[1] * this.scale;
    if (x1 < margin) this.pan[0] += margin - x1;
    if (x0 > w - margin) this.pan[0] -= x0 - (w - margin);
    if (y1 < margin) this.pan[1] += margin - y1;
    if (y0 > hgt - margin) this.pan[1] -= y0 - (hgt - margin);
  }

  /** Scale and centre so the whole route, source and detector fit. */
  fit() {
    const o = this.outline;
    if (!o) return;
    let [lo, hi] = this.extent();
    if (o.receiver) {
      const r = Math.max(o.receiver.half_width_mm, o.receiver.half_height_mm);
      const [u, v] = this.project(o.receiver.centre);
      lo = [Math.min(lo[0], u - r), Math.min(lo[1], v - r)];
      hi = [Math.max(hi[0], u + r), Math.max(hi[1], v + r)];
    }
    const w = Math.max(1, this.canvas.clientWidth);
    const hgt = Math.max(1, this.canvas.clientHeight);
    const span = [Math.max(hi[0] - lo[0], 1e-3), Math.max(hi[1] - lo[1], 1e-3)];
    this.scale = 0.86 * Math.min(w / span[0], hgt / span[1]);
    const mid = [(lo[0] + hi[0]) / 2, (lo[1] + hi[1]) / 2];
    this.pan = [-mid[0] * this.scale, mid[1] * this.scale];
    this.fitted = true;
    this.draw();
  }

  zoomAt(factor, sx, sy) {
    const w = this.canvas.clientWidth;
    const hgt = this.canvas.clientHeight;
    const s = Math.min(Math.max(this.scale * factor, 0.05), 5000);
    const f = s / this.scale;
    // Keep the point under (sx, sy) in place.
    this.pan = [(this.pan[0] + w / 2 - sx) * f + sx - w / 2, (this.pan[1] + hgt / 2 - sy) * f + sy - hgt / 2];
    this.scale = s;
    this.fitted = false;
    this.draw();
  }

  turn(dAz, dEl) {
    this.az = (this.az + dAz) % 360;
    this.el = Math.min(90, Math.max(-90, this.el + dEl));
    this.fitted = false;
    this.draw();
  }

  wire() {
    const c = this.canvas;
    c.addEventListener('wheel', (e) => {
      e.preventDefault();
      const r = c.getBoundingClientRect();
      this.zoomAt(Math.exp(-e.deltaY * 0.0015), e.clientX - r.left, e.clientY - r.top);
    }, { passive: false });
    c.addEventListener('pointerdown', (e) => {
      c.setPointerCapture(e.pointerId);
      this.pointers.set(e.pointerId, { x: e.clientX, y: e.clientY, shift: e.shiftKey || e.button === 1 || e.button === 2 });
    });
    c.addEventListener('pointermove', (e) => {
      const prev = this.pointers.get(e.pointerId);
      if (!prev) return;
      const dx = e.clientX - prev.x;
      const dy = e.clientY - prev.y;
      if (this.pointers.size === 2) {
        // Two fingers: pinch to zoom, move to pan (each finger contributes half).
        const [a, b] = [...this.pointers.entries()].map(([id, p]) => (id === e.pointerId ? { x: e.clientX, y: e.clientY } : p));
        const [pa, pb] = [...this.pointers.values()];
        const before = Math.hypot(pa.x - pb.x, pa.y - pb.y);
        const after = Math.hypot(a.x - b.x, a.y - b.y);
        const r = c.getBoundingClientRect();
        this.pan = [this.pan[0] + dx / 2, this.pan[1] + dy / 2];
        if (before > 0) this.zoomAt(after / before, (a.x + b.x) / 2 - r.left, (a.y + b.y) / 2 - r.top);
      } else if (prev.shift || e.shiftKey) {
        this.pan = [this.pan[0] + dx, this.pan[1] + dy];
        this.fitted = false;
        this.draw();
      } else {
        this.turn(dx * 0.4, dy * 0.4);
      }
      this.pointers.set(e.pointerId, { ...prev, x: e.clientX, y: e.clientY });
    });
    const up = (e) => this.pointers.delete(e.pointerId);
    c.addEventListener('pointerup', up);
    c.addEventListener('pointercancel', up);
    c.addEventListener('contextmenu', (e) => e.preventDefault());
    c.addEventListener('keydown', (e) => {
      const step = 8;
      const k = e.key;
      if (k === '+' || k === '=') this.zoomAt(1.25, c.clientWidth / 2, c.clientHeight / 2);
      else if (k === '-' || k === '_') this.zoomAt(0.8, c.clientWidth / 2, c.clientHeight / 2);
      else if (k === '0') this.fit();
      else if (k.startsWith('Arrow')) {
        const d = { ArrowLeft: [-1, 0], ArrowRight: [1, 0], ArrowUp: [0, -1], ArrowDown: [0, 1] }[k];
        if (e.shiftKey) {
          this.pan = [this.pan[0] + d[0] * 20, this.pan[1] + d[1] * 20];
          this.draw();
        } else this.turn(d[0] * step, d[1] * step);
      } else return;
      e.preventDefault();
    });
  }

  // ------------------------------------------------------------ drawing

  draw() {
    const c = this.canvas;
    const ratio = window.devicePixelRatio || 1;
    const w = c.clientWidth;
    const hgt = c.clientHeight;
    if (w === 0 || hgt === 0) return;
    if (c.width !== Math.round(w * ratio) || c.height !== Math.round(hgt * ratio)) {
      c.width = Math.round(w * ratio);
      c.height = Math.round(hgt * ratio);
    }
    const g = c.getContext('2d');
    g.setTransform(ratio, 0, 0, ratio, 0, 0);
    g.fillStyle = '#ffffff';
    g.fillRect(0, 0, w, hgt);
    const o = this.outline;
    if (!o) return;
    g.lineJoin = 'round';
    g.lineCap = 'butt';
    this.keepInView();
    this.drawBoard(g);

    // The pipe: a dark outline stroke, then the body (a round pipe's outline under an
    // orthographic view is as wide as its diameter from every side).
    for (const pass of ['wall', 'body']) {
      for (const [k, seg] of o.segments.entries()) {
        const pts = seg.points;
        if (seg.kind === 'corner') {
          this.drawCorner(g, pts, pass, seg.round);
          continue;
        }
        // A round end would bulge past a corner's face: square ends where a corner joins.
        const cornerBefore = o.segments[k - 1]?.kind === 'corner';
        const cornerAfter = o.segments[k + 1]?.kind === 'corner';
        for (let i = 0; i + 1 < pts.length; i += 1) {
          const hw = Math.max(pts[i].half_width_mm, pts[i].half_height_mm, pts[i + 1].half_width_mm, pts[i + 1].half_height_mm);
          const [x0, y0] = this.toScreen(pts[i].centre);
          const [x1, y1] = this.toScreen(pts[i + 1].centre);
          g.beginPath();
          g.moveTo(x0, y0);
          g.lineTo(x1, y1);
          g.lineWidth = Math.max(2 * hw * this.scale + (pass === 'wall' ? 2.5 : 0), pass === 'wall' ? 3 : 1);
          g.strokeStyle = pass === 'wall' ? '#1f2a36' : '#e4f0f2';
          g.lineCap = (i === 0 && cornerBefore) || (i === pts.length - 2 && cornerAfter) ? 'butt' : 'round';
          g.stroke();
        }
      }
    }
    this.drawCoatings(g);
    this.drawRays(g);
    this.drawHeat(g);
    this.drawFaces(g);
    this.drawCoatingLabels(g);
    this.drawScale(g, w, hgt);
  }

  /**
   * A reflecting corner: each leg is the solid between its end section and the face (the middle
   * sample, the section seen on the face's plane), so its outline on the screen is the convex hull
   * of those two rings — the flat face cutting the outer side of the turn, to scale from any side.
   */
  drawCorner(g, pts, pass, round) {
    const ringPoints = (pt) => {
      const n = round ? 48 : 4;
      const out = [];
      for (let k = 0; k < n; k += 1) {
        const t = round ? (k / n) * 2 * Math.PI : (k + 0.5) * (Math.PI / 2);
        const cu = round ? Math.cos(t) : Math.sign(Math.cos(t));
        const cv = round ? Math.sin(t) : Math.sign(Math.sin(t));
        out.push(this.toScreen(pt.centre.map((x, j) => x + pt.half_width_mm * cu * pt.width_axis[j] + pt.half_height_mm * cv * pt.height_axis[j])));
      }
      return out;
    };
    const rings = pts.map(ringPoints);
    for (const [a, b] of [[0, 1], [1, 2]]) {
      const hull = convexHull([...rings[a], ...rings[b]]);
      g.beginPath();
      hull.forEach(([x, y], k) => (k === 0 ? g.moveTo(x, y) : g.lineTo(x, y)));
      g.closePath();
      if (pass === 'wall') {
        g.fillStyle = '#1f2a36';
        g.strokeStyle = '#1f2a36';
        g.lineWidth = 2.5;
        g.lineJoin = 'miter';
        g.fill();
        g.stroke();
        g.lineJoin = 'round';
      } else {
        g.fillStyle = '#e4f0f2';
        g.fill();
      }
    }
  }

  /**
   * The board the LED sits on: the plane through the LED across the entry axis (its width and
   * height axes), drawn as a translucent square around the LED, behind everything else.
   */
  drawBoard(g) {
    const o = this.outline;
    const f = o.entry;
    if (!f || !o.source_mm) return;
    const [lo, hi] = this.extent();
    const half = 0.35 * Math.max(hi[0] - lo[0], hi[1] - lo[1], 4 * (o.source_half_size_mm || 0.5));
    const corner = (a, b) => o.source_mm.map((x, j) => x + half * (a * f.x[j] + b * f.y[j]));
    g.beginPath();
    [[-1, -1], [1, -1], [1, 1], [-1, 1]].forEach(([a, b], k) => {
      const [sx, sy] = this.toScreen(corner(a, b));
      if (k === 0) g.moveTo(sx, sy);
      else g.lineTo(sx, sy);
    });
    g.closePath();
    g.fillStyle = 'rgba(47, 158, 68, 0.10)';
    g.fill();
    g.strokeStyle = 'rgba(43, 138, 62, 0.55)';
    g.lineWidth = 1;
    g.stroke();
    const [lx, ly] = this.toScreen(corner(-1, 1));
    g.fillStyle = '#2b8a3e';
    g.font = '12px system-ui, sans-serif';
    g.textBaseline = 'bottom';
    g.fillText('board (LED side)', lx + 4, ly - 2);
  }

  /**
   * A scale bar in the unit shown (bottom left) and the directions of the pipe's width, height
   * and entry axes at the LED (bottom right): an orthographic view keeps lengths across the
   * screen true, so the bar measures anything parallel to the screen.
   */
  drawScale(g, w, hgt) {
    const perMm = this.unit === 'in' ? 25.4 : 1;
    const target = 90 / this.scale / perMm; // about 90 px
    const bar = niceLength(target);
    const px = bar * perMm * this.scale;
    const x0 = 12;
    const y0 = hgt - 14;
    g.strokeStyle = '#212529';
    g.lineWidth = 2;
    g.beginPath();
    g.moveTo(x0, y0 - 5);
    g.lineTo(x0, y0);
    g.lineTo(x0 + px, y0);
    g.lineTo(x0 + px, y0 - 5);
    g.stroke();
    g.fillStyle = '#212529';
    g.font = '12px system-ui, sans-serif';
    g.textBaseline = 'bottom';
    g.fillText(`${Number(bar.toPrecision(3))} ${this.unit}`, x0 + 4, y0 - 4);
    this.canvas.dataset.scaleBar = `${Number(bar.toPrecision(3))} ${this.unit}`;
    this.canvas.dataset.scaleBarPx = px.toFixed(1);
    // The axes at the LED, as arrows of 26 px.
    const f = this.outline.entry;
    if (!f) return;
    const cx = w - 60;
    const cy = hgt - 50;
    const axes = [[f.x, 'width', '#c92a2a'], [f.y, 'height', '#2b8a3e'], [f.z, 'axis', '#1864ab']];
    const labels = [];
    for (const [d, name, colour] of axes) {
      const [u, v] = this.project(d);
      const ex = cx + 26 * u;
      const ey = cy - 26 * v;
      g.strokeStyle = colour;
      g.lineWidth = 2;
      g.beginPath();
      g.moveTo(cx, cy);
      g.lineTo(ex, ey);
      g.stroke();
      // The name beyond the arrow's tip, centred on its line (an axis pointing at the viewer
      // has no length on the screen and no name).
      if (Math.hypot(u, v) > 0.2) {
        labels.push({ name, colour, x: cx + 40 * u, y: cy - 36 * v, w: g.measureText(name).width, h: 13 });
      }
    }
    // Two arrows turned close together would put their names on top of each other: moved apart.
    separateLabels(labels);
    g.textAlign = 'center';
    g.textBaseline = 'middle';
    for (const l of labels) {
      g.fillStyle = l.colour;
      g.fillText(l.name, l.x, l.y);
    }
    g.textAlign = 'start';
    this.canvas.dataset.axisLabels = JSON.stringify(labels.map(({ name, x, y, w, h }) => ({ name, x, y, w, h })));
  }

  /** Leakage along the route as a coloured strip down the middle of the pipe. */
  drawHeat(g) {
    const prof = this.report?.leak_along_route;
    if (!prof || !prof.share?.length) return;
    // Colour by each bin's share (the bins are equally long, so this is the share per mm up to
    // a constant); the legend quotes the largest bin's share and the bin length from the core.
    const density = prof.share;
    const max = Math.max(...density);
    this.heatMax = max;
    this.heatBinMm = prof.bin_mm;
    if (!(max > 0)) return;
    const binAt = (s) => Math.min(density.length - 1, Math.max(0, Math.floor(s / prof.bin_mm)));
    for (const seg of this.outline.segments) {
      const pts = seg.points;
      for (let i = 0; i + 1 < pts.length; i += 1) {
        const a = pts[i];
        const b = pts[i + 1];
        const hw = Math.max(a.half_width_mm, a.half_height_mm);
        // Split the piece at bin edges so each part takes its own bin's colour.
        const cuts = [a.s_mm];
        for (let e = (Math.floor(a.s_mm / prof.bin_mm) + 1) * prof.bin_mm; e < b.s_mm; e += prof.bin_mm) cuts.push(e);
        cuts.push(b.s_mm);
        for (let k = 0; k + 1 < cuts.length; k += 1) {
          const v = density[binAt(0.5 * (cuts[k] + cuts[k + 1]))] / max;
          if (v <= 0) continue;
          const at = (s) => {
            const f = b.s_mm > a.s_mm ? (s - a.s_mm) / (b.s_mm - a.s_mm) : 0;
            return a.centre.map((x, j) => x + f * (b.centre[j] - x));
          };
          const [x0, y0] = this.toScreen(at(cuts[k]));
          const [x1, y1] = this.toScreen(at(cuts[k + 1]));
          g.beginPath();
          g.moveTo(x0, y0);
          g.lineTo(x1, y1);
          g.lineCap = 'butt';
          g.lineWidth = Math.max(4, 0.7 * hw * this.scale);
          g.strokeStyle = heatColour(0.15 + 0.85 * v);
          g.stroke();
        }
      }
    }
  }

  /** Source, entry and exit faces, detector. */
  drawFaces(g) {
    const o = this.outline;
    const ring = (centre, u, v, ru, rv, round) => {
      g.beginPath();
      const n = round ? 40 : 4;
      for (let k = 0; k <= n; k += 1) {
        const t = round ? (k / n) * 2 * Math.PI : (k + 0.5) * (Math.PI / 2);
        const cu = round ? Math.cos(t) : Math.sign(Math.cos(t));
        const cv = round ? Math.sin(t) : Math.sign(Math.sin(t));
        const p = centre.map((x, j) => x + ru * cu * u[j] + rv * cv * v[j]);
        const [sx, sy] = this.toScreen(p);
        if (k === 0) g.moveTo(sx, sy);
        else g.lineTo(sx, sy);
      }
    };
    const first = o.segments[0]?.points[0];
    const lastSeg = o.segments[o.segments.length - 1];
    const last = lastSeg?.points[lastSeg.points.length - 1];
    g.lineWidth = 1.5;
    for (const [pt, seg, colour] of [[first, o.segments[0], '#12525a'], [last, lastSeg, '#1864ab']]) {
      if (!pt) continue;
      ring(pt.centre, pt.width_axis, pt.height_axis, pt.half_width_mm, pt.half_height_mm, seg.round);
      g.strokeStyle = colour;
      g.stroke();
    }
    // Each reflecting corner's face (its middle sample: the section seen on the face's plane).
    for (const seg of o.segments) {
      if (seg.kind !== 'corner' || seg.points.length !== 3) continue;
      const f = seg.points[1];
      ring(f.centre, f.width_axis, f.height_axis, f.half_width_mm, f.half_height_mm, seg.round);
      g.strokeStyle = '#7950f2';
      g.stroke();
    }
    // Domed and cut faces (the core's outline, to scale): lines on the face and the side wall
    // carried on up to it.
    for (const face of o.faces || []) {
      g.strokeStyle = face.end === 'entry' ? '#12525a' : '#1864ab';
      g.lineWidth = 1.2;
      for (const line of face.lines) {
        g.beginPath();
        line.forEach((p, k) => {
          const [sx, sy] = this.toScreen(p);
          if (k === 0) g.moveTo(sx, sy);
          else g.lineTo(sx, sy);
        });
        g.stroke();
      }
    }
    g.lineWidth = 1.5;
    if (o.source_mm && o.source_width_axis) {
      // The emitting area to scale, in its own plane (a disk, square or rectangle).
      ring(o.source_mm, o.source_width_axis, o.source_height_axis, o.source_half_width_mm, o.source_half_height_mm, o.source_round);
      g.fillStyle = 'rgba(240, 140, 0, 0.35)';
      g.fill();
      g.strokeStyle = '#5c3b00';
      g.stroke();
    }
    if (o.source_mm) {
      const [sx, sy] = this.toScreen(o.source_mm);
      g.fillStyle = '#f08c00';
      g.strokeStyle = '#5c3b00';
      g.beginPath();
      g.arc(sx, sy, 4, 0, 2 * Math.PI);
      g.fill();
      g.stroke();
    }
    if (o.receiver) {
      const r = o.receiver;
      const ex = o.exit;
      g.setLineDash([4, 3]);
      ring(r.centre, ex.x, ex.y, r.half_width_mm, r.half_height_mm, r.round ?? Math.abs(r.half_width_mm - r.half_height_mm) < 1e-12);
      g.strokeStyle = '#364fc7';
      g.stroke();
      g.setLineDash([]);
    }
  }

  /**
   * The coated zones on the pipe, to scale: each zone's rings of wall points from the core's
   * outline joined into quadrilaterals (both sides of the pipe show through, as the pipe is
   * drawn without depth), edged, and named by kind beside its middle. A zone on a corner comes
   * in pieces (one per run of its sector that has wall), all with its index: named once.
   */
  drawCoatings(g) {
    const zones = this.outline?.coatings;
    this.canvas.dataset.coatingsDrawn = String(new Set((zones || []).map((z) => z.index)).size);
    const labels = [];
    this.coatingLabels = labels;
    if (!zones?.length) return;
    g.lineJoin = 'round';
    const named = new Set();
    for (const zone of zones) {
      const style = COATING_STYLE[zone.kind] || COATING_STYLE.black;
      const rings = zone.rings.map((ring) => ring.map((p) => this.toScreen(p)));
      g.fillStyle = style.fill;
      g.strokeStyle = style.edge;
      g.lineWidth = 0.6;
      for (let i = 0; i + 1 < rings.length; i += 1) {
        const [a, b] = [rings[i], rings[i + 1]];
        for (let k = 0; k + 1 < a.length; k += 1) {
          g.beginPath();
          g.moveTo(...a[k]);
          g.lineTo(...a[k + 1]);
          g.lineTo(...b[k + 1]);
          g.lineTo(...b[k]);
          g.closePath();
          g.fill();
        }
      }
      // The zone's edge: its first and last rings and its two sides along the pipe.
      g.lineWidth = 1.2;
      g.beginPath();
      for (const ring of [rings[0], rings[rings.length - 1]]) {
        ring.forEach(([x, y], k) => (k === 0 ? g.moveTo(x, y) : g.lineTo(x, y)));
      }
      for (const side of [0, rings[0].length - 1]) {
        rings.forEach((ring, k) => (k === 0 ? g.moveTo(...ring[side]) : g.lineTo(...ring[side])));
      }
      g.stroke();
      if (named.has(zone.index)) continue;
      named.add(zone.index);
      const mid = rings[Math.floor(rings.length / 2)];
      const [lx, ly] = mid[Math.floor(mid.length / 2)];
      labels.push([style.label, lx + 8, ly]);
    }
  }

  /** The coated zones' names, drawn over the rays (on a white halo) so that they stay readable. */
  drawCoatingLabels(g) {
    g.font = '12px system-ui, sans-serif';
    g.textBaseline = 'middle';
    g.lineJoin = 'round';
    for (const [text, x, y] of this.coatingLabels || []) {
      g.strokeStyle = 'rgba(255, 255, 255, 0.9)';
      g.lineWidth = 3;
      g.strokeText(text, x, y);
      g.fillStyle = '#212529';
      g.fillText(text, x, y);
    }
  }

  drawRays(g) {
    const paths = this.report?.paths;
    this.canvas.dataset.partsDrawn = '0';
    if (!paths?.length) return;
    g.lineWidth = 0.9;
    g.globalAlpha = 0.5;
    g.lineCap = 'round';
    for (const path of paths) {
      const style = FATE_STYLE[path.fate] || FATE_STYLE.stopped;
      if (path.hidden) continue;
      g.strokeStyle = style.colour;
      g.beginPath();
      path.points.forEach((p, k) => {
        const [sx, sy] = this.toScreen(p);
        if (k === 0) g.moveTo(sx, sy);
        else g.lineTo(sx, sy);
      });
      g.stroke();
    }
    // Where part of a drawn ray's light left while the rest went on (a wall below the critical
    // angle, or a coating, splits the light): a dot in the colour of what became of that part,
    // larger for a larger part. The line keeps the colour of where the rest went.
    g.globalAlpha = 0.85;
    let dots = 0;
    for (const path of paths) {
      if (path.hidden || !path.parts_left) continue;
      for (const part of path.parts_left) {
        const p = path.points[part.vertex];
        if (!p) continue;
        dots += 1;
        const [sx, sy] = this.toScreen(p);
        g.fillStyle = (FATE_STYLE[part.fate] || FATE_STYLE.leaked).colour;
        g.beginPath();
        g.arc(sx, sy, 1.5 + 2 * Math.sqrt(Math.min(1, Math.max(0, part.weight))), 0, 2 * Math.PI);
        g.fill();
      }
    }
    this.canvas.dataset.partsDrawn = String(dots);
    g.globalAlpha = 1;
  }
}
