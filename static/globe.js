// SphereView draws a field on the sphere's own polygons (cells, or the dual
// triangles round vertices), in one of two projections:
//   - 'globe': an orthographic view of the sphere from outside, turned by
//     dragging; the far hemisphere is culled, polygons that cross the limb
//     have their far corners put on the limb (Orthographic below).
//   - 'lonlat': the longitude–latitude (equirectangular) map, periodic in
//     longitude, panned by dragging; the cells round a pole become bands
//     closed along the pole's latitude (a TiledMap, raster.js).
// There are no coastlines (an aqua-planet); a faint graticule every 30°
// keeps the orientation readable. The geometry arrives in degrees of
// longitude and latitude, each polygon unwrapped round its centre
// (server/doc.go).

import { MeshView, TiledMap, MAX_POLY, withBoxes, ring } from './raster.js';
import { THEME } from './theme.js';

const RAD = Math.PI / 180;
const POLE = 90 - 1e-6;

export const PROJECTIONS = ['globe', 'lonlat'];

export class SphereView extends MeshView {
  constructor(canvas) {
    super(canvas);
    this.globe = new Orthographic();
    this.lonlat = null;
    this.projection = null; // set with the first geometry
    this.active = false; // the page's current view; pointer input is ignored otherwise
    this.choice = 'globe'; // the projection chosen, kept while the plane is shown
  }

  setGeometry(g) {
    const first = !this.lonlat;
    this.geom = g;
    this.frame = null;
    const cellRad = Math.sqrt((4 * Math.PI) / Math.max(1, g.polys[0].n)); // a typical cell on the unit sphere
    this.globe.setMesh(g.polys.map(unitVectors), cellRad);
    const map = new TiledMap({
      name: 'lonlat', extent: g.extent, periodX: 360, periodY: 0, cellSize: cellRad / RAD,
      polys: g.polys.map((p) => withBoxes(mapPolygons(p))), wrapX: true, clampY: true,
    });
    if (!first) map.follow(this.lonlat.state());
    this.lonlat = map;
    this.projection = this.choice === 'globe' ? this.globe : this.lonlat;
    if (first) this.fit();
    this.invalidate();
  }

  setProjection(p) {
    if (!PROJECTIONS.includes(p) || p === this.choice) return;
    this.choice = p;
    if (this.lonlat) this.projection = p === 'globe' ? this.globe : this.lonlat;
    this.canvas.dataset.projection = p;
    this.invalidate();
  }

  // fit shows the whole sphere in both projections.
  fit() {
    const W = this.canvas.width || 1, H = this.canvas.height || 1;
    this.globe.fit(W, H);
    if (this.lonlat) this.lonlat.fit(W, H);
    this.invalidate();
  }

  resized(oldW, oldH, W, H) {
    if (this.lonlat) this.lonlat.resized(oldW, oldH, W, H);
  }

  drawOverlays() {
    if (this.projection === this.globe) this.overlaysGlobe();
    else this.overlaysMap();
  }

  overlaysGlobe() {
    const ctx = this.ctx, W = this.canvas.width, H = this.canvas.height;
    const dpr = window.devicePixelRatio || 1;
    const g = this.globe;
    const R = g.radius(W, H), cx = W / 2, cy = H / 2;
    const { e, n, v } = g.basis();
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
      if (z > 0) ring(ctx, x, y, Math.max(14 * dpr, 2.5 * g.cellPixels(W, H)), false);
    }
  }

  overlaysMap() {
    const ctx = this.ctx, W = this.canvas.width, H = this.canvas.height;
    const dpr = window.devicePixelRatio || 1;
    const m = this.lonlat, v = m.view;
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
    // One copy of the sphere framed, centred on the view; the periodic
    // copies beside it dimmed.
    m.veil(ctx, W, H, [], v.cx - 180);
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
        ring(ctx, x, y, Math.max(14 * dpr, 2.5 * m.cellPixels()), false);
      }
    }
  }
}

// Orthographic is the projection of the globe seen from outside: rot is
// the point at the centre of the disc (degrees), zoom the disc's radius
// in units of the fitted radius. Its raster works on the polygons' corners
// as unit vectors.
class Orthographic {
  constructor() {
    this.name = 'globe';
    this.rot = { lon: 0, lat: 25 };
    this.zoom = 1;
    this.unit = null;
    this.cellRad = 0;
  }

  setMesh(unit, cellRad) { this.unit = unit; this.cellRad = cellRad; }

  key() { return `${this.rot.lon}|${this.rot.lat}|${this.zoom}`; }

  camera() { return `lon=${this.rot.lon} lat=${this.rot.lat} zoom=${this.zoom}`; }

  state() { return { rot: { ...this.rot }, zoom: this.zoom }; }

  follow(s) {
    this.rot = { ...s.rot };
    this.zoom = s.zoom;
    return true;
  }

  fit() { this.zoom = 1; }

  resized() {} // the radius follows the canvas

  radius(W, H) { return 0.47 * Math.min(W, H) * this.zoom; }

  cellPixels(W, H) { return this.cellRad * this.radius(W, H); }

  zoomBy(factor) { this.zoom = Math.min(12, Math.max(0.5, this.zoom * factor)); }

  // dragBy turns the globe by a pointer motion in pixels.
  dragBy(dx, dy, W, H) {
    const k = 1 / (this.radius(W, H) * RAD); // degrees per pixel at the centre
    this.rot.lon = wrapLon(this.rot.lon - dx * k);
    this.rot.lat = Math.max(-90, Math.min(90, this.rot.lat + dy * k));
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

  raster(view, loc) {
    const W = view.canvas.width, H = view.canvas.height;
    const { n, start } = view.geom.polys[loc];
    const u = this.unit[loc];
    const { e, n: nn, v } = this.basis();
    const R = this.radius(W, H), cx = W / 2, cy = H / 2;
    const px = view.px, py = view.py;
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
      view.fill(m, i);
    }
  }
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
