// The linear panel: the predicted largest stable Δt beside the Δt control,
// with the live gravity-wave Courant number, a warning when Δt (typed or
// set) is past the prediction, and the dispersion diagram. The numbers come
// from the server's messages "stability", "dispersion" and "warning"
// (server/linear_panel.go); nothing is computed here but ratios.

import { drawDispersion, fillLegend } from './dispersion.js';
import { fmtNum } from './format.js';

// GUIDE_SLACK: the flow-corrected guide is shown apart from the
// prediction only when it is lower by more than this (as on the server).
const GUIDE_SLACK = 0.05;

export class LinearPanel {
  // el: dtStable, dtWarning, plot, caption, legend (elements).
  constructor(el) {
    this.el = el;
    this.stab = null;
    this.disp = null;
    this.config = null;
    this.courant = null;
    this.typed = null; // a number being typed in the Δt field, not yet sent
    this.serverWarning = null; // the server's words for the current Δt
    this.scale = 1;
    new ResizeObserver(() => this.drawPlot()).observe(el.plot);
  }

  onConfig(c) {
    const changed = !this.config || this.config.dt !== c.dt || this.config.integrator !== c.integrator;
    this.config = c;
    if (changed) this.serverWarning = null;
    this.typed = null;
    this.show();
  }

  onStability(m) {
    this.stab = m;
    if (Number.isFinite(m.courant)) this.courant = m.courant;
    this.show();
    this.drawPlot();
  }

  onDispersion(m) {
    this.disp = m;
    this.drawPlot();
    this.showCaption();
  }

  onWarning(m) {
    this.serverWarning = m.message;
    this.show();
  }

  onPoint(p) {
    if (Number.isFinite(p.courant)) {
      this.courant = p.courant;
      this.showStable();
    }
  }

  // onTyped follows the Δt field as the user types, before it is sent.
  onTyped(text) {
    const t = text.trim();
    const x = Number(t);
    this.typed = t !== '' && Number.isFinite(x) && x > 0 ? x : null;
    this.show();
  }

  setScale(s) {
    this.scale = s;
    this.drawPlot();
  }

  ready() {
    const s = this.stab, c = this.config;
    return s && s.state === 'ready' && c && s.integrator === c.integrator && s.grid && s.scheme === c.scheme;
  }

  show() {
    this.showStable();
    this.showWarning();
  }

  showStable() {
    const e = this.el.dtStable, s = this.stab, c = this.config;
    if (!s || !c) {
      e.textContent = '';
      return;
    }
    e.dataset.state = s.state;
    if (s.state !== 'ready') {
      e.textContent = s.state === 'failed' ? s.message : 'stable Δt: computing from the linearised scheme…';
      delete e.dataset.seconds;
      return;
    }
    e.dataset.seconds = String(s.dt_stable);
    e.dataset.guide = String(s.dt_guide);
    if (!(s.dt_stable > 0)) {
      e.textContent = `${s.integrator}: no Δt is stable for oscillations (linear analysis)`;
      return;
    }
    let text = `predicted stable for Δt ≤ ${fmtNum(s.dt_stable, 4)} s with ${s.integrator}`;
    if (s.guide_scale < 1 - GUIDE_SLACK) text += `; ≈ ${fmtNum(s.dt_guide, 4)} s for this flow's depth and speed`;
    const dt = c.dt;
    if (this.courant !== null && dt > 0) {
      text += ` · Courant ${fmtNum(this.courant, 2)} now, ${fmtNum((this.courant * s.dt_guide) / dt, 2)} at the limit`;
    }
    e.textContent = text;
    e.title = `Linearised about rest at depth ${fmtNum(s.depth, 4)} m on ${s.grid} with ${s.scheme}: largest |ω| = ${fmtNum(s.max_frequency, 4)} s⁻¹; `
      + Object.entries(s.limits).map(([k, v]) => `${k} ${v > 0 ? `${fmtNum(v, 4)} s` : 'none'}`).join(', ');
  }

  showWarning() {
    const e = this.el.dtWarning, s = this.stab, c = this.config;
    let text = '';
    if (c) {
      const dt = this.typed !== null ? this.typed : c.dt;
      const typed = this.typed !== null && this.typed !== c.dt;
      if (typed && dt > c.limits.dt_max) {
        text = `Δt = ${fmtNum(dt, 4)} s will be refused: the most allowed here is ${fmtNum(c.limits.dt_max, 4)} s.`;
      } else if (this.ready()) {
        if (!(s.dt_stable > 0)) {
          text = `${s.integrator} amplifies every oscillation whatever Δt: expect the run to grow and blow up.`;
        } else if (dt > s.dt_guide) {
          text = `Δt = ${fmtNum(dt, 4)} s ${typed ? 'would be' : 'is'} past the predicted stable limit, ${fmtNum(s.dt_guide, 4)} s for ${s.integrator}: expect a blow-up. `
            + `Still allowed up to ${fmtNum(c.limits.dt_max, 4)} s.`;
        }
      }
      if (!typed && text && this.serverWarning) text = this.serverWarning;
    }
    e.hidden = text === '';
    e.textContent = text;
  }

  drawPlot() {
    const rho = this.stab && this.stab.state === 'ready' ? this.stab.max_frequency : 0;
    drawDispersion(this.el.plot, this.disp, rho, this.scale);
  }

  showCaption() {
    const d = this.disp, e = this.el.caption;
    if (!d) return;
    e.dataset.state = d.state;
    if (d.state !== 'ready') {
      e.textContent = d.message;
      this.el.legend.replaceChildren();
      return;
    }
    let text = `Normal modes of ${d.grid}`;
    if (d.copy) {
      text += d.sphere
        ? `, a coarse copy of the run's ${d.of} (the dense analysis needs a small grid)`
        : `, a small copy of the run's ${d.of} with the same cell size (the dense analysis needs a small grid)`;
    } else {
      text += ', the run\'s own grid';
    }
    text += `: ${d.unknowns} unknowns, ${fmtNum(d.seconds, 2)} s. `;
    text += d.growing > 0 ? `${d.growing} modes grow. ` : 'No mode grows. ';
    text += d.sphere ? 'No wavenumber on the sphere: modes in order of frequency. ' : 'Curve: ω² = f² + gH|k|². ';
    text += 'Dashed: the run\'s own fastest mode.';
    e.textContent = text;
    fillLegend(this.el.legend, d);
  }
}
