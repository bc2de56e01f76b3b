// MeshView draws one field on a mesh's own polygons (cells, or the dual
// polygons round vertices) through a projection, and owns what every such
// view shares: the canvas and its buffers, the pointer (drag, wheel,
// double click) and the raster loop.
//
// Drawing is split in two so that a frame costs the same whatever the
// number of cells. When the view (projection state, canvas size) or the
// grid changes, the projection scan-converts the polygons once into an
// index raster: for each pixel, the polygon that covers its centre. Each
// frame then only maps values to colours per polygon and copies colours
// per pixel.
//
// A projection is an object with
//   name              'plane', 'lonlat' or 'globe' (the canvas's data-drawn)
//   key()             what its raster depends on besides grid, location and
//                     canvas size, as a string
//   camera()          its state as text for tests (the canvas's data-camera)
//   fit(W, H), zoomBy(factor, px, py, W, H), dragBy(dx, dy, W, H),
//   resized(oldW, oldH, W, H)
//   raster(view, loc) fills the index raster through view.fill
//   cellPixels(W, H)  a typical cell's size on screen, in pixels
//   state(), follow(state)  copy the view of another view's projection
// TiledMap below is the projection of flat coordinates (the periodic plane
// and the longitude–latitude map); globe.js has the orthographic globe.

import { SEQUENTIAL } from './colour.js';
import { THEME, FIELD_GROUND } from './theme.js';
import { fitToBox } from './canvas.js';

const OUTLINE_PX = 9; // cells at least this many pixels across get outlines
export const MAX_POLY = 40; // corners kept of a polygon (pole bands have more than cells)

export class MeshView {
  constructor(canvas) {
    this.canvas = canvas;
    this.ctx = canvas.getContext('2d', { alpha: false });
    this.geom = null;
    this.frame = null;
    this.map = SEQUENTIAL;
    this.lo = 0;
    this.hi = 1;
    this.projection = null;
    this.active = true; // pointer input is ignored while false
    this.highlight = null; // {x, y} in the geometry's coordinates
    this.rasterKey = '';
    this.ids = null;
    this.mask = null;
    this.img = null;
    this.outline = false;
    this.colours = new Uint32Array(0);
    this.darks = new Uint32Array(0);
    this.px = new Float64Array(MAX_POLY);
    this.py = new Float64Array(MAX_POLY);
    this.cross = new Float64Array(MAX_POLY);
    this.onchange = null; // called when the view changes by user action
    this.attachPointer();
  }

  setFrame(f, map, lo, hi) {
    this.frame = f;
    this.map = map;
    this.lo = lo;
    this.hi = hi;
  }

  invalidate() { this.rasterKey = ''; }

  // fit shows the whole domain.
  fit() {
    if (!this.projection) return;
    this.projection.fit(this.canvas.width || 1, this.canvas.height || 1);
    this.invalidate();
  }

  zoomBy(factor, px, py) {
    if (!this.projection) return;
    const W = this.canvas.width, H = this.canvas.height;
    if (px === undefined) { px = W / 2; py = H / 2; }
    this.projection.zoomBy(factor, px, py, W, H);
    this.invalidate();
  }

  dragBy(dx, dy) {
    if (!this.projection) return;
    this.projection.dragBy(dx, dy, this.canvas.width, this.canvas.height);
    this.invalidate();
  }

  // follow takes the view of src (a MeshView) when both draw the same
  // kind of projection of the same domain; it reports whether it did.
  follow(src) {
    const p = this.projection, q = src.projection;
    if (!p || !q || p.name !== q.name || !p.follow(q.state())) return false;
    this.invalidate();
    return true;
  }

  // resize matches the canvas's pixels to its box; it reports a change.
  resize() {
    const oldW = this.canvas.width, oldH = this.canvas.height;
    if (!fitToBox(this.canvas)) return false;
    this.resized(oldW, oldH, this.canvas.width, this.canvas.height);
    this.invalidate();
    return true;
  }

  resized(oldW, oldH, W, H) {
    if (this.projection) this.projection.resized(oldW, oldH, W, H);
  }

