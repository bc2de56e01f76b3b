// Colour maps of the workbench and the colour bar beside the field.
//
// The maps are those of the server's PNG/SVG figures (package sim/figure),
// served as the generated module colourmaps.js, so that screen and figure
// share one definition:
//   - sequential ("shoal"), for fields that are positive by nature (depth,
//     kinetic energy): deep navy through teal and sage to pale sand;
//   - diverging ("twofold"), for signed fields (vorticity, divergence),
//     centred on zero: deep blue, a warm near-white at zero, brick.

import { fmtTick, superscript, niceStep } from './format.js';
import { SEQUENTIAL as SEQ_TABLE, DIVERGING as DIV_TABLE } from './colourmaps.js';
import { THEME } from './theme.js';
import { cssContext } from './canvas.js';

function build(name, table) {
  const n = table.length;
  const lut = new Uint32Array(n); // ABGR, as ImageData's bytes on little-endian machines
  const css = new Array(n);
  for (let i = 0; i < n; i++) {
    const [r, g, b] = table[i];
    lut[i] = (255 << 24) | (b << 16) | (g << 8) | r;
    css[i] = `rgb(${r},${g},${b})`;
  }
  // The same colours darkened, for cell outlines when zoomed in.
  const dark = new Uint32Array(n);
  for (let i = 0; i < n; i++) {
    const c = lut[i];
    const r = (c & 255) * 0.72, g = ((c >> 8) & 255) * 0.72, b = ((c >> 16) & 255) * 0.72;
    dark[i] = (255 << 24) | (b << 16) | (g << 8) | r;
  }
  return { name, lut, dark, css };
}

export const SEQUENTIAL = build('sequential', SEQ_TABLE.rgb);
export const DIVERGING = build('diverging', DIV_TABLE.rgb);

// mapFor picks the map for a field definition (from the hello message)
// and the frame's value range.
export function mapFor(def, lo, hi) {
  if (def.map === 'diverging') return DIVERGING;
  if (def.map === 'auto' && lo < 0 && hi > 0) return DIVERGING;
  return SEQUENTIAL;
}

// drawColourBar draws a vertical bar with round ticks, the field's label
// and its units. scale enlarges the type (large-type mode).
export function drawColourBar(canvas, map, lo, hi, def, scale) {
  const { ctx, w, h } = cssContext(canvas);
  if (!def || !(hi > lo)) return;
  const fs = 11 * scale;
  const top = fs * 2.2, bottom = h - fs;
  const x0 = 6, bw = 14 * scale;
  for (let y = Math.floor(top); y < bottom; y++) {
    const t = 1 - (y - top) / (bottom - top);
    ctx.fillStyle = map.css[Math.max(0, Math.min(255, Math.round(t * 255)))];
    ctx.fillRect(x0, y, bw, 1);
  }
  ctx.strokeStyle = THEME.frame;
  ctx.lineWidth = 1;
  ctx.strokeRect(x0 + 0.5, top + 0.5, bw - 1, bottom - top - 1);
  ctx.fillStyle = THEME.text;
  ctx.font = `${fs}px system-ui, sans-serif`;
  ctx.textBaseline = 'top';
  ctx.fillText(`${shortLabel(def.label)} (${def.units})`, x0, fs * 0.4);
  // Ticks: a common power of ten keeps labels short.
  const a = Math.max(Math.abs(lo), Math.abs(hi));
  const e = a > 0 && (a < 1e-2 || a >= 1e5) ? Math.floor(Math.log10(a)) : 0;
  const k = 10 ** e;
  const step = niceStep((hi - lo) / k, 5);
  ctx.textBaseline = 'middle';
  for (let v = Math.ceil(lo / k / step) * step; v <= hi / k + 1e-9 * step; v += step) {
    const y = bottom - ((v * k - lo) / (hi - lo)) * (bottom - top);
    ctx.fillRect(x0 + bw, Math.round(y), 4, 1);
    ctx.fillText(fmtTick(Math.abs(v) < step * 1e-6 ? 0 : v, step), x0 + bw + 7, y);
  }
  if (e !== 0) {
    ctx.textBaseline = 'bottom';
    ctx.fillText(`×10${superscript(e)}`, x0, h);
  }
}

// shortLabel is the symbol at the end of a field's label.
export function shortLabel(label) {
  // The symbol at the end of the label ("relative vorticity ζ" → "ζ").
  const parts = label.split(' ');
  return parts[parts.length - 1];
}

// ColourRange is the colour range of a field shown frame after frame: it
// widens at once and narrows slowly, so that colours do not flicker; a
// diverging map gets a range symmetric about zero. A new key (field, grid
// or map) starts afresh.
export class ColourRange {
  constructor() { this.r = null; }

  reset() { this.r = null; }

  // update takes the frame range [lo, hi] of field def; it returns
  // {lo, hi, map} to draw with.
  update(key, def, lo, hi) {
    const map = mapFor(def, lo, hi);
    if (map.name === 'diverging') {
      const a = Math.max(Math.abs(lo), Math.abs(hi)) || 1e-30;
      lo = -a; hi = a;
    }
    if (!(hi > lo)) {
      const d = Math.abs(lo) * 1e-6 || 1e-12;
      lo -= d; hi += d;
    }
    key = `${key}|${map.name}`;
    const r = this.r;
    if (!r || r.key !== key) {
      this.r = { key, lo, hi, map };
    } else {
      const k = 0.08;
      r.lo = lo < r.lo ? lo : r.lo + (lo - r.lo) * k;
      r.hi = hi > r.hi ? hi : r.hi + (hi - r.hi) * k;
    }
    return this.r;
  }
}
