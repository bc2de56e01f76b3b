// The structure panel: the Hodge-star choice and the structure report of
// the run's current grid and scheme (server/structure_panel.go, which
// carries package sim/structure's report). Nothing is computed here: the
// panel writes the server's numbers and booleans for people.

import { fmtNum } from './format.js';

// VERDICTS are the report's booleans, in plain words.
const VERDICTS = [
  ['energy_conserving', 'energy conserving'],
  ['enstrophy_conserving', 'potential enstrophy conserving'],
  ['steady_geostrophic_modes', 'steady geostrophic modes'],
  ['consistent', 'consistent'],
];

// MEASURES are the numbers behind them: [label, value from the report,
// what it must be for the verdict].
const MEASURES = [
  ['incidence defect, max |D₂D₁|', (r) => String(r.incidence_defect), 'integer, 0'],
  ['H symmetry, max |H − Hᵀ| / max |H|', (r) => fmtNum(r.hodge_symmetry_defect, 2), 'round-off'],
  ['H eigenvalues, min … max', (r) => `${fmtNum(r.hodge_min_eigenvalue, 4)} … ${fmtNum(r.hodge_max_eigenvalue, 4)}`, '> 0'],
  ['H consistency error, max (l₂)', (r) => `${fmtNum(r.hodge_consistency_error, 3)} (${fmtNum(r.hodge_consistency_error_l2, 3)})`, (r) => r.hodge_consistency_flow],
  ['Coriolis antisymmetry, max |W + Wᵀ| / max |W|', (r) => fmtNum(r.coriolis_antisymmetry_defect, 2), 'round-off'],
  ['geostrophic compatibility, D̄₂W − RD₂', (r) => fmtNum(r.geostrophic_compatibility_defect, 2), 'round-off'],
  ['geostrophic state, relative tendency', (r) => fmtNum(r.geostrophic_residual, 2), 'round-off'],
  ['dM/dt, relative', (r) => fmtNum(r.mass_rate_relative, 2), 'round-off'],
  ['dE/dt, relative', (r) => fmtNum(r.energy_rate_relative, 2), 'round-off'],
  ['dZ/dt, relative', (r) => fmtNum(r.enstrophy_rate_relative, 2), 'round-off'],
  ['dual non-orthogonality', (r) => `${fmtNum(r.dual_non_orthogonality * 180 / Math.PI, 3)}°`, 'H diagonal when 0'],
];

export class StructurePanel {
  // el: panel, caption, verdicts, measures, hodge (the select), hint;
  // send(cmd, value) sends a command to the run.
  constructor(el, send) {
    this.el = el;
    this.send = send;
    this.config = null;
    el.hodge.addEventListener('change', () => send('set-hodge', el.hodge.value));
  }

  onConfig(c) {
    this.config = c;
    this.el.hodge.value = c.hodge || 'consistent';
    this.el.hint.textContent = c.grid.orthogonal
      ? 'This grid’s dual is orthogonal: both choices are H = diag(l/d), the same operator.'
      : 'This grid’s dual is not orthogonal: the diagonal H still conserves energy but is inconsistent; the consistent H converges.';
    this.el.hint.dataset.orthogonal = String(!!c.grid.orthogonal);
  }

  onStructure(m) {
    const { panel, caption, verdicts, measures } = this.el;
    panel.dataset.state = m.state;
    panel.dataset.grid = m.grid;
    panel.dataset.scheme = m.scheme;
    panel.dataset.hodge = m.hodge;
    verdicts.replaceChildren();
    measures.replaceChildren();
    const r = m.report;
    if (m.state !== 'ready' || !r) {
      caption.textContent = m.message;
      for (const [key] of VERDICTS) delete panel.dataset[camel(key)];
      return;
    }
    caption.textContent = `${m.grid}, ${m.scheme}, Hodge star ${m.hodge} (${r.hodge_matrix} matrix) · ${r.cells} cells · measured in ${fmtNum(m.seconds, 2)} s`;
    for (const [key, words] of VERDICTS) {
      const yes = !!r[key];
      const li = document.createElement('li');
      li.dataset.key = key;
      li.dataset.value = yes ? 'yes' : 'no';
      li.className = yes ? 'yes' : 'no';
      li.textContent = `${words}: ${yes ? 'yes' : 'no'}`;
      verdicts.append(li);
      panel.dataset[camel(key)] = yes ? 'yes' : 'no';
    }
    for (const [label, value, want] of MEASURES) {
      const tr = document.createElement('tr');
      const th = document.createElement('th');
      th.textContent = label;
      const td = document.createElement('td');
      td.textContent = value(r);
      tr.title = `wanted: ${typeof want === 'function' ? want(r) : want}`;
      tr.append(th, td);
      measures.append(tr);
    }
  }
}

function camel(key) {
  return key.replace(/_([a-z])/g, (_, c) => c.toUpperCase());
}
