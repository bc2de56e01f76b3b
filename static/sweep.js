// The sweep page (server/sweep_routes.go). Follows the sweep's progress
// stream (server-sent events, one JSON snapshot per change), keeps the
// counts, the meter and the table of runs current, and when the sweep has
// ended fetches the results part of the page (plots, fitted orders) once.
// The page is complete without this script; it only saves reloading.

const q = (role, within = document) => within.querySelector(`[data-role="${role}"]`);

const root = document.querySelector('.sweep-page[data-sweep]');
const id = root.dataset.sweep;
const el = {
  progress: q('sweep-progress'), state: q('sweep-state'), done: q('sweep-done'), total: q('sweep-total'),
  elapsed: q('sweep-elapsed'), blown: q('sweep-blown'), blownCount: q('sweep-blown-count'),
  meter: q('sweep-meter'), message: q('sweep-message'), stop: q('sweep-stop'), runs: q('sweep-runs'),
  results: q('sweep-results'),
};
// A viewer of a shared workbench (server/roles.go) may not stop the sweep.
const watching = 'watching' in root.dataset;
const ENDED = new Set(['finished', 'stopped', 'failed']);
const RUN_FILES = ['summary.json', 'series.csv', 'final.nc', 'recipe.toml'];

// fmtWall writes a wall-clock duration as the server does (fmtWallTime).
function fmtWall(s) {
  if (s < 10) return `${s.toFixed(2)} s`;
  if (s < 60) return `${s.toFixed(1)} s`;
  if (s < 3600) return `${Math.floor(s / 60)} min ${String(Math.floor(s % 60)).padStart(2, '0')} s`;
  return `${Math.floor(s / 3600)} h ${String(Math.floor((s % 3600) / 60)).padStart(2, '0')} min`;
}

// The elapsed time ticks here between messages; each message resets it.
let clock = { base: Number(el.progress.dataset.elapsed) || 0, at: performance.now(), running: !ENDED.has(root.dataset.state) };
function tick() {
  if (!clock.running) return;
  el.elapsed.textContent = fmtWall(clock.base + (performance.now() - clock.at) / 1000);
}
const ticker = setInterval(tick, 1000);

function setState(node, state) {
  node.textContent = state;
  node.dataset.state = state;
}

function updateRun(tr, r) {
  tr.dataset.state = r.state;
  const cell = (c) => tr.querySelector(`[data-col="${c}"]`);
  const st = cell('state');
  setState(st, r.state);
  st.title = r.message || '';
  const ended = r.state !== 'waiting' && r.state !== 'running' && r.state !== 'not run';
  cell('steps').textContent = ended ? String(r.steps) : '';
  cell('wall').textContent = ended ? fmtWall(r.wall_s) : '';
  cell('l2').textContent = ended && r.l2_h != null ? r.l2_h.toExponential(3) : '';
  const files = cell('files');
  if (ended && files.childElementCount === 0) {
    RUN_FILES.forEach((f, i) => {
      if (i > 0) files.append(' ');
      const a = document.createElement('a');
      a.href = `/sweep/${id}/run/${encodeURIComponent(r.dir)}/${f}`;
      a.download = '';
      a.textContent = f;
      files.append(a);
    });
  }
}

let resultsAsked = false;
async function showResults() {
  if (resultsAsked) return;
  resultsAsked = true;
  try {
    const resp = await fetch(`/sweep/${id}/results`, { cache: 'no-store' });
    if (!resp.ok) throw new Error(`${resp.status} ${await resp.text()}`);
    el.results.innerHTML = await resp.text();
  } catch (err) {
    el.results.textContent = `The results could not be loaded (${err.message}); reload the page.`;
  }
}

function update(info) {
  root.dataset.state = info.state;
  setState(el.state, info.state);
  Object.assign(el.progress.dataset, { state: info.state, done: info.done, total: info.total, elapsed: info.elapsed_s });
  el.done.textContent = String(info.done);
  el.total.textContent = String(info.total);
  el.meter.max = info.total;
  el.meter.value = info.done;
  el.meter.textContent = `${Math.floor((100 * info.done) / Math.max(info.total, 1))}%`;
  el.blown.hidden = info.blew_up === 0;
  el.blownCount.textContent = String(info.blew_up);
  el.message.hidden = !info.message;
  el.message.textContent = info.message || '';
  el.message.dataset.state = info.state;
  clock = { base: info.elapsed_s, at: performance.now(), running: !ENDED.has(info.state) };
  el.elapsed.textContent = fmtWall(info.elapsed_s);
  el.stop.disabled = watching || info.state !== 'running';
  for (const r of info.runs) {
    const tr = el.runs.querySelector(`tr[data-run="${r.index}"]`);
    if (tr) updateRun(tr, r);
  }
  if (ENDED.has(info.state)) {
    clearInterval(ticker);
    showResults();
  }
}

if (!ENDED.has(root.dataset.state)) {
  const es = new EventSource(`/sweep/${id}/events`);
  es.addEventListener('progress', (ev) => {
    const info = JSON.parse(ev.data);
    update(info);
    if (ENDED.has(info.state)) es.close(); // else EventSource would reconnect
  });
  es.addEventListener('open', () => { el.progress.dataset.link = 'open'; });
  es.addEventListener('error', () => {
    // EventSource reconnects by itself; say so meanwhile.
    el.progress.dataset.link = es.readyState === EventSource.CLOSED ? 'closed' : 'reconnecting';
  });
}

// Stop without leaving the page; the stream reports "stopping", then
// "stopped". Without this script the form posts and the page reloads.
el.stop.form.addEventListener('submit', async (ev) => {
  ev.preventDefault();
  el.stop.disabled = true;
  try {
    const resp = await fetch(el.stop.form.action, { method: 'POST', redirect: 'manual' });
    if (resp.type !== 'opaqueredirect' && !resp.ok) throw new Error(await resp.text());
  } catch (err) {
    el.message.hidden = false;
    el.message.textContent = `Stop was refused: ${err.message}`;
    el.stop.disabled = watching;
  }
});
