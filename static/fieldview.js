// FieldView draws a field on the grid's own polygons: cell fields on the
// primal cells, vertex fields on the dual polygons around each vertex.
//
// Drawing is split in two so that a frame costs the same whatever the
// number of cells. When the view (pan, zoom, size) or the grid changes, the
// polygons are scan-converted once into an index raster: for each pixel,
// the polygon that covers its centre. Each frame then only maps values to
// colours per polygon and copies colours per pixel. The periodic plane is
// drawn as repeated tiles, so panning past an edge shows the neighbouring
// image of the domain.

import { SEQUENTIAL } from './colour.js';
import { THEME, FIELD_GROUND } from './theme.js';

const BACKGROUND = FIELD_GROUND; // THEME.ground as ABGR
const OUTLINE_PX = 9; // cells at least this many pixels across get outlines
const MAX_POLY = 32;

export class FieldView {
  constructor(canvas) {
    this.canvas = canvas;
    this.ctx = canvas.getContext('2d', { alpha: false });
    this.geom = null;
    this.frame = null;
    this.map = SEQUENTIAL;
    this.lo = 0;
    this.hi = 1;
    this.view = null; // {cx, cy, s}: world centre and pixels per unit
    this.highlight = null; // {x, y} in world units
    this.rasterKey = '';
    this.ids = null;
    this.mask = null;
    this.img = null;
    this.colours = new Uint32Array(0);
    this.darks = new Uint32Array(0);
    this.px = new Float64Array(MAX_POLY);
    this.py = new Float64Array(MAX_POLY);
    this.fitted = true;
    this.onchange = null; // called when the view changes by user action
    this.attachPointer();
  }

  setGeometry(g) {
    const sameDomain = this.geom && this.geom.extent.x1 === g.extent.x1 && this.geom.extent.y1 === g.extent.y1
      && this.geom.sphere === g.sphere;
    this.geom = g;
    this.frame = null;
    g.bbox = g.polys.map(boundingBoxes);
    g.cellSize = Math.sqrt(((g.extent.x1 - g.extent.x0) * (g.extent.y1 - g.extent.y0)) / Math.max(1, g.polys[0].n));
    if (!sameDomain || !this.view) this.fit();
    this.rasterKey = '';
  }

  setFrame(f, map, lo, hi) {
    this.frame = f;
    this.map = map;
    this.lo = lo;
    this.hi = hi;
  }

  // fit shows the whole domain.
  fit() {
    if (!this.geom) return;
    const { x0, x1, y0, y1 } = this.geom.extent;
    const W = this.canvas.width || 1, H = this.canvas.height || 1;
    const s = 0.96 * Math.min(W / (x1 - x0), H / (y1 - y0));
    this.view = { cx: (x0 + x1) / 2, cy: (y0 + y1) / 2, s };
    this.fitted = true; // follows the canvas size until the user pans or zooms
    this.rasterKey = '';
  }

  zoomBy(factor, px, py) {
    if (!this.view || !this.geom) return;
    const W = this.canvas.width, H = this.canvas.height;
    if (px === undefined) { px = W / 2; py = H / 2; }
    const v = this.view;
    const { x0, x1, y0, y1 } = this.geom.extent;
    const sMin = 0.3 * Math.min(W / (x1 - x0), H / (y1 - y0));
    const sMax = 400 / this.geom.cellSize;
    const s = Math.min(sMax, Math.max(sMin, v.s * factor));
    // Keep the world point under (px, py) in place.
    const wx = v.cx + (px - W / 2) / v.s, wy = v.cy - (py - H / 2) / v.s;
    v.cx = wx - (px - W / 2) / s;
    v.cy = wy + (py - H / 2) / s;
    v.s = s;
    this.fitted = false;
    this.rasterKey = '';
  }

  panBy(dx, dy) {
    if (!this.view) return;
    this.view.cx -= dx / this.view.s;
    this.view.cy += dy / this.view.s;
    this.fitted = false;
    this.rasterKey = '';
  }

  // resize matches the canvas's pixels to its box; it reports a change.
  resize() {
    const dpr = window.devicePixelRatio || 1;
    const w = Math.max(1, Math.round(this.canvas.clientWidth * dpr));
    const h = Math.max(1, Math.round(this.canvas.clientHeight * dpr));
    if (w === this.canvas.width && h === this.canvas.height) return false;
    const oldW = this.canvas.width, oldH = this.canvas.height;
    this.canvas.width = w;
    this.canvas.height = h;
    if (!this.view || this.fitted) this.fit();
    else this.view.s *= Math.min(w / oldW, h / oldH);
    this.rasterKey = '';
    return true;
  }

