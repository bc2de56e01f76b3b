// SeriesPlot draws the invariants of k runs against simulated time in
// stacked panels: relative drift of mass, energy and potential enstrophy
// (signed, or log₁₀ of its magnitude), the Courant numbers, and the
// minimum depth. One run (k = 1) is drawn in solid lines, its mid-run
// changes as labelled vertical lines coloured by kind; a pair (k = 2)
// draws A solid and B dashed, each side's changes in the side's colour
// and labelled with its name. Other panels can be given (budgetplot.js).

import { fmtNum, superscript, timeUnit, niceStep, ticks, tickDigits } from './format.js';
import { THEME, SERIES, MARKERS, SIDES } from './theme.js';
import { fitToBox } from './canvas.js';

const MAX_POINTS = 8000; // kept of one run; k runs keep 12000 / k each, at most this
const FLOOR = 1e-18; // |drift| below this is drawn at this value in log mode
const DASHES = [[], [6, 4], [2, 3]]; // the lines of run 1, 2, 3
const MARKER_DASHES = [[4, 3], [2, 3], [1, 2]];

const PANELS = [
  {
    title: 'relative drift',
    series: [
      { key: 'mass', label: 'mass', colour: SERIES.mass },
      { key: 'energy', label: 'energy', colour: SERIES.energy },
      { key: 'enstrophy', label: 'potential enstrophy', colour: SERIES.enstrophy },
    ],
    drift: true,
    weight: 2,
  },
  {
    title: 'Courant number',
    series: [
      { key: 'courant', label: 'gravity wave', colour: SERIES.courant },
      { key: 'courant_adv', label: 'advective', colour: SERIES.courantAdv },
    ],
    weight: 1,
  },
  {
    title: 'minimum depth (m)',
    series: [{ key: 'h_min', label: 'h min', colour: SERIES.hMin }],
    weight: 1,
  },
];

export class SeriesPlot {
  // panels replaces the invariant panels (the budget plot has its own);
  // names holds one name per run ('' for a single run).
  constructor(canvas, { panels = PANELS, names = [''] } = {}) {
    this.canvas = canvas;
    this.panels = panels;
    this.names = names;
    this.sets = names.map(() => ({ points: [], markers: [] }));
    this.maxPoints = Math.min(MAX_POINTS, Math.round(12000 / names.length));
    this.log = true;
    this.scale = 1;
  }

  // points are the first run's points.
  get points() { return this.sets[0].points; }

  setHistory(points, markers, i = 0) {
    this.sets[i].points = (points || []).slice();
    this.sets[i].markers = (markers || []).slice();
    this.thin(i);
  }

  addPoint(p, i = 0) {
    const pts = this.sets[i].points;
    const last = pts[pts.length - 1];
    if (last && last.steps === p.steps && last.energy === p.energy && last.mass === p.mass) return;
    pts.push(p);
    this.thin(i);
  }

  addMarker(m, i = 0) { this.sets[i].markers.push(m); }

  thin(i) {
    const s = this.sets[i];
    if (s.points.length <= this.maxPoints) return;
    s.points = s.points.filter((_, k) => k % 2 === 0 || k === s.points.length - 1);
  }

  value(p, key, drift) {
    const v = p[key];
    if (v === null || v === undefined) return null;
    if (drift && this.log) return Math.log10(Math.max(Math.abs(v), FLOOR));
    return v;
  }

  render() {
    fitToBox(this.canvas);
    const dpr = window.devicePixelRatio || 1;
    const ctx = this.canvas.getContext('2d');
    const W = this.canvas.width / dpr, H = this.canvas.height / dpr;
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = THEME.panel;
    ctx.fillRect(0, 0, W, H);
    const fs = 11 * this.scale;
    ctx.font = `${fs}px system-ui, sans-serif`;
    const left = fs * 6, right = fs * 1.2, top = fs * 0.3, bottom = fs * 2.2, gap = fs * 0.6;
    let t0 = Infinity, t1 = -Infinity;
    for (const s of this.sets) {
      for (const p of s.points) { if (p.t < t0) t0 = p.t; if (p.t > t1) t1 = p.t; }
    }
    if (t0 === Infinity) return;
    for (const s of this.sets) for (const m of s.markers) t1 = Math.max(t1, m.t);
    if (!(t1 > t0)) t1 = t0 + 1;
    const plotW = W - left - right;
    const X = (t) => left + ((t - t0) / (t1 - t0)) * plotW;
    const panels = this.panels;
    const totalWeight = panels.reduce((a, p) => a + p.weight, 0);
    const avail = H - top - bottom - gap * (panels.length - 1);
    let y = top;
    const boxes = [];
    for (const panel of panels) {
      const h = (avail * panel.weight) / totalWeight;
      boxes.push([y, h]);
      this.drawPanel(ctx, panel, left, y, plotW, h, X, fs);
      y += h + gap;
    }
    this.drawMarkers(ctx, X, boxes, fs);
    this.drawTimeAxis(ctx, t0, t1, X, H - bottom, fs);
  }

