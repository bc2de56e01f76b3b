// The workbench page: connects to the run's websocket, keeps the controls
// in step with the run, draws frames as they come and sends commands.
// Elements are found by their data-role attributes (DEVELOPERS.md "Pages
// and their hooks").

import { Connection } from './connection.js';
import { FieldCanvas } from './fieldcanvas.js';
import { PROJECTIONS } from './globe.js';
import { LinearPanel } from './linearpanel.js';
import { SeriesPlot } from './seriesplot.js';
import { StructurePanel } from './structurepanel.js';
import { BudgetPlot } from './budgetplot.js';
import { TimelinePanel } from './timeline.js';
import { drawColourBar, ColourRange } from './colour.js';
import { MessageLine, showState, showRole, watching, numberOrText, commitOnEnter, textScale, isLarge, setLargeType, onKeys } from './controls.js';
import { fmtClock, fmtNum } from './format.js';

const $ = (role) => document.querySelector(`[data-role="${role}"]`);

const root = document.querySelector('.wb');
const runID = root.dataset.run;
const el = {
  canvas: $('field-canvas'), bar: $('colour-bar'), plot: $('series-plot'),
  state: $('run-state'), time: $('sim-time'), steps: $('steps'), rates: $('rates'),
  play: $('play-pause'), step: $('step-once'), reset: $('reset'),
  scheme: $('scheme-select'), schemeHint: $('scheme-hint'), integrator: $('integrator-select'), dt: $('dt-input'), dtHint: $('dt-hint'),
  grid: $('grid-select'), n: $('resolution-input'), gridHint: $('grid-hint'),
  field: $('field-select'), scenario: $('scenario-select'), load: $('load-scenario'),
  scrub: $('scrub'), scrubLabel: $('scrub-label'), message: $('message'), blowup: $('blowup'),
  log: $('log-drift'), large: $('large-type'), help: $('help'), overlay: $('help-overlay'), title: $('title'),
  optimize: $('optimize-select'), optimizeBox: $('optimize'),
  nLabel: $('resolution-label'), projection: $('projection-select'), projectionBox: $('projection'),
  viscosity: $('viscosity-input'), hyperviscosity: $('hyperviscosity-input'), divDamping: $('divergence-damping-input'),
  dissipationHint: $('dissipation-hint'), budget: $('budget-plot'),
};

const message = new MessageLine(el.message);

// For tests and measurements: the latest status (with the server's own
// clock, wall_s) and the time from navigation start to the first frame.
const hooks = { status: null, firstFrameMs: null, drawMs: 0 };
window.gyrebench = hooks;

// The plane is drawn by FieldView, the sphere by SphereView (globe or
// longitude–latitude map); field.view is whichever the current grid needs.
const field = new FieldCanvas(el.canvas);
const sphereView = field.sphere;
const linear = new LinearPanel({
  dtStable: $('dt-stable'), dtWarning: $('dt-warning'), plot: $('dispersion-plot'),
  caption: $('dispersion-caption'), legend: $('dispersion-legend'),
});
const plot = new SeriesPlot(el.plot);
const range = new ColourRange();
const budget = new BudgetPlot(el.budget);
const timeline = new TimelinePanel(send, (text, kind) => message.show(text, kind)); // record, mark, replay (timeline.js)
const structure = new StructurePanel({
  panel: $('structure-panel'), caption: $('structure-caption'), verdicts: $('structure-verdicts'),
  measures: $('structure-measures'), hodge: $('hodge-select'), hint: $('hodge-hint'),
}, send); // the Hodge star and the structure report (structurepanel.js)

const st = {
  fields: [], config: null, status: null, geometry: null, ring: { entries: [], cursor: -1 },
  frame: null, framesDrawn: 0, drawTimes: [], skipped: 0,
  dirtyField: false, dirtyPlot: false, scheduled: false, barKey: '',
};

// ---- connection ---------------------------------------------------------

const conn = new Connection(`/run/${encodeURIComponent(runID)}/ws`, {
  open: () => {
    send('linear'); // the stable-Δt prediction and the dispersion diagram
    send('structure'); // the structure report
  },
  json: onJSON, binary: onBinary, state: setRunState, note: (text, kind) => message.show(text, kind),
});

