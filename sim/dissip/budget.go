package dissip

import (
	"math"

	"gyrebench/sim/ops"
)

// Rates are the instantaneous rates of change of total energy E and
// potential enstrophy Z (package diag's definitions) carried by one
// tendency split in two: the scheme's own spatial term and the explicit
// dissipation,
//
//	dE/dt = ⟨δE/δx, T_scheme⟩ + ⟨δE/δu, D⟩,
//	δE/δh_i = g(h_i + b_i) + K_i,   δE/δu_e = l_e d_e h_e u_e,
//	δZ/δh_i = −Σ_v K_{i,v} q_v²/2,  δZ/δu_e = d_e (q_v1 − q_v0),
//
// with K_i = (1/A_i) Σ_e (l_e d_e/4) u_e², h_e the mean of the two cells,
// K_{i,v} the kite areas and q_v = (ζ_v + f_v)/h_v; ⟨a, b⟩ is the plain sum
// over cells and edges (the variational derivatives carry the areas).
// For an energy-conserving scheme the scheme term of dE/dt is round-off
// (Ringler, Thuburn, Klemp & Skamarock 2010, J. Comput. Phys. 229, §4).
type Rates struct {
	EnergyScheme, EnergyDissipation       float64 // m⁵ s⁻³
	EnstrophyScheme, EnstrophyDissipation float64 // m s⁻³
	// EnergyScale and EnstrophyScale are Σ|terms| of the scheme sums, the
	// size against which round-off is judged.
	EnergyScale, EnstrophyScale float64
}

// Budget evaluates Rates on one grid. It holds scratch and serves one
// goroutine at a time; sums run serially in index order.
type Budget struct {
	g    ops.Grid
	grav float64
	f, b []float64
	q    []float64 // vertices
	hv   []float64 // vertices
}

// NewBudget returns a budget for gravity grav, Coriolis parameter f at
// vertices and bottom height at cells (nil when flat).
func NewBudget(g ops.Grid, grav float64, f, bottom []float64) *Budget {
	return &Budget{g: g, grav: grav, f: f, b: bottom, q: make([]float64, g.NumVertices), hv: make([]float64, g.NumVertices)}
}

// Rates returns the rates of the state x = [h | u] under the scheme
// tendency tend = [∂h/∂t | ∂u/∂t] and the dissipation diss (edges only;
// nil for none).
func (b *Budget) Rates(x, tend, diss []float64) Rates {
	g := b.g
	nc := g.NumCells
	h, u := x[:nc], x[nc:]
	th, tu := tend[:nc], tend[nc:]
	g.Vorticity(b.q, b.hv, u, h, 0, g.NumVertices)
	for v := range b.q {
		b.q[v] = (b.q[v] + b.f[v]) / b.hv[v]
	}
	var r Rates
	add := func(sum, scale *float64, t float64) {
		*sum += t
		*scale += math.Abs(t)
	}
	for i := 0; i < nc; i++ {
		var ke, dz float64
		for k := g.CellEdgeStart[i]; k < g.CellEdgeStart[i+1]; k++ {
			e := g.CellEdges[k]
			ke += g.EdgeLength[e] * g.DualLength[e] * u[e] * u[e]
			qv := b.q[g.CellVertices[k]]
			dz -= 0.5 * g.CellKiteArea[k] * qv * qv
		}
		de := b.grav*h[i] + 0.25*ke/g.CellArea[i]
		if b.b != nil {
			de += b.grav * b.b[i]
		}
		add(&r.EnergyScheme, &r.EnergyScale, g.CellArea[i]*de*th[i])
		add(&r.EnstrophyScheme, &r.EnstrophyScale, dz*th[i])
	}
	for e := 0; e < g.NumEdges; e++ {
		c0, c1 := g.EdgeCells[2*e], g.EdgeCells[2*e+1]
		de := g.EdgeLength[e] * g.DualLength[e] * 0.5 * (h[c0] + h[c1]) * u[e]
		dz := g.DualLength[e] * (b.q[g.EdgeVertices[2*e+1]] - b.q[g.EdgeVertices[2*e]])
		add(&r.EnergyScheme, &r.EnergyScale, de*tu[e])
		add(&r.EnstrophyScheme, &r.EnstrophyScale, dz*tu[e])
		if diss != nil {
			r.EnergyDissipation += de * diss[e]
			r.EnstrophyDissipation += dz * diss[e]
		}
	}
	return r
}

