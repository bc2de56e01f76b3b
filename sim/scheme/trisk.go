package scheme

import (
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
)

// core holds what every scheme computes before the momentum tendency:
// edge thickness and mass flux, Bernoulli function, continuity tendency and
// potential vorticity on vertices and edges. Its phases run on the pool as
// method values built once, so a tendency allocates nothing.
type core struct {
	g    ops.Grid
	phys Physics
	pool *par.Pool

	nc, ne, nv int
	flux       []float64 // edges: volume flux l_e h_e u_e
	phi        []float64 // cells: K + g(h + b)
	q          []float64 // vertices: PV
	qe         []float64 // edges: PV brought to the edge
	qflux      []float64 // edges: q_e × flux
	lu         []float64 // edges: l_e u_e, only when a scheme needs it (apvm)
	perp       *ops.TRiSK
	ga, gb, gu []float64 // cell-slot sums of flux, qflux and lu (ops.TRiSK)

	x, dst []float64 // arguments of the tendency in progress

	phaseFlux, phaseCells, phaseVertices, phaseEdgePV, phaseSums, phaseMomentum func(lo, hi int)
	edgePV                                                                      func(lo, hi int) // hook for apvm
}

func newCore(g ops.Grid, phys Physics, pool *par.Pool) core {
	c := core{
		g: g, phys: phys, pool: pool,
		nc: g.NCells, ne: g.NEdges, nv: g.NVertices,
		flux: make([]float64, g.NEdges),
		phi:  make([]float64, g.NCells),
		q:    make([]float64, g.NVertices),
		qe:   make([]float64, g.NEdges), qflux: make([]float64, g.NEdges),
		perp: ops.NewTRiSK(g),
	}
	c.ga = make([]float64, c.perp.Slots())
	return c
}

// bind builds the method values; call once the core is at its final address.
func (c *core) bind() {
	c.phaseFlux = c.doFlux
	c.phaseCells = c.doCells
	c.phaseVertices = c.doVertices
	c.phaseEdgePV = c.doEdgePV
	c.phaseSums = c.doSums
}

// doSums sets the TRiSK cell sums of the flux and, when the scheme uses
// it, of q × flux.
func (c *core) doSums(lo, hi int) {
	if c.gb != nil {
		c.perp.CellSums2(c.ga, c.gb, c.flux, c.qflux, lo, hi)
		return
	}
	c.perp.CellSums(c.ga, c.flux, lo, hi)
}

// run executes the shared phases and then the scheme's momentum phase.
func (c *core) run(dst, x []float64) {
	c.x, c.dst = x, dst
	c.pool.For(c.ne, c.phaseFlux)
	c.pool.For(c.nc, c.phaseCells)
	c.pool.For(c.nv, c.phaseVertices)
	c.pool.For(c.ne, c.phaseEdgePV)
	c.pool.For(c.nc, c.phaseSums)
	c.pool.For(c.ne, c.phaseMomentum)
	c.x, c.dst = nil, nil
}

func (c *core) doFlux(lo, hi int) {
	u := c.x[c.nc:]
	c.g.EdgeFlux(nil, c.flux[lo:hi], c.x[:c.nc], u, lo, hi)
	if c.lu != nil {
		for e := lo; e < hi; e++ {
			c.lu[e] = c.g.EdgeLength[e] * u[e]
		}
	}
}

// doCells sets ∂h/∂t = −div F and the Bernoulli function Φ = K + g(h + b).
func (c *core) doCells(lo, hi int) {
	h, u := c.x[:c.nc], c.x[c.nc:]
	dh := c.dst[:c.nc]
	c.g.DivKE(dh[lo:hi], c.phi[lo:hi], c.flux, u, lo, hi)
	grav, b := c.phys.G, c.phys.Bottom
	for i := lo; i < hi; i++ {
		dh[i] = -dh[i]
		p := h[i]
		if b != nil {
			p += b[i]
		}
		c.phi[i] += grav * p
	}
}

// doVertices sets q_v = (ζ_v + f_v)/h_v (Ringler et al. 2010, eq. 26).
func (c *core) doVertices(lo, hi int) {
	c.g.PotentialVorticity(c.q[lo:hi], c.phys.FVertex, c.x[c.nc:], c.x[:c.nc], lo, hi)
}

// doEdgePV sets q_e = (q_{v0} + q_{v1})/2 and q_e F_e.
func (c *core) doEdgePV(lo, hi int) {
	verts := c.g.VerticesOnEdge
	for e := lo; e < hi; e++ {
		c.qe[e] = 0.5 * (c.q[verts[2*e]] + c.q[verts[2*e+1]])
	}
	if c.edgePV != nil {
		c.edgePV(lo, hi)
	}
	for e := lo; e < hi; e++ {
		c.qflux[e] = c.qe[e] * c.flux[e]
	}
}