function send(cmd, value) { conn.send(cmd, value); }

// ---- messages -----------------------------------------------------------

// onJSON applies one of the run's text messages to the page.
const messages = {
  role: showRole,
  hello: (m) => { st.fields = m.fields; },
  config: (m) => { st.config = m; showConfig(); },
  status: (m) => { st.status = m; hooks.status = m; showStatus(); },
  point: (m) => { plot.addPoint(m); budget.addPoint(m); linear.onPoint(m); schedule('plot'); },
  stability: (m) => linear.onStability(m),
  dispersion: (m) => linear.onDispersion(m),
  structure: (m) => structure.onStructure(m),
  warning: (m) => linear.onWarning(m),
  history: (m) => { plot.setHistory(m.points, m.markers); budget.setHistory(m.points, m.markers); schedule('plot'); },
  marker: (m) => { plot.addMarker(m); budget.addMarker(m); schedule('plot'); },
  timeline: (m) => timeline.update(m),
  ring: (m) => { st.ring = m; showRing(); },
  // A command of ours went through: an earlier refusal is old news.
  ack: (m) => { if (conn.settle(m.id) && message.error) message.hide(); },
  error: (m) => {
    conn.settle(m.id);
    message.show(m.message, 'error', m.cmd);
    showConfig(); // put the controls back to what the run has
  },
};

function onJSON(m) {
  const f = messages[m.type];
  if (f) f(m);
}

function onBinary(msg) {
  if (msg.kind === 'geometry') {
    st.geometry = msg;
    useGeometry(msg);
    range.reset();
    el.canvas.dataset.grid = st.config ? `${st.config.grid.kind} ${st.config.grid.n}` : '';
    el.canvas.dataset.cellCorners = cornerRange(msg.polys[0]); // "4" on the cubed sphere, "5–6" icosahedral
    return;
  }
  if (!st.geometry || msg.gen !== st.geometry.gen) return; // a frame of a grid just replaced
  st.skipped += msg.skipped;
  st.frame = msg;
  schedule('field');
}

// cornerRange writes the fewest and most corners of the polygons p.
function cornerRange(p) {
  let lo = Infinity, hi = 0;
  for (let i = 0; i < p.n; i++) {
    const k = p.start[i + 1] - p.start[i];
    lo = Math.min(lo, k);
    hi = Math.max(hi, k);
  }
  return lo === hi ? String(lo) : `${lo}–${hi}`;
}

// ---- drawing ------------------------------------------------------------

function schedule(what) {
  if (what === 'field') st.dirtyField = true;
  if (what === 'plot') st.dirtyPlot = true;
  if (!st.scheduled) {
    st.scheduled = true;
    requestAnimationFrame(draw);
  }
}

function draw(now) {
  st.scheduled = false;
  if (st.dirtyField) {
    st.dirtyField = false;
    drawField(now);
  }
  if (st.dirtyPlot) {
    st.dirtyPlot = false;
    plot.render();
    budget.render();
  }
}

function drawField(now) {
  const f = st.frame;
  if (!f) return;
  const t0 = performance.now();
  const def = st.fields[f.field];
  if (!def) return;
  const r = range.update(`${f.field}|${f.gen}`, def, f.min, f.max);
  const view = field.view;
  view.resize();
  view.setFrame(f, r.map, r.lo, r.hi);
  view.render();
  // The bar is its own canvas layer: redrawn only when what it shows
  // changes at the three digits its labels carry, not on every frame.
  const scale = textScale();
  const barKey = `${r.map.name}|${def.name}|${el.bar.clientWidth}x${el.bar.clientHeight}|${scale}|${r.lo.toPrecision(3)}|${r.hi.toPrecision(3)}`;
  if (barKey !== st.barKey) {
    st.barKey = barKey;
    drawColourBar(el.bar, r.map, r.lo, r.hi, def, scale);
  }
  st.framesDrawn++;
  el.canvas.dataset.frames = String(st.framesDrawn);
  el.canvas.dataset.field = def.name;
  if (st.framesDrawn === 1) {
    hooks.firstFrameMs = performance.now();
    el.canvas.dataset.firstFrameMs = hooks.firstFrameMs.toFixed(0);
  }
  hooks.drawMs = 0.9 * hooks.drawMs + 0.1 * (performance.now() - t0);
  st.drawTimes.push(now);
  while (st.drawTimes.length && st.drawTimes[0] < now - 1000) st.drawTimes.shift();
}

