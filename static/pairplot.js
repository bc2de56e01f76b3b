// PairPlot overlays the invariants of a pair's two runs against simulated
// time: A solid, B dashed, in the panels of the run page's plot (relative
// drifts, Courant numbers, minimum depth). Each side's mid-run changes are
// vertical lines labelled with the side.

import { fmtNum, superscript, timeUnit, niceStep, ticks, tickDigits } from './format.js';
import { THEME, SERIES, SIDES } from './theme.js';

const FLOOR = 1e-18;
const MAX_POINTS = 6000;

const PANELS = [
  {
    title: 'relative drift', drift: true, weight: 2,
    series: [
      { key: 'mass', label: 'mass', colour: SERIES.mass },
      { key: 'energy', label: 'energy', colour: SERIES.energy },
      { key: 'enstrophy', label: 'potential enstrophy', colour: SERIES.enstrophy },
    ],
  },
  {
    title: 'Courant number', weight: 1,
    series: [
      { key: 'courant', label: 'gravity wave', colour: SERIES.courant },
      { key: 'courant_adv', label: 'advective', colour: SERIES.courantAdv },
    ],
  },
  { title: 'minimum depth (m)', weight: 1, series: [{ key: 'h_min', label: 'h min', colour: SERIES.hMin }] },
];

const DASH = [[], [6, 4]];
const NAMES = ['A', 'B'];

export class PairPlot {
  constructor(canvas) {
    this.canvas = canvas;
    this.points = [[], []];
    this.markers = [[], []];
    this.log = true;
    this.scale = 1;
  }

  setHistory(i, points, markers) {
    this.points[i] = (points || []).slice();
    this.markers[i] = (markers || []).slice();
    this.thin(i);
  }

  addPoint(i, p) {
    const pts = this.points[i];
    const last = pts[pts.length - 1];
    if (last && last.steps === p.steps && last.energy === p.energy && last.mass === p.mass) return;
    pts.push(p);
    this.thin(i);
  }

  addMarker(i, m) { this.markers[i].push(m); }

  thin(i) {
    const pts = this.points[i];
    if (pts.length > MAX_POINTS) this.points[i] = pts.filter((_, k) => k % 2 === 0 || k === pts.length - 1);
  }

  value(p, key, drift) {
    const v = p[key];
    if (v === null || v === undefined) return null;
    return drift && this.log ? Math.log10(Math.max(Math.abs(v), FLOOR)) : v;
  }

  render() {
    const dpr = window.devicePixelRatio || 1;
    const w = Math.max(1, Math.round(this.canvas.clientWidth * dpr));
    const h = Math.max(1, Math.round(this.canvas.clientHeight * dpr));
    if (w !== this.canvas.width || h !== this.canvas.height) { this.canvas.width = w; this.canvas.height = h; }
    const ctx = this.canvas.getContext('2d');
    const W = w / dpr, H = h / dpr;
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = THEME.panel;
    ctx.fillRect(0, 0, W, H);
    const fs = 11 * this.scale;
    ctx.font = `${fs}px system-ui, sans-serif`;
    const all = this.points[0].concat(this.points[1]);
    if (all.length === 0) return;
    let t0 = Infinity, t1 = -Infinity;
    for (const p of all) { t0 = Math.min(t0, p.t); t1 = Math.max(t1, p.t); }
    if (!(t1 > t0)) t1 = t0 + 1;
    const left = fs * 6, right = fs * 1.2, top = fs * 0.3, bottom = fs * 2.2, gap = fs * 0.6;
    const plotW = W - left - right;
    const X = (t) => left + ((t - t0) / (t1 - t0)) * plotW;
    const total = PANELS.reduce((a, p) => a + p.weight, 0);
    const avail = H - top - bottom - gap * (PANELS.length - 1);
    let y = top;
    let first = null, lastBox = null;
    for (const panel of PANELS) {
      const ph = (avail * panel.weight) / total;
      const box = this.drawPanel(ctx, panel, left, y, plotW, ph, X, fs);
      first = first || box;
      lastBox = box;
      y += ph + gap;
    }
    this.drawMarkers(ctx, X, first[0], lastBox[0] + lastBox[1], fs);
    // time axis
    const [unit, name] = timeUnit(t1 - t0);
    const step = niceStep((t1 - t0) / unit, 6) * unit;
    ctx.fillStyle = THEME.muted;
    ctx.textAlign = 'center';
    ctx.textBaseline = 'top';
    for (let t = Math.ceil(t0 / step) * step; t <= t1 + step * 1e-9; t += step) {
      ctx.fillRect(Math.round(X(t)), H - bottom, 1, fs * 0.4);
      ctx.fillText(`${fmtNum(t / unit, 4)} ${name}`, X(t), H - bottom + fs * 0.5);
    }
  }