  attachPointer() {
    const c = this.canvas;
    let drag = null;
    c.addEventListener('pointerdown', (e) => {
      drag = { x: e.clientX, y: e.clientY };
      c.setPointerCapture(e.pointerId);
    });
    c.addEventListener('pointermove', (e) => {
      if (!drag) return;
      const dpr = window.devicePixelRatio || 1;
      this.panBy((e.clientX - drag.x) * dpr, (e.clientY - drag.y) * dpr);
      drag = { x: e.clientX, y: e.clientY };
      if (this.onchange) this.onchange();
    });
    const end = () => { drag = null; };
    c.addEventListener('pointerup', end);
    c.addEventListener('pointercancel', end);
    c.addEventListener('wheel', (e) => {
      e.preventDefault();
      const dpr = window.devicePixelRatio || 1;
      const r = c.getBoundingClientRect();
      this.zoomBy(Math.exp(-e.deltaY * 0.0015), (e.clientX - r.left) * dpr, (e.clientY - r.top) * dpr);
      if (this.onchange) this.onchange();
    }, { passive: false });
    c.addEventListener('dblclick', () => { this.fit(); if (this.onchange) this.onchange(); });
  }

  // raster scan-converts the polygons of location loc for the current view.
  raster(loc) {
    const W = this.canvas.width, H = this.canvas.height;
    if (!this.ids || this.ids.length !== W * H) {
      this.ids = new Int32Array(W * H);
      this.mask = new Uint8Array(W * H);
      this.img = this.ctx.createImageData(W, H);
    }
    const ids = this.ids;
    ids.fill(-1);
    const g = this.geom;
    const { n, start, xy } = g.polys[loc];
    const bb = g.bbox[loc];
    const v = this.view;
    const s = v.s, ox = W / 2 - v.cx * s, oy = H / 2 + v.cy * s;
    const wx0 = -ox / s, wx1 = (W - ox) / s, wy0 = (oy - H) / s, wy1 = oy / s;
    const PX = g.periodX, PY = g.periodY;
    const px = this.px, py = this.py;
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
          fillConvex(ids, W, H, px, py, m, i);
        }
      }
    }
    // Outlines when cells are large enough on screen to tell apart.
    const outline = g.cellSize * s >= OUTLINE_PX;
    const mask = this.mask;
    mask.fill(0);
    if (outline) {
      for (let y = 0; y < H - 1; y++) {
        const row = y * W;
        for (let x = 0; x < W - 1; x++) {
          const p = row + x, id = ids[p];
          if (id !== ids[p + 1] || id !== ids[p + W]) mask[p] = 1;
        }
      }
    }
    this.outline = outline;
  }

  render() {
    const ctx = this.ctx;
    const W = this.canvas.width, H = this.canvas.height;
    const f = this.frame;
    if (!this.geom || !f || !this.view) {
      ctx.fillStyle = THEME.ground;
      ctx.fillRect(0, 0, W, H);
      return;
    }
    const v = this.view;
    const key = `${this.geom.gen}|${f.loc}|${W}x${H}|${v.cx}|${v.cy}|${v.s}`;
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
      const x = vals[i];
      let k = (x - lo) * inv;
      k = k > 0 ? (k < 255 ? (k + 0.5) | 0 : 255) : 0; // NaN lands on 0
      colours[i] = lut[k];
      darks[i] = dark[k];
    }
    const ids = this.ids, mask = this.mask;
    const out = new Uint32Array(this.img.data.buffer);
    const total = W * H;
    if (this.outline) {
      for (let p = 0; p < total; p++) {
        const id = ids[p];
        out[p] = id < 0 ? BACKGROUND : (mask[p] ? darks[id] : colours[id]);
      }
    } else {
      for (let p = 0; p < total; p++) {
        const id = ids[p];
        out[p] = id < 0 ? BACKGROUND : colours[id];
      }
    }
    ctx.putImageData(this.img, 0, 0);
    this.drawOverlays();
  }

  // worldToPixel returns the pixel of world point (x, y) in tile (kx, ky).
  toPixel(x, y, kx = 0, ky = 0) {
    const W = this.canvas.width, H = this.canvas.height, v = this.view;
    return [
      W / 2 + (x + kx * this.geom.periodX - v.cx) * v.s,
      H / 2 - (y + ky * this.geom.periodY - v.cy) * v.s,
    ];
  }

  drawOverlays() {
    const ctx = this.ctx, g = this.geom;
    const dpr = window.devicePixelRatio || 1;
    // The domain's own tile, outlined, and its periodic copies dimmed, so
    // that copies read as copies.
    const [ax, ay] = this.toPixel(g.extent.x0, g.extent.y1);
    const [bx, by] = this.toPixel(g.extent.x1, g.extent.y0);
    const W = this.canvas.width, H = this.canvas.height;
    ctx.fillStyle = THEME.veil;
    ctx.beginPath();
    ctx.rect(0, 0, W, H);
    ctx.rect(ax, ay, bx - ax, by - ay);
    ctx.fill('evenodd');
    ctx.strokeStyle = THEME.chrome;
    ctx.lineWidth = dpr;
    ctx.setLineDash([6 * dpr, 5 * dpr]);
    ctx.strokeRect(ax, ay, bx - ax, by - ay);
    ctx.setLineDash([]);
    const h = this.highlight;
    if (!h || !Number.isFinite(h.x)) return;
    const r = Math.max(14 * dpr, 2.5 * g.cellSize * this.view.s);
    const kxs = g.periodX > 0 ? [-1, 0, 1] : [0];
    const kys = g.periodY > 0 ? [-1, 0, 1] : [0];
    for (const kx of kxs) {
      for (const ky of kys) {
        const [x, y] = this.toPixel(h.x, h.y, kx, ky);
        if (x < -r || y < -r || x > W + r || y > H + r) continue;
        ctx.lineWidth = 3 * dpr;
        ctx.strokeStyle = THEME.alarm;
        ctx.beginPath();
        ctx.arc(x, y, r, 0, 2 * Math.PI);
        ctx.stroke();
        ctx.lineWidth = 1.5 * dpr;
        ctx.strokeStyle = THEME.ring;
        ctx.beginPath();
        ctx.arc(x, y, r + 3 * dpr, 0, 2 * Math.PI);
        ctx.moveTo(x - r * 1.6, y); ctx.lineTo(x - r * 0.6, y);
        ctx.moveTo(x + r * 0.6, y); ctx.lineTo(x + r * 1.6, y);
        ctx.moveTo(x, y - r * 1.6); ctx.lineTo(x, y - r * 0.6);
        ctx.moveTo(x, y + r * 0.6); ctx.lineTo(x, y + r * 1.6);
        ctx.stroke();
      }
    }
  }
}

