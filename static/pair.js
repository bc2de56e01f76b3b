// The pair page: two runs in lockstep (server/pair.go). Draws A and B with
// one shared colour scale, A − B with its own scale centred on zero when
// both are on the same grid, and both runs' invariants overlaid. On the
// plane the three views pan and zoom together; on the sphere they are
// globes (or maps, key G) that turn together.
//
// Hooks for tests, beside the data-role attributes: every field canvas
// carries data-drawn ('plane', 'globe' or 'lonlat') and data-camera (the
// view it was last drawn with, as text: "lon=… lat=… zoom=…" on the globe,
// "cx=… cy=… s=…" on a flat map), so that views turned together read the
// same; window.gyrebench.pair is the latest pair status.

import { Connection } from './connection.js';
import { FieldCanvas } from './fieldcanvas.js';
import { PROJECTIONS } from './globe.js';
import { SeriesPlot } from './seriesplot.js';
import { drawColourBar, ColourRange, DIVERGING, shortLabel } from './colour.js';
import { MessageLine, showState, showRole, numberOrText, commitOnEnter, textScale, isLarge, setLargeType, onKeys } from './controls.js';
import { fmtClock, fmtNum } from './format.js';

const q = (role, side) => document.querySelector(side ? `[data-role="${role}"][data-side="${side}"]` : `[data-role="${role}"]`);

const root = document.querySelector('.wb.pair');
const pairID = root.dataset.pair;
const SIDES = ['a', 'b'];

const el = {
  bar: q('colour-bar'), diffBar: q('diff-bar'), diffCanvas: q('diff-canvas'), diffNote: q('diff-note'),
  diffCaption: q('caption', 'diff'), plot: q('series-plot'), state: q('run-state'), note: q('pair-note'),
  play: q('play-pause'), step: q('step-once'), reset: q('reset'), field: q('field-select'),
  message: q('message'), log: q('log-drift'), large: q('large-type'), title: q('title'),
};

function sideEls(s) {
  return {
    canvas: q('field-canvas', s), time: q('sim-time', s), steps: q('steps', s), caption: q('caption', s),
    scheme: q('scheme-select', s), integrator: q('integrator-select', s), dt: q('dt-input', s),
    grid: q('grid-select', s), n: q('resolution-input', s), hint: q('grid-hint', s), summary: q('side-summary', s),
    hodge: q('hodge-select', s), viscosity: q('viscosity-input', s), hyperviscosity: q('hyperviscosity-input', s),
    divDamping: q('divergence-damping-input', s), dissipationHint: q('dissipation-hint', s),
  };
}

const sides = {};
for (const s of SIDES) {
  const e = sideEls(s);
  sides[s] = { name: s.toUpperCase(), el: e, field: new FieldCanvas(e.canvas), config: null, status: null, geometry: null, frame: null, drawn: 0 };
}
const diff = { field: new FieldCanvas(el.diffCanvas), frame: null, drawn: 0 };
const fields = [sides.a.field, sides.b.field, diff.field];
const plot = new SeriesPlot(el.plot, { names: SIDES.map((s) => s.toUpperCase()) });

const st = { fields: [], pair: null, scheduled: false, projection: 'globe' };
const range = new ColourRange(); // one colour scale for A and B
const message = new MessageLine(el.message);

// For tests: the latest pair status and each side's.
window.gyrebench = { pair: null, sides };

// ---- connection ---------------------------------------------------------

const conn = new Connection(`/pair/${encodeURIComponent(pairID)}/ws`, {
  json: (msg, side) => (side ? onSide(sides[side], side, msg) : onPair(msg)),
  binary: onBinary, state: setState, note: (text, kind) => message.show(text, kind),
}, { tagged: true });

function send(cmd, value, side) { conn.send(cmd, value, side); }

// ---- messages -----------------------------------------------------------

function onSide(s, name, m) {
  const i = SIDES.indexOf(name);
  switch (m.type) {
    case 'hello':
      st.fields = m.fields;
      break;
    case 'config':
      s.config = m;
      showConfig(s);
      break;
    case 'status':
      s.status = m;
      showSide(s);
      break;
    case 'point':
      plot.addPoint(m, i);
      schedule();
      break;
    case 'history':
      plot.setHistory(m.points, m.markers, i);
      schedule();
      break;
    case 'marker':
      plot.addMarker(m, i);
      schedule();
      break;
    default: // ring, timeline, the linear panel's messages: not shown here
  }
}

function onPair(m) {
  switch (m.type) {
    case 'role':
      showRole(m);
      break;
    case 'pair':
      st.pair = m;
      window.gyrebench.pair = m;
      setState(m.state);
      showPair();
      break;
    case 'ack':
      if (conn.settle(m.id) && message.error) message.hide();
      break;
    case 'error':
      conn.settle(m.id);
      message.show(m.message, 'error');
      for (const s of SIDES) showConfig(sides[s]);
      break;
  }
}

