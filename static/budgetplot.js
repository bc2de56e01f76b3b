// The budget panel: dE/dt and dZ/dt of each interval between two points of
// the series, split by the server into the scheme's own spatial term, the
// explicit dissipation and the time-stepping residual (what is left of
// the measured change). Drawn with SeriesPlot's panels and markers.

import { SeriesPlot } from './seriesplot.js';
import { BUDGET } from './theme.js';

// budgetPanel is the panel of quantity q's rate (energy or enstrophy),
// split by cause.
const budgetPanel = (title, q) => ({
  title,
  series: ['scheme', 'dissipation', 'residual'].map((part) => ({
    key: `${q}_rate_${part}`, label: part === 'residual' ? 'time stepping' : part, colour: BUDGET[part],
  })),
  weight: 1,
});

export const BUDGET_PANELS = [
  budgetPanel('dE/dt (m⁵ s⁻³)', 'energy'),
  budgetPanel('dZ/dt, potential enstrophy (m s⁻³)', 'enstrophy'),
];

// BudgetPlot also writes, for tests and for people who read the page's
// attributes, the series it holds and the latest dissipation rates.
export class BudgetPlot extends SeriesPlot {
  constructor(canvas) { super(canvas, { panels: BUDGET_PANELS }); }

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