// Row is one output time's budget: interval means over the output
// interval that ends at this time (see Ledger).
type Row struct {
	EnergyScheme, EnergyDissipation, EnergyResidual          float64
	EnstrophyScheme, EnstrophyDissipation, EnstrophyResidual float64
}

// Ledger turns instantaneous rates, sampled along a run, into the budget
// of each output interval [t₀, t₁]:
//
//	scheme      = (1/(t₁ − t₀)) ∫ a dt,   dissipation = (1/(t₁ − t₀)) ∫ b dt,
//	residual    = (E(t₁) − E(t₀))/(t₁ − t₀) − scheme − dissipation,
//
// and likewise for Z, with a and b the scheme's and the dissipation's
// instantaneous rates (Rates) and the integrals taken by the trapezoid rule
// over the samples: the two output times and any Sample in between. The
// residual is what the time stepper adds or removes beyond the
// semi-discrete rates, plus the trapezoid rule's own error, of order
// h²·(t₁ − t₀)·max|d²b/dt²|/12 for samples h apart (sample densely where the
// rates change fast, as after turning dissipation on); coefficient or
// scheme changes between samples are judged at the samples only. The
// first output time has no interval: its row holds the instantaneous
// rates and a zero residual. The totals are the time integrals, so that
// E(t_n) − E(t_0) = ∫scheme + ∫dissipation + ∫residual exactly.
type Ledger struct {
	have       bool
	t, e, z    float64 // the interval's start: time, energy, enstrophy
	ts         float64 // the latest sample's time
	last       Rates   // and its rates
	acc        Row     // ∫ a dt and ∫ b dt since t (scheme and dissipation fields only)
	Integrated Row     // time integrals: m⁵ s⁻² for energy, m s⁻² for enstrophy
}

// Sample adds the rates r at time t inside the current interval. A sample
// before any Record, or not after the latest one, is ignored.
func (l *Ledger) Sample(t float64, r Rates) {
	if !l.have || t <= l.ts {
		return
	}
	h := t - l.ts
	l.acc.EnergyScheme += 0.5 * h * (l.last.EnergyScheme + r.EnergyScheme)
	l.acc.EnergyDissipation += 0.5 * h * (l.last.EnergyDissipation + r.EnergyDissipation)
	l.acc.EnstrophyScheme += 0.5 * h * (l.last.EnstrophyScheme + r.EnstrophyScheme)
	l.acc.EnstrophyDissipation += 0.5 * h * (l.last.EnstrophyDissipation + r.EnstrophyDissipation)
	l.ts, l.last = t, r
}

// Record closes the interval at the output time t with energy e,
// potential enstrophy z and the instantaneous rates r, returns its row
// and starts the next interval. A time not after the interval's start
// (the first output, or a run set back) starts afresh.
func (l *Ledger) Record(t, e, z float64, r Rates) Row {
	if !l.have || t <= l.t {
		l.have, l.t, l.e, l.z, l.ts, l.last, l.acc = true, t, e, z, t, r, Row{}
		return Row{EnergyScheme: r.EnergyScheme, EnergyDissipation: r.EnergyDissipation,
			EnstrophyScheme: r.EnstrophyScheme, EnstrophyDissipation: r.EnstrophyDissipation}
	}
	l.Sample(t, r)
	dt := t - l.t
	a := l.acc
	row := Row{
		EnergyScheme: a.EnergyScheme / dt, EnergyDissipation: a.EnergyDissipation / dt,
		EnstrophyScheme: a.EnstrophyScheme / dt, EnstrophyDissipation: a.EnstrophyDissipation / dt,
	}
	row.EnergyResidual = (e-l.e)/dt - row.EnergyScheme - row.EnergyDissipation
	row.EnstrophyResidual = (z-l.z)/dt - row.EnstrophyScheme - row.EnstrophyDissipation
	in := &l.Integrated
	in.EnergyScheme += a.EnergyScheme
	in.EnergyDissipation += a.EnergyDissipation
	in.EnergyResidual += row.EnergyResidual * dt
	in.EnstrophyScheme += a.EnstrophyScheme
	in.EnstrophyDissipation += a.EnstrophyDissipation
	in.EnstrophyResidual += row.EnstrophyResidual * dt
	l.t, l.e, l.z, l.ts, l.last, l.acc = t, e, z, t, r, Row{}
	return row
}