function onBinary(msg, tag) {
  if (msg.kind === 'geometry') {
    const s = sides[tag];
    if (!s) return;
    s.geometry = msg;
    useGeometry(s.field, msg);
    s.frame = null;
    if (tag === 'a') {
      useGeometry(diff.field, msg);
      diff.frame = null;
    }
    syncViews(s.field.view);
    range.reset();
    return;
  }
  if (tag === 'diff') {
    if (!sides.a.geometry || msg.gen !== sides.a.geometry.gen) return;
    diff.frame = msg;
  } else {
    const s = sides[tag];
    if (!s || !s.geometry || msg.gen !== s.geometry.gen) return;
    s.frame = msg;
  }
  schedule();
}

// ---- drawing ------------------------------------------------------------

function schedule() {
  if (st.scheduled) return;
  st.scheduled = true;
  requestAnimationFrame(draw);
}

function draw() {
  st.scheduled = false;
  const frames = SIDES.map((s) => sides[s].frame).filter((f) => f);
  const def = frames.length ? st.fields[frames[0].field] : null;
  if (def && frames.every((f) => f.field === frames[0].field)) {
    let lo = Infinity, hi = -Infinity;
    for (const f of frames) { lo = Math.min(lo, f.min); hi = Math.max(hi, f.max); }
    const r = range.update(def.name, def, lo, hi);
    for (const name of SIDES) {
      const s = sides[name];
      if (!s.frame) continue;
      const v = s.field.view;
      v.resize();
      v.setFrame(s.frame, r.map, r.lo, r.hi);
      v.render();
      s.drawn++;
      s.el.canvas.dataset.frames = String(s.drawn);
      s.el.canvas.dataset.field = def.name;
      s.el.canvas.dataset.steps = String(s.frame.steps);
      s.el.canvas.dataset.lo = String(r.lo);
      s.el.canvas.dataset.hi = String(r.hi);
    }
    drawColourBar(el.bar, r.map, r.lo, r.hi, def, textScale());
  }
  drawDiff(def);
  plot.render();
}

function drawDiff(def) {
  const same = !st.pair || st.pair.same_grid;
  el.diffNote.hidden = same;
  el.diffCanvas.hidden = !same;
  const f = diff.frame;
  if (!same || !f || !def || f.field !== st.fields.indexOf(def)) {
    if (!same) {
      el.diffCaption.textContent = '';
      el.diffBar.getContext('2d').clearRect(0, 0, el.diffBar.width, el.diffBar.height);
    }
    return;
  }
  const a = Math.max(Math.abs(f.min), Math.abs(f.max));
  const v = diff.field.view;
  v.resize();
  v.setFrame(f, DIVERGING, -(a || 1), a || 1);
  v.render();
  diff.drawn++;
  const c = el.diffCanvas.dataset;
  c.frames = String(diff.drawn);
  c.maxAbs = String(a);
  c.steps = String(f.steps);
  const sym = shortLabel(def.label);
  el.diffCaption.textContent = a === 0 ? '= 0 everywhere: identical' : `max |${sym}_A − ${sym}_B| = ${fmtNum(a, 3)} ${def.units}`;
  if (a > 0) {
    drawColourBar(el.diffBar, DIVERGING, -a, a, { label: `${sym}A−${sym}B`, units: def.units }, textScale());
  } else {
    el.diffBar.getContext('2d').clearRect(0, 0, el.diffBar.width, el.diffBar.height);
  }
}

// useGeometry draws field canvas fc on geometry g, in the page's choice
// of projection on the sphere.
function useGeometry(fc, g) {
  fc.sphere.setProjection(st.projection);
  fc.setGeometry(g);
}

// syncViews gives every view the pan and zoom (on the globe: the turn) of
// src, where they show the same domain in the same projection.
function syncViews(src) {
  for (const fc of fields) if (fc.view !== src) fc.view.follow(src);
  schedule();
}

for (const fc of fields) fc.onchange = () => syncViews(fc.view);

// toggleProjection moves every globe to the map, or back.
function toggleProjection() {
  if (!fields.some((fc) => fc.view === fc.sphere)) return;
  st.projection = PROJECTIONS[(PROJECTIONS.indexOf(st.projection) + 1) % PROJECTIONS.length];
  for (const fc of fields) fc.sphere.setProjection(st.projection);
  schedule();
}

// ---- controls -----------------------------------------------------------

function setState(s) {
  showState(el, s, ['running', 'paused'], [el.play, el.step, el.reset]);
}

