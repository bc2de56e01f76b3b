// The dispersion diagram of the linear panel: the normal modes of the
// linearised scheme (message "dispersion", server/linear_panel.go) as
// points coloured by class, frequency against wavenumber, with the
// continuous relation ω² = f² + gH|k|² as a curve. Wavenumber is |k|Δx (Δx
// = Lx/n, so the grid scale is near π); frequency is |ω|/f when f ≠ 0. On
// the sphere no wavenumber is computed: the modes are drawn against their
// rank in frequency, and frequency is |ω|/2Ω.

import { fmtTick, niceStep } from './format.js';
import { THEME } from './theme.js';
import { cssContext } from './canvas.js';

export const CLASS_COLOURS = {
  inertia_gravity: '#3fb4a0',
  geostrophic: '#f2c14e',
  rossby: '#a99bff',
  spurious: '#f07a62',
};

export const CLASS_LABELS = {
  inertia_gravity: 'inertia–gravity',
  geostrophic: 'geostrophic',
  rossby: 'Rossby',
  spurious: 'spurious',
};

// drawDispersion draws message d on canvas; rho, when known, is the run's
// own grid's largest |ω| (a dashed line). scale enlarges the type.
export function drawDispersion(canvas, d, rho, scale) {
  const { ctx, w, h } = cssContext(canvas);
  const fs = 10.5 * scale;
  ctx.font = `${fs}px system-ui, sans-serif`;
  ctx.fillStyle = THEME.muted;
  if (!d || d.state !== 'ready') {
    ctx.textBaseline = 'middle';
    ctx.fillText(d ? d.message : 'no analysis yet', 8, h / 2);
    canvas.dataset.points = '0';
    return;
  }
  const sphere = d.sphere;
  const fref = Math.abs(d.f) > 0 ? Math.abs(d.f) : 0;
  const ys = (om) => (fref > 0 ? om / fref : om);
  // Points (x, y, class).
  const n = d.w.length;
  const xs = new Float64Array(n), yv = new Float64Array(n);
  let order = null;
  if (sphere) {
    order = Array.from({ length: n }, (_, i) => i).sort((a, b) => d.w[a] - d.w[b]);
    order.forEach((i, r) => { xs[i] = r; });
  } else {
    for (let i = 0; i < n; i++) xs[i] = d.k[i] * d.dx;
  }
  let xmax = 0, ymax = 0;
  for (let i = 0; i < n; i++) {
    yv[i] = ys(d.w[i]);
    if (xs[i] > xmax) xmax = xs[i];
    if (yv[i] > ymax) ymax = yv[i];
  }
  if (rho > 0 && ys(rho) > ymax) ymax = ys(rho);
  if (!sphere) xmax = Math.max(xmax, Math.PI);
  xmax *= 1.04;
  ymax = ymax > 0 ? ymax * 1.08 : 1;
  const left = fs * 3.6, right = 6, top = fs * 0.8, bottom = fs * 2.6;
  const X = (x) => left + (x / xmax) * (w - left - right);
  const Y = (y) => h - bottom - (y / ymax) * (h - top - bottom);
  // Axes and ticks.
  ctx.strokeStyle = THEME.rule;
  ctx.lineWidth = 1;
  ctx.strokeRect(left + 0.5, top + 0.5, w - left - right - 1, h - top - bottom - 1);
  ctx.fillStyle = THEME.muted;
  ctx.textBaseline = 'top';
  ctx.textAlign = 'center';
  const sx = niceStep(xmax, 4);
  for (let v = 0; v <= xmax + 1e-9; v += sx) {
    ctx.fillRect(Math.round(X(v)), h - bottom, 1, 3);
    ctx.fillText(fmtTick(v, sx), X(v), h - bottom + 3);
  }
  ctx.fillText(sphere ? 'mode, in order of frequency' : '|k| Δx', (left + w - right) / 2, h - bottom + fs * 1.3);
  ctx.textAlign = 'right';
  ctx.textBaseline = 'middle';
  const sy = niceStep(ymax, 4);
  for (let v = 0; v <= ymax + 1e-9; v += sy) {
    ctx.fillRect(left - 3, Math.round(Y(v)), 3, 1);
    ctx.fillText(fmtTick(v, sy), left - 4, Y(v));
  }
  ctx.save();
  ctx.translate(fs * 0.9, (top + h - bottom) / 2);
  ctx.rotate(-Math.PI / 2);
  ctx.textAlign = 'center';
  ctx.fillText(fref > 0 ? (sphere ? '|ω| / 2Ω' : '|ω| / f') : '|ω| (s⁻¹)', 0, 0);
  ctx.restore();
  ctx.textAlign = 'left';
  // The run's own fastest mode.
  if (rho > 0) {
    ctx.strokeStyle = THEME.chrome;
    ctx.setLineDash([4, 3]);
    ctx.beginPath();
    ctx.moveTo(left, Math.round(Y(ys(rho))) + 0.5);
    ctx.lineTo(w - right, Math.round(Y(ys(rho))) + 0.5);
    ctx.stroke();
    ctx.setLineDash([]);
  }
  // Continuous relation (plane), clipped to the axes.
  if (!sphere) {
    ctx.save();
    ctx.beginPath();
    ctx.rect(left, top, w - left - right, h - top - bottom);
    ctx.clip();
    ctx.strokeStyle = THEME.text;
    ctx.lineWidth = 1.2;
    ctx.beginPath();
    for (let i = 0; i <= 100; i++) {
      const x = (i / 100) * xmax, k = x / d.dx;
      const y = ys(Math.sqrt(d.f * d.f + d.g * d.depth * k * k));
      if (i === 0) ctx.moveTo(X(x), Y(y)); else ctx.lineTo(X(x), Y(y));
    }
    ctx.stroke();
    ctx.restore();
  }
  // Modes in class order, so the rarer classes are drawn over the common
  // ones; spurious modes as crosses, since on the f-plane they share zero
  // frequency with the geostrophic modes.
  const r = 1.7 * scale;
  let drawn = 0;
  for (let ci = 0; ci < d.classes.length; ci++) {
    const spurious = d.classes[ci] === 'spurious';
    ctx.fillStyle = ctx.strokeStyle = CLASS_COLOURS[d.classes[ci]] || THEME.fallback;
    ctx.lineWidth = 1.2;
    if (spurious) ctx.beginPath();
    for (let i = 0; i < n; i++) {
      if (d.class[i] !== ci) continue;
      const x = X(xs[i]), y = Y(yv[i]);
      if (spurious) {
        const q = 1.6 * r;
        ctx.moveTo(x - q, y - q); ctx.lineTo(x + q, y + q);
        ctx.moveTo(x - q, y + q); ctx.lineTo(x + q, y - q);
      } else {
        ctx.fillRect(x - r, y - r, 2 * r, 2 * r);
      }
      drawn++;
    }
    if (spurious) ctx.stroke();
  }
  canvas.dataset.points = String(drawn);
}

// fillLegend puts the class counts of d into el, each with its colour.
export function fillLegend(el, d) {
  el.replaceChildren();
  for (const c of d.classes) {
    const k = d.counts[c];
    if (!(k > 0)) continue;
    const s = document.createElement('span');
    s.className = 'mode-class';
    s.dataset.class = c;
    s.dataset.count = String(k);
    const sw = document.createElement('i');
    sw.style.background = CLASS_COLOURS[c] || THEME.fallback;
    s.append(sw, `${CLASS_LABELS[c] || c} ${k}`);
    el.append(s);
  }
}