function showRates() {
  const now = performance.now();
  while (st.drawTimes.length && st.drawTimes[0] < now - 1000) st.drawTimes.shift();
  const sps = st.status && st.status.state === 'running' ? st.status.steps_per_s : 0;
  let text = `${st.drawTimes.length} fps here · ${fmtNum(sps, 3)} steps/s`;
  if (st.skipped > 0) text += ` · ${st.skipped} frame${st.skipped === 1 ? '' : 's'} skipped (slow link or busy page)`;
  el.rates.textContent = text;
  el.rates.dataset.fps = String(st.drawTimes.length);
  el.rates.dataset.stepsPerSecond = String(sps);
}
setInterval(showRates, 500);

// ---- controls -----------------------------------------------------------

function setRunState(s) {
  showState(el, s, ['running', 'paused', 'blown-up'], [el.play, el.step, el.reset, el.load]);
}

function showConfig() {
  const c = st.config;
  if (!c) return;
  el.title.textContent = c.title;
  document.title = `${c.title} · gyrebench`;
  el.scheme.value = c.scheme;
  const chosen = el.scheme.selectedOptions[0];
  el.schemeHint.textContent = chosen ? chosen.dataset.note || '' : '';
  el.integrator.value = c.integrator;
  el.grid.value = c.grid.kind;
  el.field.value = c.field;
  showScenario(c.scenario);
  if (document.activeElement !== el.dt) el.dt.value = String(c.dt);
  if (document.activeElement !== el.n) el.n.value = String(c.grid.n);
  const d = c.dissipation;
  for (const [input, v] of [[el.viscosity, d.viscosity], [el.hyperviscosity, d.hyperviscosity], [el.divDamping, d.divergence_damping]]) {
    if (document.activeElement !== input) input.value = String(v);
  }
  el.dissipationHint.textContent = d.hint;
  el.dissipationHint.dataset.eFoldingS = d.e_folding_s === null ? '' : String(d.e_folding_s);
  el.dtHint.textContent = `allowed 0 < Δt ≤ ${fmtNum(c.limits.dt_max, 3)} s here`;
  const nmax = c.limits.n_max[c.grid.kind];
  const nmin = (c.limits.n_min_kind && c.limits.n_min_kind[c.grid.kind]) || c.limits.n_min;
  const icosahedral = c.grid.kind === 'icosahedral';
  el.optimizeBox.hidden = !icosahedral;
  if (icosahedral) {
    el.optimize.value = c.grid.optimize;
    el.nLabel.textContent = 'Refinement level n';
    el.gridHint.textContent = `${c.grid.cells} cells (10·4ⁿ+2) · levels ${nmin} to ${nmax}`;
  } else if (c.grid.kind === 'cubed') {
    el.nLabel.textContent = 'Cells per cube edge n';
    el.gridHint.textContent = `${c.grid.cells} cells (6n²) · n from ${nmin} to ${nmax}`;
  } else {
    el.nLabel.textContent = 'Cells per side n';
    el.gridHint.textContent = `${c.grid.cells} cells · n from ${nmin} to ${nmax}${c.grid.kind === 'quad' ? '' : ', even'}`;
  }
  linear.onConfig(c);
  structure.onConfig(c);
  el.canvas.dataset.grid = `${c.grid.kind} ${c.grid.n}`;
  el.canvas.dataset.optimize = icosahedral ? c.grid.optimize : '';
  schedule('field');
}