  attachPointer() {
    const c = this.canvas;
    const dpr = () => window.devicePixelRatio || 1;
    const changed = () => { if (this.onchange) this.onchange(); };
    let drag = null;
    c.addEventListener('pointerdown', (e) => {
      if (!this.active) return;
      drag = { x: e.clientX, y: e.clientY };
      c.setPointerCapture(e.pointerId);
    });
    c.addEventListener('pointermove', (e) => {
      if (!drag || !this.active) return;
      this.dragBy((e.clientX - drag.x) * dpr(), (e.clientY - drag.y) * dpr());
      drag = { x: e.clientX, y: e.clientY };
      changed();
    });
    const end = () => { drag = null; };
    c.addEventListener('pointerup', end);
    c.addEventListener('pointercancel', end);
    c.addEventListener('wheel', (e) => {
      if (!this.active) return;
      e.preventDefault();
      const r = c.getBoundingClientRect();
      this.zoomBy(Math.exp(-e.deltaY * 0.0015), (e.clientX - r.left) * dpr(), (e.clientY - r.top) * dpr());
      changed();
    }, { passive: false });
    c.addEventListener('dblclick', () => {
      if (!this.active) return;
      this.fit();
      changed();
    });
  }

  // fill writes id into the pixels of the polygon (this.px, this.py)[0..m).
  fill(m, id) {
    fillPolygon(this.ids, this.canvas.width, this.canvas.height, this.px, this.py, m, id, this.cross);
  }

  raster(loc) {
    const W = this.canvas.width, H = this.canvas.height;
    if (!this.ids || this.ids.length !== W * H) {
      this.ids = new Int32Array(W * H);
      this.mask = new Uint8Array(W * H);
      this.img = this.ctx.createImageData(W, H);
    }
    this.ids.fill(-1);
    this.projection.raster(this, loc);
    // Outlines when cells are large enough on screen to tell apart.
    const ids = this.ids, mask = this.mask;
    this.outline = this.projection.cellPixels(W, H) >= OUTLINE_PX;
    mask.fill(0);
    if (!this.outline) return;
    for (let y = 0; y < H - 1; y++) {
      const row = y * W;
      for (let x = 0; x < W - 1; x++) {
        const q = row + x, id = ids[q];
        if (id >= 0 && (id !== ids[q + 1] || id !== ids[q + W])) mask[q] = 1;
      }
    }
  }

  render() {
    const ctx = this.ctx, p = this.projection;
    const W = this.canvas.width, H = this.canvas.height;
    const f = this.frame;
    if (!this.geom || !f || !p) {
      ctx.fillStyle = THEME.ground;
      ctx.fillRect(0, 0, W, H);
      return;
    }
    const key = `${this.geom.gen}|${f.loc}|${W}x${H}|${p.name}|${p.key()}`;
    if (key !== this.rasterKey) {
      this.raster(f.loc);
      this.rasterKey = key;
    }
    const vals = f.values, n = vals.length;
    if (this.colours.length < n) {
      this.colours = new Uint32Array(n);
      this.darks = new Uint32Array(n);
    }
    const colours = this.colours, darks = this.darks;
    const { lut, dark } = this.map;
    const lo = this.lo, inv = 255 / (this.hi - this.lo);
    for (let i = 0; i < n; i++) {
      let k = (vals[i] - lo) * inv;
      k = k > 0 ? (k < 255 ? (k + 0.5) | 0 : 255) : 0; // NaN lands on 0
      colours[i] = lut[k];
      darks[i] = dark[k];
    }
    const ids = this.ids, mask = this.mask, outline = this.outline;
    const out = new Uint32Array(this.img.data.buffer);
    for (let q = 0, total = W * H; q < total; q++) {
      const id = ids[q];
      out[q] = id < 0 || id >= n ? FIELD_GROUND : (outline && mask[q] ? darks[id] : colours[id]);
    }
    ctx.putImageData(this.img, 0, 0);
    this.drawOverlays();
    this.canvas.dataset.drawn = p.name;
    this.canvas.dataset.camera = p.camera();
  }

  drawOverlays() {}
}

// TiledMap projects flat coordinates (metres on the plane, degrees on the
// longitude–latitude map) with a pan and a zoom: view {cx, cy, s} is the
// world point at the canvas's centre and the pixels per unit. A direction
// with a period is drawn as repeated tiles, so that panning past an edge
// shows the neighbouring image of the domain.
export class TiledMap {
  // o: {name, extent {x0, x1, y0, y1}, periodX, periodY (0: none),
  // cellSize (world units), polys (per location {n, start, xy, bbox}),
  // wrapX (wrap the centre into the extent), clampY (keep the centre in it)}
  constructor(o) {
    Object.assign(this, o);
    this.view = null;
    this.fitted = true; // follows the canvas size until the user pans or zooms
  }

