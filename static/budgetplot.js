// The budget panel: dE/dt and dZ/dt of each interval between two points of
// the series, split by the server into the scheme's own spatial term, the
// explicit dissipation and the time-stepping residual (what is left of
// the measured change). Drawn with SeriesPlot's panels and markers.

import { SeriesPlot } from './seriesplot.js';

export const BUDGET_PANELS = [
  {
    title: 'dE/dt (m⁵ s⁻³)',
    series: [
      { key: 'energy_rate_scheme', label: 'scheme', colour: '#6cb6ff' },
      { key: 'energy_rate_dissipation', label: 'dissipation', colour: '#ff9ecf' },
      { key: 'energy_rate_residual', label: 'time stepping', colour: '#e8e3a1' },
    ],
    weight: 1,
  },
  {
    title: 'dZ/dt, potential enstrophy (m s⁻³)',
    series: [
      { key: 'enstrophy_rate_scheme', label: 'scheme', colour: '#6cb6ff' },
      { key: 'enstrophy_rate_dissipation', label: 'dissipation', colour: '#ff9ecf' },
      { key: 'enstrophy_rate_residual', label: 'time stepping', colour: '#e8e3a1' },
    ],
    weight: 1,
  },
];

// BudgetPlot also writes, for tests and for people who read the page's
// attributes, the series it holds and the latest dissipation rates.
export class BudgetPlot extends SeriesPlot {
  constructor(canvas) { super(canvas, BUDGET_PANELS); }

  render() {
    super.render();
    const last = this.points[this.points.length - 1];
    this.canvas.dataset.series = BUDGET_PANELS.flatMap((p) => p.series.map((s) => s.key)).join(' ');
    this.canvas.dataset.points = String(this.points.length);
    const shown = (v) => (v === null || v === undefined ? '' : String(v));
    this.canvas.dataset.energyRateDissipation = last ? shown(last.energy_rate_dissipation) : '';
    this.canvas.dataset.enstrophyRateDissipation = last ? shown(last.enstrophy_rate_dissipation) : '';
  }
}