// showScenario selects the run's scenario in the menu. One opened from a
// file is not a built-in: it is shown as a disabled entry of its own.
function showScenario(name) {
  let own = el.scenario.querySelector('option[data-file]');
  const builtIn = [...el.scenario.options].some((o) => o !== own && o.value === name);
  if (builtIn) {
    if (own) own.remove();
  } else {
    if (!own) {
      own = document.createElement('option');
      own.dataset.file = 'true';
      own.disabled = true;
      el.scenario.prepend(own);
    }
    own.value = name;
    own.textContent = `${name} (from a file)`;
  }
  el.scenario.value = name;
}

function showStatus() {
  const s = st.status;
  setRunState(s.state);
  el.time.textContent = fmtClock(s.t);
  el.time.dataset.seconds = String(s.t);
  el.steps.textContent = String(s.steps);
  const b = s.blowup;
  field.view.highlight = b ? { x: b.x, y: b.y } : null;
  if (b) {
    const value = b.value === null ? 'not a finite number' : fmtNum(b.value, 4);
    const what = b.cell >= 0 ? `depth ${value} m in cell ${b.cell}`
      : b.edge >= 0 ? `normal velocity ${value} m s⁻¹ on edge ${b.edge}` : b.message;
    el.blowup.hidden = false;
    el.blowup.textContent = `Blew up at step ${b.step}, t = ${fmtClock(b.t)}, Δt = ${fmtNum(b.dt, 4)} s: ${what} (ringed on the field). `
      + 'The run kept its last good state: pick a recent state below, set a smaller Δt and press Play.';
  } else {
    el.blowup.hidden = true;
  }
  el.scrub.disabled = watching() || s.state === 'running' || st.ring.entries.length === 0;
  scrubLabel();
  schedule('field');
  showRates();
}

function showRing() {
  const r = st.ring;
  const n = r.entries.length;
  el.scrub.max = String(Math.max(0, n - 1));
  el.scrub.value = String(r.cursor >= 0 ? r.cursor : Math.max(0, n - 1));
  el.scrub.disabled = watching() || !st.status || st.status.state === 'running' || n === 0;
  scrubLabel();
}

function scrubLabel() {
  const r = st.ring;
  if (st.status && st.status.state === 'running') {
    el.scrubLabel.textContent = 'kept while running; pause to go back';
    return;
  }
  const e = r.entries[Number(el.scrub.value)];
  el.scrubLabel.textContent = e
    ? `step ${e.steps}, t = ${fmtClock(e.t)} (${r.entries.length} kept)`
    : 'none yet';
}

function togglePlay() {
  send(st.status && st.status.state === 'running' ? 'pause' : 'play');
}

function setGrid() {
  const c = st.config;
  if (c && el.grid.value !== c.grid.kind && String(c.grid.n) === el.n.value.trim()) {
    el.n.value = String(similarN(c.grid.kind, el.grid.value, c.grid.n));
  }
  const g = { kind: el.grid.value, n: numberOrText(el.n.value) };
  if (g.kind === 'icosahedral') g.optimize = el.optimize.value;
  send('set-grid', g);
}

// similarN is the resolution of family `to` whose cell count is nearest
// that of family `from` at n, on a logarithmic scale: icosahedral level L
// has 10·4ᴸ+2 cells, the cubed sphere 6n²; the planar families share n.
function similarN(from, to, n) {
  const cells = (k, m) => (k === 'icosahedral' ? 10 * 4 ** m + 2 : k === 'cubed' ? 6 * m * m : m * m);
  if (from === to || (from !== 'icosahedral' && from !== 'cubed') || (to !== 'icosahedral' && to !== 'cubed')) return n;
  const want = Math.log(cells(from, n));
  let best = 1;
  for (let m = 1; m <= 1024; m++) {
    if (Math.abs(Math.log(cells(to, m)) - want) < Math.abs(Math.log(cells(to, best)) - want)) best = m;
    if (to === 'icosahedral' && m >= 12) break;
  }
  return best;
}

function nextField() {
  if (!st.fields.length || !st.config) return;
  const i = st.fields.findIndex((f) => f.name === st.config.field);
  send('set-field', st.fields[(i + 1) % st.fields.length].name);
}

