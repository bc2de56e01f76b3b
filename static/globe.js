// SphereView draws a field on the sphere's own polygons (cells, or the dual
// triangles around vertices), in one of two projections:
//   - 'globe': an orthographic view of the sphere from outside, rotated by
//     dragging; the far hemisphere is culled, polygons that cross the limb
//     have their far corners put on the limb.
//   - 'lonlat': the longitude–latitude (equirectangular) map, periodic in
//     longitude, panned by dragging; the cells round a pole become bands
//     closed along the pole's latitude.
// There are no coastlines (an aqua-planet); a faint graticule every 30°
// keeps the orientation readable.
//
// As in FieldView, a change of view scan-converts the polygons once into an
// index raster (the polygon under each pixel centre); a frame then only maps
// values to colours. The geometry arrives in degrees of longitude and
// latitude, each polygon unwrapped round its centre (server/doc.go).

import { SEQUENTIAL } from './colour.js';
import { THEME, FIELD_GROUND } from './theme.js';

const BACKGROUND = FIELD_GROUND; // THEME.ground as ABGR
const OUTLINE_PX = 9;
const MAX_POLY = 40;
const RAD = Math.PI / 180;
const POLE = 90 - 1e-6;

export const PROJECTIONS = ['globe', 'lonlat'];

export class SphereView {
  constructor(canvas) {
    this.canvas = canvas;
    this.ctx = canvas.getContext('2d', { alpha: false });
    this.geom = null;
    this.frame = null;
    this.map = SEQUENTIAL;
    this.lo = 0;
    this.hi = 1;
    this.active = false; // the page's current view; pointer input is ignored otherwise
    this.projection = 'globe';
    this.rot = { lon: 0, lat: 25 }; // centre of the globe, degrees
    this.zoom = 1; // globe radius in units of the fitted radius
    this.view = null; // lonlat: {cx, cy, s} world centre (degrees), pixels per degree
    this.highlight = null; // {x: lon, y: lat}
    this.rasterKey = '';
    this.ids = null;
    this.mask = null;
    this.img = null;
    this.colours = new Uint32Array(0);
    this.darks = new Uint32Array(0);
    this.px = new Float64Array(MAX_POLY);
    this.py = new Float64Array(MAX_POLY);
    this.cross = new Float64Array(MAX_POLY);
    this.onchange = null;
    this.attachPointer();
  }

  setGeometry(g) {
    const first = !this.geom;
    this.geom = g;
    this.frame = null;
    this.unit = g.polys.map(unitVectors);
    this.flat = g.polys.map(mapPolygons);
    this.flat.forEach((p) => { p.bbox = boundingBoxes(p); });
    // Typical cell size: degrees, and radians on the unit sphere.
    this.cellRad = Math.sqrt((4 * Math.PI) / Math.max(1, g.polys[0].n));
    if (first || !this.view) this.fit();
    this.rasterKey = '';
  }

  setFrame(f, map, lo, hi) {
    this.frame = f;
    this.map = map;
    this.lo = lo;
    this.hi = hi;
  }

  setProjection(p) {
    if (!PROJECTIONS.includes(p) || p === this.projection) return;
    this.projection = p;
    this.canvas.dataset.projection = p;
    this.rasterKey = '';
  }

  // fit shows the whole sphere (globe: the whole disc; map: the whole map).
  fit() {
    const W = this.canvas.width || 1, H = this.canvas.height || 1;
    this.zoom = 1;
    this.view = { cx: 0, cy: 0, s: 0.96 * Math.min(W / 360, H / 180) };
    this.fitted = true;
    this.rasterKey = '';
  }

  radius() {
    return 0.47 * Math.min(this.canvas.width, this.canvas.height) * this.zoom;
  }

