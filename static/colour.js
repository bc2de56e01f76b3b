// Colour maps of the workbench and the colour bar beside the field.
//
// Two maps of our own design, each a piecewise-linear ramp through a few
// stops with lightness rising (or falling) monotonically:
//   - sequential, for fields that are positive by nature (depth, kinetic
//     energy): ink blue through sea green to pale sand;
//   - diverging, for signed fields (vorticity, divergence), centred on
//     zero: deep blue, a warm near-white at zero, brick red.

import { fmtTick, superscript, niceStep } from './format.js';

const SEQ_STOPS = [
  [0.0, 0x0d, 0x1b, 0x2a],
  [0.22, 0x1d, 0x44, 0x66],
  [0.45, 0x2f, 0x7d, 0x82],
  [0.7, 0x8d, 0xb5, 0x73],
  [0.88, 0xd6, 0xd3, 0x98],
  [1.0, 0xf7, 0xf0, 0xdc],
];

const DIV_STOPS = [
  [0.0, 0x12, 0x2f, 0x5e],
  [0.2, 0x2f, 0x62, 0xa3],
  [0.4, 0x9d, 0xbc, 0xdc],
  [0.5, 0xf4, 0xf1, 0xea],
  [0.6, 0xec, 0xb8, 0x93],
  [0.8, 0xc2, 0x5b, 0x2e],
  [1.0, 0x6b, 0x1e, 0x10],
];

function build(name, stops) {
  const lut = new Uint32Array(256); // ABGR, as ImageData's bytes on little-endian machines
  const css = new Array(256);
  for (let i = 0; i < 256; i++) {
    const t = i / 255;
    let k = 1;
    while (k < stops.length - 1 && stops[k][0] < t) k++;
    const [t0, r0, g0, b0] = stops[k - 1];
    const [t1, r1, g1, b1] = stops[k];
    const f = (t - t0) / (t1 - t0);
    const r = Math.round(r0 + f * (r1 - r0));
    const g = Math.round(g0 + f * (g1 - g0));
    const b = Math.round(b0 + f * (b1 - b0));
    lut[i] = (255 << 24) | (b << 16) | (g << 8) | r;
    css[i] = `rgb(${r},${g},${b})`;
  }
  // The same colours darkened, for cell outlines when zoomed in.
  const dark = new Uint32Array(256);
  for (let i = 0; i < 256; i++) {
    const c = lut[i];
    const r = (c & 255) * 0.72, g = ((c >> 8) & 255) * 0.72, b = ((c >> 16) & 255) * 0.72;
    dark[i] = (255 << 24) | (b << 16) | (g << 8) | r;
  }
  return { name, lut, dark, css };
}

export const SEQUENTIAL = build('sequential', SEQ_STOPS);
export const DIVERGING = build('diverging', DIV_STOPS);

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
  const dpr = window.devicePixelRatio || 1;
  const w = canvas.clientWidth, h = canvas.clientHeight;
  if (canvas.width !== Math.round(w * dpr) || canvas.height !== Math.round(h * dpr)) {
    canvas.width = Math.round(w * dpr);
    canvas.height = Math.round(h * dpr);
  }
  const ctx = canvas.getContext('2d');
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, w, h);
  if (!def || !(hi > lo)) return;
  const fs = 11 * scale;
  const top = fs * 2.2, bottom = h - fs;
  const x0 = 6, bw = 14 * scale;
  for (let y = Math.floor(top); y < bottom; y++) {
    const t = 1 - (y - top) / (bottom - top);
    ctx.fillStyle = map.css[Math.max(0, Math.min(255, Math.round(t * 255)))];
    ctx.fillRect(x0, y, bw, 1);
  }
  ctx.strokeStyle = '#8b949e';
  ctx.lineWidth = 1;
  ctx.strokeRect(x0 + 0.5, top + 0.5, bw - 1, bottom - top - 1);
  ctx.fillStyle = '#e6edf3';
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

function shortLabel(label) {
  // The symbol at the end of the label ("relative vorticity ζ" → "ζ").
  const parts = label.split(' ');
  return parts[parts.length - 1];
}