// useGeometry draws on geometry g from now on (plane or sphere).
function useGeometry(g) {
  field.setGeometry(g);
  el.projectionBox.hidden = !g.sphere;
  el.canvas.dataset.projection = field.drawing;
}

function setProjection(p) {
  sphereView.setProjection(p);
  el.projection.value = sphereView.choice;
  if (field.view === sphereView) el.canvas.dataset.projection = sphereView.choice;
  try { localStorage.setItem('gyrebench.projection', sphereView.choice); } catch { /* private mode */ }
  schedule('field');
}

function setLarge(on) {
  const scale = setLargeType(el.large, on);
  plot.scale = scale;
  linear.setScale(scale);
  try { localStorage.setItem('gyrebench.large', on ? '1' : '0'); } catch { /* private mode */ }
  requestAnimationFrame(() => { schedule('field'); schedule('plot'); });
}

function toggleHelp(show) {
  el.overlay.hidden = show === undefined ? !el.overlay.hidden : !show;
}

el.play.addEventListener('click', togglePlay);
el.step.addEventListener('click', () => send('step'));
el.reset.addEventListener('click', () => send('reset'));
el.load.addEventListener('click', () => send('load', el.scenario.value));
el.scheme.addEventListener('change', () => send('set-scheme', el.scheme.value));
el.integrator.addEventListener('change', () => send('set-integrator', el.integrator.value));
el.field.addEventListener('change', () => send('set-field', el.field.value));
el.grid.addEventListener('change', setGrid);
el.n.addEventListener('change', setGrid);
el.optimize.addEventListener('change', setGrid);
el.dt.addEventListener('change', () => send('set-dt', numberOrText(el.dt.value)));
el.dt.addEventListener('input', () => linear.onTyped(el.dt.value));
el.viscosity.addEventListener('change', () => send('set-dissipation', { viscosity: numberOrText(el.viscosity.value) }));
el.hyperviscosity.addEventListener('change', () => send('set-dissipation', { hyperviscosity: numberOrText(el.hyperviscosity.value) }));
el.divDamping.addEventListener('change', () => send('set-dissipation', { divergence_damping: numberOrText(el.divDamping.value) }));
el.dt.addEventListener('blur', () => linear.onTyped(''));
el.projection.addEventListener('change', () => setProjection(el.projection.value));
commitOnEnter([el.dt, el.n, el.viscosity, el.hyperviscosity, el.divDamping]);
el.scrub.addEventListener('input', scrubLabel);
el.scrub.addEventListener('change', () => send('scrub', Number(el.scrub.value)));
el.log.addEventListener('change', () => { plot.log = el.log.checked; schedule('plot'); });
el.large.addEventListener('click', () => setLarge(!isLarge()));
el.help.addEventListener('click', () => toggleHelp());
el.overlay.addEventListener('click', (e) => { if (e.target === el.overlay) toggleHelp(false); });
field.onchange = () => schedule('field');

const zoom = (k) => { field.view.zoomBy(k); schedule('field'); };
onKeys({
  ' ': togglePlay,
  s: () => send('step'),
  r: () => send('reset'),
  f: nextField,
  l: () => setLarge(!isLarge()),
  g: () => { if (field.view === sphereView) setProjection(PROJECTIONS[(PROJECTIONS.indexOf(sphereView.choice) + 1) % PROJECTIONS.length]); },
  '?': () => toggleHelp(),
  '+': () => zoom(1.25),
  '=': () => zoom(1.25),
  '-': () => zoom(0.8),
  _: () => zoom(0.8),
  0: () => { field.view.fit(); schedule('field'); },
}, () => toggleHelp(false));

new ResizeObserver(() => { schedule('field'); schedule('plot'); }).observe(el.canvas.parentElement);
new ResizeObserver(() => schedule('plot')).observe(el.plot);
new ResizeObserver(() => schedule('plot')).observe(el.budget);

try { if (localStorage.getItem('gyrebench.large') === '1') setLarge(true); } catch { /* private mode */ }
try { const p = localStorage.getItem('gyrebench.projection'); if (p) setProjection(p); } catch { /* private mode */ }
plot.log = el.log.checked;
conn.connect();