  drawPanel(ctx, panel, x, yTop, w, hAll, X, fs) {
    const drift = !!panel.drift;
    const head = fs * 1.5; // title and legend sit above the data
    const y = yTop + head, h = hAll - head;
    let lo = Infinity, hi = -Infinity;
    for (const set of this.sets) {
      for (const p of set.points) {
        for (const s of panel.series) {
          const v = this.value(p, s.key, drift);
          if (v === null) continue;
          if (v < lo) lo = v;
          if (v > hi) hi = v;
        }
      }
    }
    if (!(hi >= lo)) { lo = 0; hi = 1; }
    let tickVals;
    if (drift && this.log) {
      lo = Math.floor(lo); hi = Math.ceil(hi);
      if (hi - lo < 2) { lo -= 1; hi += 1; }
      const step = Math.max(1, Math.ceil((hi - lo) / Math.max(2, Math.floor(h / (fs * 1.8)))));
      tickVals = [];
      for (let v = Math.ceil(lo / step) * step; v <= hi; v += step) tickVals.push(v);
    } else {
      // A span below about a millionth of the values (a steady minimum
      // depth moving at round-off) is shown as flat, on an axis of ±0.1 %
      // whose labels differ at the three digits they carry.
      const a = Math.max(Math.abs(hi), Math.abs(lo));
      if (hi - lo < a * 1e-6) { const mid = (hi + lo) / 2, d = a * 1e-3 || 1e-12; lo = mid - d; hi = mid + d; }
      const pad = (hi - lo) * 0.06;
      lo -= pad; hi += pad;
      tickVals = ticks(lo, hi, Math.max(2, Math.floor(h / (fs * 2.2))));
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
    const digits = tickDigits(tickVals);
    for (const v of tickVals) {
      const yy = Math.round(Y(v)) + 0.5;
      ctx.beginPath(); ctx.moveTo(x, yy); ctx.lineTo(x + w, yy); ctx.stroke();
      if (Math.abs(lastLabel - yy) < fs * 1.1) continue; // no overlapping labels
      lastLabel = yy;
      const label = drift && this.log ? `10${superscript(v)}` : fmtNum(v, digits);
      ctx.fillText(label, x - fs * 0.4, yy);
    }
    ctx.save();
    ctx.beginPath();
    ctx.rect(x, y, w, h);
    ctx.clip();
    ctx.lineWidth = 1.5 * this.scale;
    this.sets.forEach((set, i) => {
      ctx.setLineDash(DASHES[i % DASHES.length].map((d) => d * this.scale));
      for (const s of panel.series) {
        ctx.strokeStyle = s.colour;
        ctx.beginPath();
        let pen = false;
        for (const p of set.points) {
          const v = this.value(p, s.key, drift);
          if (v === null) { pen = false; continue; }
          const px = X(p.t), py = Y(v);
          if (pen) ctx.lineTo(px, py); else ctx.moveTo(px, py);
          pen = true;
        }
        ctx.stroke();
      }
    });
    ctx.setLineDash([]);
    ctx.restore();
    // Title and legend above the panel.
    ctx.textAlign = 'left';
    ctx.textBaseline = 'top';
    let lx = x;
    ctx.fillStyle = THEME.text;
    const title = drift && this.log ? `${panel.title}, log₁₀ |·|` : panel.title;
    ctx.fillText(title, lx, yTop + fs * 0.2);
    lx += ctx.measureText(title).width + fs * 1.2;
    for (const s of panel.series) {
      ctx.fillStyle = s.colour;
      ctx.fillRect(lx, yTop + fs * 0.75, fs * 1.2, 2 * this.scale);
      lx += fs * 1.5;
      ctx.fillText(s.label, lx, yTop + fs * 0.2);
      lx += ctx.measureText(s.label).width + fs;
    }
  }

  drawMarkers(ctx, X, boxes, fs) {
    const yTop = boxes[0][0] + fs * 1.5;
    const last = boxes[boxes.length - 1];
    const yBottom = last[0] + last[1];
    const k = this.sets.length;
    const rows = new Array(2 + k).fill(-Infinity);
    ctx.textAlign = 'left';
    ctx.textBaseline = 'top';
    this.sets.forEach((set, i) => {
      for (const m of set.markers) {
        const x = Math.round(X(m.t)) + 0.5;
        const colour = k > 1 ? SIDES[i % SIDES.length] : MARKERS[m.kind] || THEME.fallback;
        const label = this.names[i] ? `${this.names[i]}: ${m.label}` : m.label;
        ctx.strokeStyle = colour;
        ctx.lineWidth = 1;
        ctx.setLineDash(MARKER_DASHES[i % MARKER_DASHES.length]);
        ctx.beginPath(); ctx.moveTo(x, yTop); ctx.lineTo(x, yBottom); ctx.stroke();
        ctx.setLineDash([]);
        // Labels sit in the first free row to the right of the line.
        const w = ctx.measureText(label).width + fs * 0.8;
        // With every row taken, the newest label covers the one it
        // replaces entirely, so that two never print over each other.
        let row = rows.findIndex((r) => r < x);
        if (row < 0) row = rows.indexOf(Math.min(...rows));
        const covered = Math.max(w, rows[row] - x);
        rows[row] = x + w;
        const ly = yTop + fs * (0.3 + 1.3 * row);
        ctx.fillStyle = covered > w ? THEME.label : THEME.labelSoft;
        ctx.fillRect(x + 2, ly - 1, covered - fs * 0.4, fs * 1.25);
        ctx.fillStyle = colour;
        ctx.fillText(label, x + fs * 0.3, ly);
      }
    });
  }

  drawTimeAxis(ctx, t0, t1, X, y, fs) {
    const [unit, name] = timeUnit(t1 - t0);
    const step = niceStep((t1 - t0) / unit, 6) * unit;
    ctx.fillStyle = THEME.muted;
    ctx.textAlign = 'center';
    ctx.textBaseline = 'top';
    for (let t = Math.ceil(t0 / step) * step; t <= t1 + step * 1e-9; t += step) {
      const x = X(t);
      ctx.fillRect(Math.round(x), y, 1, fs * 0.4);
      ctx.fillText(`${fmtNum(t / unit, 4)} ${name}`, x, y + fs * 0.5);
    }
  }
}