  // drawPanel draws one panel and returns [top, height] of its data box.
  drawPanel(ctx, panel, x, yTop, w, hAll, X, fs) {
    const drift = !!panel.drift;
    const head = fs * 1.5;
    const y = yTop + head, h = hAll - head;
    let lo = Infinity, hi = -Infinity;
    for (const pts of this.points) {
      for (const p of pts) {
        for (const s of panel.series) {
          const v = this.value(p, s.key, drift);
          if (v === null) continue;
          lo = Math.min(lo, v);
          hi = Math.max(hi, v);
        }
      }
    }
    if (!(hi >= lo)) { lo = 0; hi = 1; }
    let tv;
    if (drift && this.log) {
      lo = Math.floor(lo); hi = Math.ceil(hi);
      if (hi - lo < 2) { lo -= 1; hi += 1; }
      const st = Math.max(1, Math.ceil((hi - lo) / Math.max(2, Math.floor(h / (fs * 1.8)))));
      tv = [];
      for (let v = Math.ceil(lo / st) * st; v <= hi; v += st) tv.push(v);
    } else {
      // A span below about a millionth of the values (a steady minimum
      // depth moving at round-off) is shown as flat, on an axis of ±0.1 %
      // whose labels differ at the three digits they carry.
      const a = Math.max(Math.abs(hi), Math.abs(lo));
      if (hi - lo < a * 1e-6) { const mid = (hi + lo) / 2, d = a * 1e-3 || 1e-12; lo = mid - d; hi = mid + d; }
      const pad = (hi - lo) * 0.06;
      lo -= pad; hi += pad;
      tv = ticks(lo, hi, Math.max(2, Math.floor(h / (fs * 2.2))));
    }
    const Y = (v) => y + h - ((v - lo) / (hi - lo)) * h;
    ctx.fillStyle = THEME.plot;
    ctx.fillRect(x, y, w, h);
    ctx.strokeStyle = THEME.grid;
    ctx.lineWidth = 1;
    ctx.fillStyle = THEME.muted;
    ctx.textAlign = 'right';
    ctx.textBaseline = 'middle';
    let lastLabel = Infinity;
    for (const v of tv) {
      const yy = Math.round(Y(v)) + 0.5;
      ctx.beginPath(); ctx.moveTo(x, yy); ctx.lineTo(x + w, yy); ctx.stroke();
      if (Math.abs(lastLabel - yy) < fs * 1.1) continue;
      lastLabel = yy;
      ctx.fillText(drift && this.log ? `10${superscript(v)}` : fmtNum(v, tickDigits(tv)), x - fs * 0.4, yy);
    }
    ctx.save();
    ctx.beginPath();
    ctx.rect(x, y, w, h);
    ctx.clip();
    ctx.lineWidth = 1.5 * this.scale;
    for (let i = 0; i < 2; i++) {
      ctx.setLineDash(DASH[i].map((d) => d * this.scale));
      for (const s of panel.series) {
        ctx.strokeStyle = s.colour;
        ctx.beginPath();
        let pen = false;
        for (const p of this.points[i]) {
          const v = this.value(p, s.key, drift);
          if (v === null) { pen = false; continue; }
          if (pen) ctx.lineTo(X(p.t), Y(v)); else ctx.moveTo(X(p.t), Y(v));
          pen = true;
        }
        ctx.stroke();
      }
    }
    ctx.setLineDash([]);
    ctx.restore();
    ctx.textAlign = 'left';
    ctx.textBaseline = 'top';
    ctx.fillStyle = THEME.text;
    const title = drift && this.log ? `${panel.title}, log₁₀ |·|` : panel.title;
    ctx.fillText(title, x, yTop + fs * 0.2);
    let lx = x + ctx.measureText(title).width + fs * 1.2;
    for (const s of panel.series) {
      ctx.fillStyle = s.colour;
      ctx.fillRect(lx, yTop + fs * 0.75, fs * 1.2, 2 * this.scale);
      lx += fs * 1.5;
      ctx.fillText(s.label, lx, yTop + fs * 0.2);
      lx += ctx.measureText(s.label).width + fs;
    }
    return [y, h];
  }

  drawMarkers(ctx, X, yTop, yBottom, fs) {
    const rows = [-Infinity, -Infinity, -Infinity, -Infinity];
    ctx.textAlign = 'left';
    ctx.textBaseline = 'top';
    for (let i = 0; i < 2; i++) {
      for (const m of this.markers[i]) {
        const x = Math.round(X(m.t)) + 0.5;
        ctx.strokeStyle = SIDES[i === 0 ? 0 : 1];
        ctx.lineWidth = 1;
        ctx.setLineDash(i === 0 ? [4, 3] : [2, 3]);
        ctx.beginPath(); ctx.moveTo(x, yTop); ctx.lineTo(x, yBottom); ctx.stroke();
        ctx.setLineDash([]);
        const label = `${NAMES[i]}: ${m.label}`;
        const w = ctx.measureText(label).width + fs * 0.8;
        let row = rows.findIndex((r) => r < x);
        if (row < 0) row = rows.indexOf(Math.min(...rows));
        rows[row] = x + w;
        const ly = yTop + fs * (0.3 + 1.3 * row);
        ctx.fillStyle = THEME.labelSoft;
        ctx.fillRect(x + 2, ly - 1, w - fs * 0.4, fs * 1.25);
        ctx.fillStyle = ctx.strokeStyle;
        ctx.fillText(label, x + fs * 0.3, ly);
      }
    }
  }
}