  zoomBy(factor, px, py) {
    const W = this.canvas.width, H = this.canvas.height;
    if (this.projection === 'globe') {
      this.zoom = Math.min(12, Math.max(0.5, this.zoom * factor));
    } else {
      if (px === undefined) { px = W / 2; py = H / 2; }
      const v = this.view;
      const sMin = 0.3 * Math.min(W / 360, H / 180);
      const sMax = 400 / (this.cellRad / RAD);
      const s = Math.min(sMax, Math.max(sMin, v.s * factor));
      const wx = v.cx + (px - W / 2) / v.s, wy = v.cy - (py - H / 2) / v.s;
      v.cx = wx - (px - W / 2) / s;
      v.cy = wy + (py - H / 2) / s;
      v.s = s;
    }
    this.fitted = false;
    this.rasterKey = '';
  }

  // dragBy turns the globe (or pans the map) by a pointer motion in pixels.
  dragBy(dx, dy) {
    if (this.projection === 'globe') {
      const k = 1 / (this.radius() * RAD); // degrees per pixel at the centre
      this.rot.lon = wrapLon(this.rot.lon - dx * k);
      this.rot.lat = Math.max(-90, Math.min(90, this.rot.lat + dy * k));
    } else {
      this.view.cx = wrapLon(this.view.cx - dx / this.view.s);
      this.view.cy = Math.max(-90, Math.min(90, this.view.cy + dy / this.view.s));
    }
    this.fitted = false;
    this.rasterKey = '';
  }

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
      if (!this.active) return;
      drag = { x: e.clientX, y: e.clientY };
      c.setPointerCapture(e.pointerId);
    });
    c.addEventListener('pointermove', (e) => {
      if (!drag || !this.active) return;
      const dpr = window.devicePixelRatio || 1;
      this.dragBy((e.clientX - drag.x) * dpr, (e.clientY - drag.y) * dpr);
      drag = { x: e.clientX, y: e.clientY };
      if (this.onchange) this.onchange();
    });
    const end = () => { drag = null; };
    c.addEventListener('pointerup', end);
    c.addEventListener('pointercancel', end);
    c.addEventListener('wheel', (e) => {
      if (!this.active) return;
      e.preventDefault();
      const dpr = window.devicePixelRatio || 1;
      const r = c.getBoundingClientRect();
      this.zoomBy(Math.exp(-e.deltaY * 0.0015), (e.clientX - r.left) * dpr, (e.clientY - r.top) * dpr);
      if (this.onchange) this.onchange();
    }, { passive: false });
    c.addEventListener('dblclick', () => {
      if (!this.active) return;
      this.fit();
      if (this.onchange) this.onchange();
    });
  }

  // basis returns the unit vectors east, north and towards the viewer at
  // the globe's centre.
  basis() {
    const l = this.rot.lon * RAD, p = this.rot.lat * RAD;
    const cl = Math.cos(l), sl = Math.sin(l), cp = Math.cos(p), sp = Math.sin(p);
    return {
      e: [-sl, cl, 0],
      n: [-sp * cl, -sp * sl, cp],
      v: [cp * cl, cp * sl, sp],
    };
  }

  ensureBuffers(W, H) {
    if (!this.ids || this.ids.length !== W * H) {
      this.ids = new Int32Array(W * H);
      this.mask = new Uint8Array(W * H);
      this.img = this.ctx.createImageData(W, H);
    }
    this.ids.fill(-1);
  }

  rasterGlobe(loc) {
    const W = this.canvas.width, H = this.canvas.height;
    this.ensureBuffers(W, H);
    const { n, start } = this.geom.polys[loc];
    const u = this.unit[loc];
    const { e, n: nn, v } = this.basis();
    const R = this.radius(), cx = W / 2, cy = H / 2;
    const px = this.px, py = this.py;
    for (let i = 0; i < n; i++) {
      const a = start[i], m = Math.min(start[i + 1] - a, MAX_POLY);
      let front = false, x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
      for (let k = 0; k < m; k++) {
        const j = 3 * (a + k);
        const X = u[j], Y = u[j + 1], Z = u[j + 2];
        let x = X * e[0] + Y * e[1] + Z * e[2];
        let y = X * nn[0] + Y * nn[1] + Z * nn[2];
        const z = X * v[0] + Y * v[1] + Z * v[2];
        if (z > 0) front = true;
        else {
          // A far corner of a polygon across the limb goes onto the limb.
          const r = Math.hypot(x, y) || 1;
          x /= r; y /= r;
        }
        px[k] = cx + R * x;
        py[k] = cy - R * y;
        if (px[k] < x0) x0 = px[k];
        if (px[k] > x1) x1 = px[k];
        if (py[k] < y0) y0 = py[k];
        if (py[k] > y1) y1 = py[k];
      }
      if (!front || x1 < 0 || y1 < 0 || x0 > W || y0 > H) continue;
      fillPolygon(this.ids, W, H, px, py, m, i, this.cross);
    }
    this.finishRaster(this.cellRad * R);
  }

  rasterMap(loc) {
    const W = this.canvas.width, H = this.canvas.height;
    this.ensureBuffers(W, H);
    const p = this.flat[loc];
    const { n, start, xy, bbox } = p;
    const v = this.view;
    const s = v.s, ox = W / 2 - v.cx * s, oy = H / 2 + v.cy * s;
    const wx0 = -ox / s, wx1 = (W - ox) / s, wy0 = (oy - H) / s, wy1 = oy / s;
    const px = this.px, py = this.py;
    for (let i = 0; i < n; i++) {
      const bx0 = bbox[4 * i], by0 = bbox[4 * i + 1], bx1 = bbox[4 * i + 2], by1 = bbox[4 * i + 3];
      if (by1 < wy0 || by0 > wy1) continue;
      const kx0 = Math.ceil((wx0 - bx1) / 360), kx1 = Math.floor((wx1 - bx0) / 360);
      const a = start[i], m = Math.min(start[i + 1] - a, MAX_POLY);
      for (let kx = kx0; kx <= kx1; kx++) {
        const sx = ox + kx * 360 * s;
        for (let k = 0; k < m; k++) {
          px[k] = xy[2 * (a + k)] * s + sx;
          py[k] = oy - xy[2 * (a + k) + 1] * s;
        }
        fillPolygon(this.ids, W, H, px, py, m, i, this.cross);
      }
    }
    this.finishRaster(this.cellRad / RAD * s);
  }

  // finishRaster marks polygon borders when cells are large on screen.
  finishRaster(cellPx) {
    const W = this.canvas.width, H = this.canvas.height;
    const ids = this.ids, mask = this.mask;
    const outline = cellPx >= OUTLINE_PX;
    mask.fill(0);
    if (outline) {
      for (let y = 0; y < H - 1; y++) {
        const row = y * W;
        for (let x = 0; x < W - 1; x++) {
          const q = row + x, id = ids[q];
          if (id >= 0 && (id !== ids[q + 1] || id !== ids[q + W])) mask[q] = 1;
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
    const globe = this.projection === 'globe';
    const key = globe
      ? `${this.geom.gen}|${f.loc}|g|${W}x${H}|${this.rot.lon}|${this.rot.lat}|${this.zoom}`
      : `${this.geom.gen}|${f.loc}|m|${W}x${H}|${this.view.cx}|${this.view.cy}|${this.view.s}`;
    if (key !== this.rasterKey) {
      if (globe) this.rasterGlobe(f.loc);
      else this.rasterMap(f.loc);
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
      k = k > 0 ? (k < 255 ? (k + 0.5) | 0 : 255) : 0;
      colours[i] = lut[k];
      darks[i] = dark[k];
    }
    const ids = this.ids, mask = this.mask, outline = this.outline;
    const out = new Uint32Array(this.img.data.buffer);
    for (let q = 0, total = W * H; q < total; q++) {
      const id = ids[q];
      out[q] = id < 0 || id >= n ? BACKGROUND : (outline && mask[q] ? darks[id] : colours[id]);
    }
    ctx.putImageData(this.img, 0, 0);
    if (globe) this.overlaysGlobe();
    else this.overlaysMap();
  }

  overlaysGlobe() {
    const ctx = this.ctx, W = this.canvas.width, H = this.canvas.height;
    const dpr = window.devicePixelRatio || 1;
    const R = this.radius(), cx = W / 2, cy = H / 2;
    const { e, n, v } = this.basis();
    const proj = (lon, lat) => {
      const l = lon * RAD, p = lat * RAD;
      const X = Math.cos(p) * Math.cos(l), Y = Math.cos(p) * Math.sin(l), Z = Math.sin(p);
      return [
        cx + R * (X * e[0] + Y * e[1] + Z * e[2]),
        cy - R * (X * n[0] + Y * n[1] + Z * n[2]),
        X * v[0] + Y * v[1] + Z * v[2],
      ];
    };
    ctx.lineWidth = dpr;
    ctx.strokeStyle = THEME.chromeFaint;
    ctx.beginPath();
    const line = (pts) => {
      let pen = false;
      for (const [x, y, z] of pts) {
        if (z <= 0) { pen = false; continue; }
        if (pen) ctx.lineTo(x, y); else ctx.moveTo(x, y);
        pen = true;
      }
    };
    for (let lon = -180; lon < 180; lon += 30) {
      const pts = [];
      for (let lat = -90; lat <= 90; lat += 3) pts.push(proj(lon, lat));
      line(pts);
    }
    for (let lat = -60; lat <= 60; lat += 30) {
      const pts = [];
      for (let lon = -180; lon <= 180; lon += 3) pts.push(proj(lon, lat));
      line(pts);
    }
    ctx.stroke();
    ctx.strokeStyle = THEME.chrome;
    ctx.beginPath();
    ctx.arc(cx, cy, R, 0, 2 * Math.PI);
    ctx.stroke();
    const h = this.highlight;
    if (h && Number.isFinite(h.x)) {
      const [x, y, z] = proj(h.x, h.y);
      if (z > 0) ring(ctx, x, y, Math.max(14 * dpr, 2.5 * this.cellRad * R), dpr);
    }
  }

  overlaysMap() {
    const ctx = this.ctx, W = this.canvas.width, H = this.canvas.height;
    const dpr = window.devicePixelRatio || 1;
    const v = this.view;
    const X = (lon) => W / 2 + (lon - v.cx) * v.s;
    const Y = (lat) => H / 2 - (lat - v.cy) * v.s;
    ctx.lineWidth = dpr;
    ctx.strokeStyle = THEME.chromeFaint;
    ctx.beginPath();
    const k0 = Math.floor((v.cx - W / 2 / v.s) / 30), k1 = Math.ceil((v.cx + W / 2 / v.s) / 30);
    for (let k = k0; k <= k1; k++) {
      const x = Math.round(X(30 * k)) + 0.5;
      ctx.moveTo(x, Y(90));
      ctx.lineTo(x, Y(-90));
    }
    for (let lat = -60; lat <= 60; lat += 30) {
      const y = Math.round(Y(lat)) + 0.5;
      ctx.moveTo(0, y);
      ctx.lineTo(W, y);
    }
    ctx.stroke();
    // One copy of the sphere framed, the periodic copies beside it dimmed.
    const ax = X(v.cx - 180), ay = Y(90);
    ctx.fillStyle = THEME.veil;
    ctx.beginPath();
    ctx.rect(0, 0, W, H);
    ctx.rect(ax, ay, 360 * v.s, 180 * v.s);
    ctx.fill('evenodd');
    ctx.strokeStyle = THEME.chrome;
    ctx.strokeRect(ax, ay, 360 * v.s, 180 * v.s);
    ctx.fillStyle = THEME.chromeText;
    ctx.font = `${11 * dpr}px system-ui, sans-serif`;
    ctx.textBaseline = 'top';
    for (let k = k0; k <= k1; k++) {
      const lon = wrapLon(30 * k);
      if (lon % 90 !== 0) continue;
      ctx.fillText(lon === 0 ? '0°' : lon === 180 || lon === -180 ? '180°' : `${Math.abs(lon)}°${lon < 0 ? 'W' : 'E'}`, X(30 * k) + 3 * dpr, Math.max(0, Y(90)) + 3 * dpr);
    }
    const h = this.highlight;
    if (h && Number.isFinite(h.x)) {
      for (let kx = -1; kx <= 1; kx++) {
        const x = X(h.x + 360 * kx), y = Y(h.y);
        if (x < 0 || x > W) continue;
        ring(ctx, x, y, Math.max(14 * dpr, 2.5 * (this.cellRad / RAD) * v.s), dpr);
      }
    }
  }
}

function ring(ctx, x, y, r, dpr) {
  ctx.lineWidth = 3 * dpr;
  ctx.strokeStyle = THEME.alarm;
  ctx.beginPath();
  ctx.arc(x, y, r, 0, 2 * Math.PI);
  ctx.stroke();
  ctx.lineWidth = 1.5 * dpr;
  ctx.strokeStyle = THEME.ring;
  ctx.beginPath();
  ctx.arc(x, y, r + 3 * dpr, 0, 2 * Math.PI);
  ctx.stroke();
}

function wrapLon(l) {
  return l - 360 * Math.round(l / 360);
}

// unitVectors returns the points of a polygon set as unit vectors.
function unitVectors(p) {
  const m = p.xy.length / 2;
  const u = new Float32Array(3 * m);
  for (let k = 0; k < m; k++) {
    const l = p.xy[2 * k] * RAD, q = p.xy[2 * k + 1] * RAD;
    const c = Math.cos(q);
    u[3 * k] = c * Math.cos(l);
    u[3 * k + 1] = c * Math.sin(l);
    u[3 * k + 2] = Math.sin(q);
  }
  return u;
}

// mapPolygons returns the polygons for the longitude–latitude map. A
// polygon that winds round a pole becomes a band closed along the pole's
// latitude, 360° wide; a corner at a pole becomes a stretch of the pole's
// latitude between its neighbours' longitudes. Others are kept as they are.
function mapPolygons(p) {
  const { n, start, xy } = p;
  const out = [];
  const starts = new Uint32Array(n + 1);
  const lonAt = (k) => xy[2 * k], latAt = (k) => xy[2 * k + 1];
  for (let i = 0; i < n; i++) {
    starts[i] = out.length / 2;
    const a = start[i], b = start[i + 1], m = b - a;
    let poleCorner = false, latSum = 0, wind = 0, last = NaN;
    for (let k = a; k < b; k++) {
      latSum += latAt(k);
      if (Math.abs(latAt(k)) > POLE) { poleCorner = true; continue; }
      if (!Number.isNaN(last)) wind += wrapLon(lonAt(k) - last);
      last = lonAt(k);
    }
    for (let k = a; k < b && !Number.isNaN(last); k++) {
      if (Math.abs(latAt(k)) > POLE) continue;
      wind += wrapLon(lonAt(k) - last); // closes the loop at the first ordinary corner
      break;
    }
    if (!poleCorner && Math.abs(wind) < 180) {
      for (let k = a; k < b; k++) out.push(lonAt(k), latAt(k));
      continue;
    }
    const pole = latSum > 0 ? 90 : -90;
    // Walk the corners from the first ordinary one, unwrapping longitude.
    let k0 = a;
    while (k0 < b && Math.abs(latAt(k0)) > POLE) k0++;
    let L = lonAt(k0), prev = lonAt(k0);
    out.push(L, latAt(k0));
    for (let s = 1; s <= m; s++) {
      const k = a + ((k0 - a + s) % m);
      if (Math.abs(latAt(k)) > POLE) {
        // The neighbour after the pole corner sets the stretch's far end.
        const kn = a + ((k - a + 1) % m);
        const d = wrapLon(lonAt(kn) - prev);
        out.push(L, pole, L + d, pole);
        continue;
      }
      L += wrapLon(lonAt(k) - prev);
      prev = lonAt(k);
      out.push(L, latAt(k));
    }
    if (!poleCorner) out.push(L, pole, L - wind, pole); // close a band along the pole
  }
  starts[n] = out.length / 2;
  return { n, start: starts, xy: Float32Array.from(out) };
}

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