// boundingBoxes returns [x0, y0, x1, y1] per polygon.
function boundingBoxes(p) {
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
  return bb;
}

// fillConvex writes id into every pixel whose centre lies in the convex
// polygon (px, py)[0..m). Edges are half-open in y and pixels half-open in
// x, so neighbours that share an edge neither overlap nor leave a gap.
function fillConvex(ids, W, H, px, py, m, id) {
  let ymin = Infinity, ymax = -Infinity;
  for (let k = 0; k < m; k++) {
    if (py[k] < ymin) ymin = py[k];
    if (py[k] > ymax) ymax = py[k];
  }
  const r0 = Math.max(0, Math.ceil(ymin - 0.5));
  const r1 = Math.min(H - 1, Math.ceil(ymax - 0.5) - 1);
  for (let r = r0; r <= r1; r++) {
    const yc = r + 0.5;
    let xl = Infinity, xr = -Infinity;
    for (let k = 0, j = m - 1; k < m; j = k++) {
      const ya = py[j], yb = py[k];
      if ((ya <= yc && yb > yc) || (yb <= yc && ya > yc)) {
        const x = px[j] + ((yc - ya) * (px[k] - px[j])) / (yb - ya);
        if (x < xl) xl = x;
        if (x > xr) xr = x;
      }
    }
    if (!(xl < xr)) continue;
    const c0 = Math.max(0, Math.ceil(xl - 0.5));
    const c1 = Math.min(W - 1, Math.ceil(xr - 0.5) - 1);
    const row = r * W;
    for (let c = c0; c <= c1; c++) ids[row + c] = id;
  }
}