// trisk is the TRiSK family: energy-, enstrophy-conserving and APVM.
type trisk struct {
	core
	name    string
	invDual []float64 // 1/d_e

	apvm   float64 // c in q̂ = q − c Δt u·∇q
	dt     float64
	qcell  []float64 // apvm: PV at cells
	phaseQ func(lo, hi int)
}

func newTRiSK(name string, g ops.Grid, phys Physics, pool *par.Pool, opt Options) *trisk {
	s := &trisk{core: newCore(g, phys, pool), name: name}
	s.invDual = make([]float64, g.NEdges)
	for e := range s.invDual {
		s.invDual[e] = 1 / g.DualLength[e]
	}
	s.bind()
	switch name {
	case TRiSKEnstrophy:
		s.phaseMomentum = s.momentumEnstrophy
	case APVM:
		s.apvm = opt.APVMFactor
		s.qcell = make([]float64, g.NCells)
		s.lu = make([]float64, g.NEdges)
		s.gu = make([]float64, s.perp.Slots())
		s.gb = make([]float64, s.perp.Slots())
		s.phaseQ = s.cellPV
		s.edgePV = s.anticipate
		s.phaseMomentum = s.momentumEnergy
	default:
		s.gb = make([]float64, s.perp.Slots())
		s.phaseMomentum = s.momentumEnergy
	}
	return s
}

func (s *trisk) Name() string     { return s.name }
func (s *trisk) SetDt(dt float64) { s.dt = dt }
func (s *trisk) Tendency(dst, x []float64) {
	if s.qcell != nil {
		// APVM needs q on cells before the edge phase; fold it in here
		// rather than in the shared sequence.
		s.x, s.dst = x, dst
		s.pool.For(s.ne, s.phaseFlux)
		s.pool.For(s.nc, s.phaseCells)
		s.pool.For(s.nv, s.phaseVertices)
		s.pool.For(s.nc, s.phaseQ)
		s.pool.For(s.ne, s.phaseEdgePV)
		s.pool.For(s.nc, s.phaseSums)
		s.pool.For(s.ne, s.phaseMomentum)
		s.x, s.dst = nil, nil
		return
	}
	s.run(dst, x)
}

// momentumEnergy: ∂u_e/∂t = (1/d_e) Σ_{e'} W_{e,e'} F_{e'} (q_e + q_{e'})/2 − ∂Φ/∂n,
// with F the volume flux: the antisymmetric, energy-conserving PV flux
// (Ringler et al. 2010, eq. 49).
func (s *trisk) momentumEnergy(lo, hi int) {
	du := s.dst[s.nc:]
	cells := s.g.CellsOnEdge
	for e := lo; e < hi; e++ {
		a, b := s.perp.Edge(s.ga, e), s.perp.Edge(s.gb, e)
		du[e] = (0.5*(s.qe[e]*a+b) - (s.phi[cells[2*e+1]] - s.phi[cells[2*e]])) * s.invDual[e]
	}
}

// momentumEnstrophy: ∂u_e/∂t = q_e (1/d_e) Σ_{e'} W_{e,e'} F_{e'} − ∂Φ/∂n, the PV
// flux q_e F⊥_e that conserves potential enstrophy (Ringler et al. 2010, §5).
func (s *trisk) momentumEnstrophy(lo, hi int) {
	du := s.dst[s.nc:]
	cells := s.g.CellsOnEdge
	for e := lo; e < hi; e++ {
		a := s.perp.Edge(s.ga, e)
		du[e] = (s.qe[e]*a - (s.phi[cells[2*e+1]] - s.phi[cells[2*e]])) * s.invDual[e]
	}
}

// cellPV sets q_i = (1/A_i) Σ_v K_{i,v} q_v, for the normal PV gradient, and
// the TRiSK cell sums of l u for the tangential velocity.
func (s *trisk) cellPV(lo, hi int) {
	start, verts, kite, area := s.g.CellEdgeStart, s.g.CellVertices, s.g.CellKiteArea, s.g.CellArea
	for i := lo; i < hi; i++ {
		m := 0.0
		for k := start[i]; k < start[i+1]; k++ {
			m += kite[k] * s.q[verts[k]]
		}
		s.qcell[i] = m / area[i]
	}
	s.perp.CellSums(s.gu, s.lu, lo, hi)
}

// anticipate applies q̂_e = q_e − c Δt (u_e ∂q/∂n + v_e ∂q/∂t), with v_e the
// TRiSK tangential velocity.
func (s *trisk) anticipate(lo, hi int) {
	u := s.x[s.nc:]
	cells, verts := s.g.CellsOnEdge, s.g.VerticesOnEdge
	l := s.g.EdgeLength
	cdt := s.apvm * s.dt
	for e := lo; e < hi; e++ {
		dqn := (s.qcell[cells[2*e+1]] - s.qcell[cells[2*e]]) * s.invDual[e]
		dqt := (s.q[verts[2*e+1]] - s.q[verts[2*e]]) / l[e]
		v := s.perp.Edge(s.gu, e) * s.invDual[e]
		s.qe[e] -= cdt * (u[e]*dqn + v*dqt)
	}
}