  key() { const v = this.view; return `${v.cx}|${v.cy}|${v.s}`; }

  camera() { const v = this.view; return `cx=${v.cx} cy=${v.cy} s=${v.s}`; }

  state() { return { view: { ...this.view }, fitted: this.fitted, extent: this.extent }; }

  follow(s) {
    const a = this.extent, b = s.extent;
    if (a.x0 !== b.x0 || a.x1 !== b.x1 || a.y0 !== b.y0 || a.y1 !== b.y1) return false;
    this.view = { ...s.view };
    this.fitted = s.fitted;
    return true;
  }

  scaleFit(W, H, k) {
    const { x0, x1, y0, y1 } = this.extent;
    return k * Math.min(W / (x1 - x0), H / (y1 - y0));
  }

  fit(W, H) {
    const { x0, x1, y0, y1 } = this.extent;
    this.view = { cx: (x0 + x1) / 2, cy: (y0 + y1) / 2, s: this.scaleFit(W, H, 0.96) };
    this.fitted = true;
  }

  resized(oldW, oldH, W, H) {
    if (!this.view || this.fitted) this.fit(W, H);
    else this.view.s *= Math.min(W / oldW, H / oldH);
  }

  // zoomBy keeps the world point under (px, py) in place.
  zoomBy(factor, px, py, W, H) {
    const v = this.view;
    const s = Math.min(400 / this.cellSize, Math.max(this.scaleFit(W, H, 0.3), v.s * factor));
    const wx = v.cx + (px - W / 2) / v.s, wy = v.cy - (py - H / 2) / v.s;
    this.place(wx - (px - W / 2) / s, wy + (py - H / 2) / s);
    v.s = s;
    this.fitted = false;
  }

  dragBy(dx, dy) {
    const v = this.view;
    this.place(v.cx - dx / v.s, v.cy + dy / v.s);
    this.fitted = false;
  }

  place(cx, cy) {
    const { x0, x1, y0, y1 } = this.extent;
    const L = x1 - x0;
    this.view.cx = this.wrapX ? cx - L * Math.round((cx - (x0 + x1) / 2) / L) : cx;
    this.view.cy = this.clampY ? Math.max(y0, Math.min(y1, cy)) : cy;
  }

  cellPixels() { return this.cellSize * this.view.s; }

  // toPixel returns the pixel of world point (x, y) in tile (kx, ky).
  toPixel(x, y, W, H, kx = 0, ky = 0) {
    const v = this.view;
    return [W / 2 + (x + kx * this.periodX - v.cx) * v.s, H / 2 - (y + ky * this.periodY - v.cy) * v.s];
  }

  raster(view, loc) {
    const W = view.canvas.width, H = view.canvas.height;
    const { n, start, xy, bbox: bb } = this.polys[loc];
    const v = this.view;
    const s = v.s, ox = W / 2 - v.cx * s, oy = H / 2 + v.cy * s;
    const wx0 = -ox / s, wx1 = (W - ox) / s, wy0 = (oy - H) / s, wy1 = oy / s;
    const PX = this.periodX, PY = this.periodY;
    const px = view.px, py = view.py;
    for (let i = 0; i < n; i++) {
      const bx0 = bb[4 * i], by0 = bb[4 * i + 1], bx1 = bb[4 * i + 2], by1 = bb[4 * i + 3];
      let kx0 = 0, kx1 = 0, ky0 = 0, ky1 = 0;
      if (PX > 0) { kx0 = Math.ceil((wx0 - bx1) / PX); kx1 = Math.floor((wx1 - bx0) / PX); }
      else if (bx1 < wx0 || bx0 > wx1) continue;
      if (PY > 0) { ky0 = Math.ceil((wy0 - by1) / PY); ky1 = Math.floor((wy1 - by0) / PY); }
      else if (by1 < wy0 || by0 > wy1) continue;
      const a = start[i], m = Math.min(start[i + 1] - a, MAX_POLY);
      for (let kx = kx0; kx <= kx1; kx++) {
        for (let ky = ky0; ky <= ky1; ky++) {
          const sx = ox + kx * PX * s, sy = oy - ky * PY * s;
          for (let k = 0; k < m; k++) {
            px[k] = xy[2 * (a + k)] * s + sx;
            py[k] = sy - xy[2 * (a + k) + 1] * s;
          }
          view.fill(m, i);
        }
      }
    }
  }