function showConfig(s) {
  const c = s.config;
  if (!c) return;
  const e = s.el;
  e.scheme.value = c.scheme;
  e.integrator.value = c.integrator;
  e.grid.value = c.grid.kind;
  if (document.activeElement !== e.dt) e.dt.value = String(c.dt);
  if (document.activeElement !== e.n) e.n.value = String(c.grid.n);
  e.hodge.value = c.hodge || 'consistent';
  const d = c.dissipation;
  for (const [input, v] of [[e.viscosity, d.viscosity], [e.hyperviscosity, d.hyperviscosity], [e.divDamping, d.divergence_damping]]) {
    if (document.activeElement !== input) input.value = String(v);
  }
  e.dissipationHint.textContent = d.hint;
  el.field.value = c.field;
  const nmax = c.limits.n_max[c.grid.kind];
  e.hint.textContent = `${c.grid.cells} cells · Δt ≤ ${fmtNum(c.limits.dt_max, 3)} s · n up to ${nmax}`;
  // The Hodge star where it matters and each dissipation term that is on,
  // so that the captions tell A from B when only those differ.
  const extra = [];
  if (!c.grid.orthogonal) extra.push(`${c.hodge} H`);
  for (const [v, name, unit] of [[d.viscosity, 'ν₂', 'm²/s'], [d.hyperviscosity, 'ν₄', 'm⁴/s'], [d.divergence_damping, 'ν_δ', 'm²/s']]) {
    if (v > 0) extra.push(`${name} = ${fmtNum(v, 3)} ${unit}`);
  }
  const summary = [`${c.grid.kind} n = ${c.grid.n}`, c.scheme, c.integrator, `Δt = ${fmtNum(c.dt, 4)} s`, ...extra].join(' · ');
  e.summary.textContent = summary;
  e.caption.textContent = summary;
  e.canvas.dataset.grid = `${c.grid.kind} ${c.grid.n}`;
  e.canvas.dataset.scheme = c.scheme;
  if (s === sides.a) {
    el.title.textContent = c.title;
    document.title = `pair ${pairID}: ${c.title} · gyrebench`;
  }
  schedule();
}

function showSide(s) {
  const m = s.status;
  s.el.time.textContent = fmtClock(m.t);
  s.el.time.dataset.seconds = String(m.t);
  s.el.steps.textContent = String(m.steps);
  if (m.blowup) message.show(`${s.name} blew up at step ${m.blowup.step}, t = ${fmtClock(m.blowup.t)}: lower its Δt and press Play.`, 'error');
}

function showPair() {
  const p = st.pair;
  const lead = p.lead ? `${p.lead.toUpperCase()} leads by ${fmtNum(Math.abs(p.t[0] - p.t[1]), 3)} s` : 'in step';
  el.note.textContent = `${lead}${p.same_grid ? '' : ' · different grids: no A − B'}`;
  el.note.dataset.sameGrid = String(p.same_grid);
  schedule();
}

function togglePlay() { send(st.pair && st.pair.state === 'running' ? 'pause' : 'play'); }

function setLarge(on) {
  plot.scale = setLargeType(el.large, on);
  requestAnimationFrame(schedule);
}

for (const name of SIDES) {
  const e = sides[name].el;
  e.scheme.addEventListener('change', () => send('set-scheme', e.scheme.value, name));
  e.integrator.addEventListener('change', () => send('set-integrator', e.integrator.value, name));
  e.dt.addEventListener('change', () => send('set-dt', numberOrText(e.dt.value), name));
  const grid = () => send('set-grid', { kind: e.grid.value, n: numberOrText(e.n.value) }, name);
  e.grid.addEventListener('change', grid);
  e.n.addEventListener('change', grid);
  e.hodge.addEventListener('change', () => send('set-hodge', e.hodge.value, name));
  for (const [input, key] of [[e.viscosity, 'viscosity'], [e.hyperviscosity, 'hyperviscosity'], [e.divDamping, 'divergence_damping']]) {
    input.addEventListener('change', () => send('set-dissipation', { [key]: numberOrText(input.value) }, name));
  }
  commitOnEnter([e.dt, e.n, e.viscosity, e.hyperviscosity, e.divDamping]);
}
el.play.addEventListener('click', togglePlay);
el.step.addEventListener('click', () => send('step'));
el.reset.addEventListener('click', () => send('reset'));
el.field.addEventListener('change', () => send('set-field', el.field.value));
el.log.addEventListener('change', () => { plot.log = el.log.checked; schedule(); });
el.large.addEventListener('click', () => setLarge(!isLarge()));

onKeys({
  ' ': togglePlay,
  s: () => send('step'),
  r: () => send('reset'),
  l: () => setLarge(!isLarge()),
  g: toggleProjection,
  0: () => { for (const fc of fields) fc.view.fit(); schedule(); },
});

new ResizeObserver(schedule).observe(document.querySelector('.pair-views'));
new ResizeObserver(schedule).observe(el.plot);
plot.log = el.log.checked;
conn.connect();
