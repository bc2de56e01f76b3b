// The workbench's own palette for what the canvases draw (the style
// sheets hold the same values as CSS custom properties in style.css):
// a deep ink-blue ground tinted towards the project's teal, light text
// with a blue-grey second tone, coral for danger and amber for warnings.

export const THEME = {
  ground: '#0f1d24', // behind the field (also FIELD_GROUND below)
  plot: '#0e1a20', // inside the plots' axes
  panel: '#12212a', // around the plots
  text: '#e3eef0',
  muted: '#a4b8bf', // tick labels
  frame: '#6f8a94', // the colour bar's outline
  grid: 'rgba(147,169,177,0.22)',
  rule: '#2a4350', // zero lines and axes in the dispersion diagram
  label: 'rgb(14,26,32)', // a label's backing, opaque
  labelSoft: 'rgba(14,26,32,0.85)',
  veil: 'rgba(6,14,18,0.5)', // under on-canvas notes
  chrome: 'rgba(227,238,240,0.55)', // outlines drawn over the field
  chromeFaint: 'rgba(227,238,240,0.22)',
  chromeText: 'rgba(227,238,240,0.72)',
  alarm: '#ff5a47', // the ring round a blown-up cell
  ring: '#ffffff', // the ring round a picked cell
  fallback: '#d9e4e7',
};

// FIELD_GROUND is THEME.ground as an ImageData word (ABGR on
// little-endian machines).
export const FIELD_GROUND = 0xff241d0f;

// SERIES are the invariant plots' line colours, in our own order: teal,
// saffron, rose for mass, energy and potential enstrophy; violet and lime
// for the two Courant numbers; pale sand for the minimum depth.
export const SERIES = {
  mass: '#5fd4c4',
  energy: '#f2c14e',
  enstrophy: '#e58bb0',
  courant: '#a99bff',
  courantAdv: '#8fd16a',
  hMin: '#efe2b3',
};

// MARKERS colour the labelled lines of a change of scheme, integrator,
// Δt or grid, and of a rewind.
export const MARKERS = {
  scheme: '#c4b1ff', integrator: '#f6d36b', dt: '#7fd6ee', grid: '#ff9f80', rewind: '#a9b8bd',
  hodge: '#9be3c4', dissipation: '#ff9ecf',
};

// BUDGET colours the parts of the energy and enstrophy budgets: sky for
// the scheme's own term, pink for the dissipation, pale straw for what
// the time stepping leaves.
export const BUDGET = { scheme: '#6cb6ff', dissipation: '#ff9ecf', residual: '#e8e3a1' };

// SIDES colour run A and run B of a lockstep pair.
export const SIDES = ['#8fc8ff', '#ff9f80'];