  // veil dims what lies outside the domain's own tile and outlines it, so
  // that periodic copies read as copies; it returns the tile's corners.
  // The tile starts at x0 (the extent's, unless given).
  veil(ctx, W, H, dash, x0 = this.extent.x0) {
    const e = this.extent;
    const [ax, ay] = this.toPixel(x0, e.y1, W, H);
    const [bx, by] = this.toPixel(x0 + e.x1 - e.x0, e.y0, W, H);
    const dpr = window.devicePixelRatio || 1;
    ctx.fillStyle = THEME.veil;
    ctx.beginPath();
    ctx.rect(0, 0, W, H);
    ctx.rect(ax, ay, bx - ax, by - ay);
    ctx.fill('evenodd');
    ctx.strokeStyle = THEME.chrome;
    ctx.lineWidth = dpr;
    ctx.setLineDash(dash.map((d) => d * dpr));
    ctx.strokeRect(ax, ay, bx - ax, by - ay);
    ctx.setLineDash([]);
    return [ax, ay, bx, by];
  }
}

// withBoxes adds to each polygon set its bounding boxes, bbox: [x0, y0,
// x1, y1] per polygon.
export function withBoxes(p) {
  const bb = new Float32Array(4 * p.n);
  for (let i = 0; i < p.n; i++) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let k = p.start[i]; k < p.start[i + 1]; k++) {
      const x = p.xy[2 * k], y = p.xy[2 * k + 1];
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
    bb[4 * i] = x0; bb[4 * i + 1] = y0; bb[4 * i + 2] = x1; bb[4 * i + 3] = y1;
  }
  return { ...p, bbox: bb };
}

// ring marks a point of the field (a blown-up cell): a coral ring inside a
// white one, with cross hairs when cross is set.
export function ring(ctx, x, y, r, cross) {
  const dpr = window.devicePixelRatio || 1;
  ctx.lineWidth = 3 * dpr;
  ctx.strokeStyle = THEME.alarm;
  ctx.beginPath();
  ctx.arc(x, y, r, 0, 2 * Math.PI);
  ctx.stroke();
  ctx.lineWidth = 1.5 * dpr;
  ctx.strokeStyle = THEME.ring;
  ctx.beginPath();
  ctx.arc(x, y, r + 3 * dpr, 0, 2 * Math.PI);
  if (cross) {
    ctx.moveTo(x - r * 1.6, y); ctx.lineTo(x - r * 0.6, y);
    ctx.moveTo(x + r * 0.6, y); ctx.lineTo(x + r * 1.6, y);
    ctx.moveTo(x, y - r * 1.6); ctx.lineTo(x, y - r * 0.6);
    ctx.moveTo(x, y + r * 0.6); ctx.lineTo(x, y + r * 1.6);
  }
  ctx.stroke();
}

// fillPolygon writes id into every pixel whose centre lies inside the
// polygon (px, py)[0..m), by the even–odd rule, so that the bands round the
// poles (not convex) fill as well as ordinary cells. Edges are half-open in
// y and pixels half-open in x, so neighbours neither overlap nor leave gaps.
function fillPolygon(ids, W, H, px, py, m, id, cross) {
  let ymin = Infinity, ymax = -Infinity;
  for (let k = 0; k < m; k++) {
    if (py[k] < ymin) ymin = py[k];
    if (py[k] > ymax) ymax = py[k];
  }
  const r0 = Math.max(0, Math.ceil(ymin - 0.5));
  const r1 = Math.min(H - 1, Math.ceil(ymax - 0.5) - 1);
  for (let r = r0; r <= r1; r++) {
    const yc = r + 0.5;
    let c = 0;
    for (let k = 0, j = m - 1; k < m; j = k++) {
      const ya = py[j], yb = py[k];
      if ((ya <= yc && yb > yc) || (yb <= yc && ya > yc)) {
        const x = px[j] + ((yc - ya) * (px[k] - px[j])) / (yb - ya);
        let q = c++;
        while (q > 0 && cross[q - 1] > x) { cross[q] = cross[q - 1]; q--; }
        cross[q] = x;
      }
    }
    const row = r * W;
    for (let q = 0; q + 1 < c; q += 2) {
      const c0 = Math.max(0, Math.ceil(cross[q] - 0.5));
      const c1 = Math.min(W - 1, Math.ceil(cross[q + 1] - 0.5) - 1);
      for (let x = c0; x <= c1; x++) ids[row + x] = id;
    }
  }
}
