package scheme

import (
	"fmt"

	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
)

// pair holds two values of one edge side by side, so that one gather
// brings both into the cache.
type pair [2]float64

// core holds what every scheme computes before its own passes: the
// potential vorticity on vertices (ops.PVStencil) and, per
// edge, the volume flux and the edge's share of the kinetic energy. Its
// passes run on the pool as method values built once, so a tendency
// allocates nothing.
type core struct {
	g    ops.Grid
	phys Physics
	pool *par.Pool
	pv   *ops.PVStencil

	nc, ne, nv int
	q          []float64 // vertices: PV
	fk         []pair    // edges: F_e = l_e h_e u_e (m³ s⁻¹) and l_e d_e u_e²
	lu         []float64 // edges: l_e u_e, only when a scheme needs it (apvm)
	invArea    []float64 // cells: 1/A_i

	x, dst []float64 // arguments of the tendency in progress
	dh     []float64 // where the cell pass puts ∂h/∂t (dst[:nc]); nil in a stage

	// General Hodge star (the grid's Metric.Hodge), nil for diag(l/d).
	hodge     *mesh.Hodge
	hodgeRuns []run  // maximal ranges of edges whose rows of H have the same length
	vh        []pair // edges: v_e = d_e u_e and ĥ_e v_e, only with hodge

	phaseVertices, phaseEdges, phaseCirc, phaseHodge func(lo, hi int)

	// Stage: x ← a x0 + b (x + Δt f(x)), for the step.Stager contract.
	x0                      []float64
	stageA, stageB, stageDt float64
	// ahead is the state whose edge pass (or circulation pass) the last
	// StageThen already did, nil when none.
	ahead *float64
	// Set by the scheme: phaseLast runs its passes after the vertex and
	// edge passes up to the last one, phaseFinish, which finishes the
	// stage for u. phaseFinishEdges (doFinishEdges) also runs the next
	// stage's edge pass inside it; it stays nil where phaseFinish reads
	// what the edge pass writes at other edges than its own (the square
	// schemes' momentum pass reads the fluxes of the cross edges), and
	// StageThen is then Stage.
	phaseLast                     func()
	phaseFinish, phaseFinishEdges func(lo, hi int)
}

func newCore(g ops.Grid, phys Physics, pool *par.Pool) core {
	c := core{
		g: g, phys: phys, pool: pool, pv: ops.NewPVStencil(g),
		nc: g.NumCells, ne: g.NumEdges, nv: g.NumVertices,
		q:       make([]float64, g.NumVertices),
		fk:      make([]pair, g.NumEdges),
		invArea: make([]float64, g.NumCells),
	}
	for i, a := range g.CellArea {
		c.invArea[i] = 1 / a
	}
	touch(c.q)
	touch(c.fk)
	if g.Hodge != nil {
		c.hodge = g.Hodge
		c.vh = make([]pair, g.NumEdges)
		touch(c.vh)
		c.hodgeRuns = ops.RowRuns(g.Hodge.Start)
	}
	return c
}

// touch writes every page of a fresh scratch slice, so that the first
// tendency does not pay for faulting the pages in: on a virtual machine
// that costs about 3 ms per MB the first time (measured: 90 ms for the
// 28 MB of scratch on 262 144 hexagons), a setup cost that belongs in
// setup.
func touch[T any](s []T) { clear(s) }

// bind builds the method values; call once the core is at its final address.
func (c *core) bind() {
	c.phaseVertices = c.doVertices
	c.phaseEdges = c.doEdges
	c.phaseCirc = c.doCirculation
	c.phaseHodge = c.doHodge
}

// edgePasses runs the edge passes: one with the diagonal Hodge star, two
// with a general one (circulations first, then the rows of H, so that
// each edge's flux is computed in one place, in the order of its row).
func (c *core) edgePasses() {
	if c.hodge == nil {
		c.pool.For(c.ne, c.phaseEdges)
		return
	}
	c.pool.For(c.ne, c.phaseCirc)
	c.pool.For(c.ne, c.phaseHodge)
}

// Stage sets x ← a x0 + b (x + Δt f(x)) in place (the step.Stager
// contract): the passes of Tendency, with the cell pass and the last pass
// finishing the stage for h and u instead of storing f. After the vertex
// and edge passes only the cell pass reads h, and only its own cell's,
// just before replacing it; nothing reads u after them.
func (c *core) Stage(x, x0 []float64, a, b, dt float64) { c.stage(x, x0, a, b, dt, false) }

// StageThen is Stage, for a caller that promises to call Stage or
// StageThen next on the same x, changed by nothing in between (the
// step.ChainStager contract): the last pass then also does the next
// stage's edge pass, block by block while the new u_e are in cache, and
// the next stage skips it (where phaseFinishEdges is set: trisk). The
// edge pass reads h only at the two cells of its edge, which the cell
// pass has finished, and u only at its own edge, just written, so it
// computes the same values as in the next stage.
func (c *core) StageThen(x, x0 []float64, a, b, dt float64) { c.stage(x, x0, a, b, dt, true) }

func (c *core) stage(x, x0 []float64, a, b, dt float64, then bool) {
	c.x, c.x0 = x, x0
	c.stageA, c.stageB, c.stageDt = a, b, dt
	ahead := c.ahead == &x[0]
	c.ahead = nil
	c.pool.For(c.nv, c.phaseVertices)
	switch {
	case !ahead:
		c.edgePasses()
	case c.hodge != nil:
		c.pool.For(c.ne, c.phaseHodge)
	}
	c.phaseLast()
	if then && c.phaseFinishEdges != nil {
		c.pool.For(c.ne, c.phaseFinishEdges)
		c.ahead = &x[0]
	} else {
		c.pool.For(c.ne, c.phaseFinish)
	}
	c.x, c.x0 = nil, nil
}

// doCirculation sets v_e = d_e u_e and ĥ_e v_e.
func (c *core) doCirculation(lo, hi int) {
	h, u := c.x[:c.nc], c.x[c.nc+lo:c.nc+hi]
	vh := c.vh[lo:hi]
	cells := c.g.EdgeCells[2*lo : 2*hi]
	d := c.g.DualLength[lo:hi]
	u, d = u[:len(vh)], d[:len(vh)]
	for k := range vh {
		ce := cells[2*k : 2*k+2 : 2*k+2]
		v := d[k] * u[k]
		vh[k] = pair{v, 0.5 * (h[ce[0]] + h[ce[1]]) * v}
	}
}

// doHodge sets, with the general Hodge star H, the mass flux
// F = δE/δv = ½[ĥ ∘ (H v) + H (ĥ ∘ v)] and the kinetic-energy share
// v_e (H v)_e, for the energy E = ½ Σ_e ĥ_e v_e (H v)_e + potential
// (the Hamiltonian form: Thuburn & Cotter 2012, SIAM J. Sci. Comput. 34,
// B203–B225, from memory). With H = diag(l/d) both reduce to doEdges.
// For apvm, l u becomes H v, the flux per unit thickness.
//
// Rows of five, seven and eleven entries (distorted hexagons;
// quadrilaterals and the cubed sphere; distorted triangles) go to
// written-out kernels that sum the same products in the same order: the
// row loop's counter and bounds checks were a fifth of the pass.
func (c *core) doHodge(lo, hi int) {
	for _, r := range c.hodgeRuns {
		a, b, ok := r.Clip(lo, hi)
		if !ok || c.hodgePacked(int(r.N), a, b) {
			continue
		}
		switch r.N {
		case 5:
			c.hodgeRows5(a, b)
		case 7:
			c.hodgeRows7(a, b)
		case 11:
			c.hodgeRows11(a, b)
		default:
			c.hodgeRows(a, b)
		}
	}
}

// hodgeRows is doHodge for the edges [lo, hi), rows of any length.
func (c *core) hodgeRows(lo, hi int) {
	st, col, val := c.hodge.Start, c.hodge.Col, c.hodge.Val
	vh := c.vh
	for e := lo; e < hi; e++ {
		cs := col[st[e]:st[e+1]]
		vs := val[st[e]:st[e+1]]
		vs = vs[:len(cs)]
		var hv, hhv float64
		for k, j := range cs {
			p := &vh[j]
			hv += vs[k] * p[0]
			hhv += vs[k] * p[1]
		}
		c.hodgeFlux(e, hv, hhv)
	}
}

// hodgeFlux stores edge e's flux and kinetic-energy share from its row
// sums hv = (H v)_e and hhv = (H (ĥ ∘ v))_e.
func (c *core) hodgeFlux(e int, hv, hhv float64) {
	ce := c.g.EdgeCells[2*e : 2*e+2 : 2*e+2]
	h := c.x[:c.nc]
	he := 0.5 * (h[ce[0]] + h[ce[1]])
	c.fk[e] = pair{0.5 * (he*hv + hhv), c.vh[e][0] * hv}
	if c.lu != nil {
		c.lu[e] = hv
	}
}

// hodgeRows5 is hodgeRows for rows of five entries, written out: the
// same products summed in the same order.
func (c *core) hodgeRows5(lo, hi int) {
	st, col, val, vh := c.hodge.Start, c.hodge.Col, c.hodge.Val, c.vh
	for e := lo; e < hi; e++ {
		k := st[e]
		cs, vs := (*[5]int32)(col[k:k+5]), (*[5]float64)(val[k:k+5])
		p0, p1, p2, p3, p4 := &vh[cs[0]], &vh[cs[1]], &vh[cs[2]], &vh[cs[3]], &vh[cs[4]]
		hv := 0.0 + vs[0]*p0[0] + vs[1]*p1[0] + vs[2]*p2[0] + vs[3]*p3[0] + vs[4]*p4[0]
		hhv := 0.0 + vs[0]*p0[1] + vs[1]*p1[1] + vs[2]*p2[1] + vs[3]*p3[1] + vs[4]*p4[1]
		c.hodgeFlux(e, hv, hhv)
	}
}

// hodgeRows7 is hodgeRows for rows of seven entries (the quadrilaterals
// of the cubed sphere), written out like hodgeRows5.
func (c *core) hodgeRows7(lo, hi int) {
	st, col, val, vh := c.hodge.Start, c.hodge.Col, c.hodge.Val, c.vh
	for e := lo; e < hi; e++ {
		k := st[e]
		cs, vs := (*[7]int32)(col[k:k+7]), (*[7]float64)(val[k:k+7])
		p0, p1, p2, p3, p4, p5, p6 := &vh[cs[0]], &vh[cs[1]], &vh[cs[2]], &vh[cs[3]], &vh[cs[4]], &vh[cs[5]], &vh[cs[6]]
		hv := 0.0 + vs[0]*p0[0] + vs[1]*p1[0] + vs[2]*p2[0] + vs[3]*p3[0] + vs[4]*p4[0] + vs[5]*p5[0] + vs[6]*p6[0]
		hhv := 0.0 + vs[0]*p0[1] + vs[1]*p1[1] + vs[2]*p2[1] + vs[3]*p3[1] + vs[4]*p4[1] + vs[5]*p5[1] + vs[6]*p6[1]
		c.hodgeFlux(e, hv, hhv)
	}
}

// hodgeRows11 is hodgeRows for rows of eleven entries (the triangles of
// a distorted triangle grid), written out like hodgeRows5.
func (c *core) hodgeRows11(lo, hi int) {
	st, col, val, vh := c.hodge.Start, c.hodge.Col, c.hodge.Val, c.vh
	for e := lo; e < hi; e++ {
		k := st[e]
		cs, vs := (*[11]int32)(col[k:k+11]), (*[11]float64)(val[k:k+11])
		p0, p1, p2, p3, p4, p5 := &vh[cs[0]], &vh[cs[1]], &vh[cs[2]], &vh[cs[3]], &vh[cs[4]], &vh[cs[5]]
		p6, p7, p8, p9, p10 := &vh[cs[6]], &vh[cs[7]], &vh[cs[8]], &vh[cs[9]], &vh[cs[10]]
		hv := 0.0 + vs[0]*p0[0] + vs[1]*p1[0] + vs[2]*p2[0] + vs[3]*p3[0] + vs[4]*p4[0] + vs[5]*p5[0] +
			vs[6]*p6[0] + vs[7]*p7[0] + vs[8]*p8[0] + vs[9]*p9[0] + vs[10]*p10[0]
		hhv := 0.0 + vs[0]*p0[1] + vs[1]*p1[1] + vs[2]*p2[1] + vs[3]*p3[1] + vs[4]*p4[1] + vs[5]*p5[1] +
			vs[6]*p6[1] + vs[7]*p7[1] + vs[8]*p8[1] + vs[9]*p9[1] + vs[10]*p10[1]
		c.hodgeFlux(e, hv, hhv)
	}
}

// doVertices sets q_v = (ζ_v + f_v)/h_v (Ringler et al. 2010, eq. 26).
func (c *core) doVertices(lo, hi int) {
	c.pv.PotentialVorticity(c.q[lo:hi], c.phys.FVertex, c.x[c.nc:], c.x[:c.nc], lo, hi)
}

// doEdges sets the volume flux F_e = l_e h_e u_e with the arithmetic-mean
// thickness h_e = (h_{c0} + h_{c1})/2, and l_e d_e u_e², whose sum over a
// cell's edges is 4 A_i K_i (Ringler et al. 2010, eqs. 21 and 49; the same
// arithmetic as ops.Grid.EdgeFlux and ops.Grid.DivKE).
func (c *core) doEdges(lo, hi int) {
	h, u := c.x[:c.nc], c.x[c.nc+lo:c.nc+hi]
	fk := c.fk[lo:hi]
	cells := c.g.EdgeCells[2*lo : 2*hi]
	l, d := c.g.EdgeLength[lo:hi], c.g.DualLength[lo:hi]
	u, l, d = u[:len(fk)], l[:len(fk)], d[:len(fk)]
	for k := edgesPacked(h, u, l, d, cells, fk); k < len(fk); k++ {
		ce := cells[2*k : 2*k+2 : 2*k+2]
		uk, lk := u[k], l[k]
		m := 0.5 * (h[ce[0]] + h[ce[1]])
		fk[k] = pair{lk * m * uk, lk * d[k] * uk * uk}
	}
	if c.lu != nil {
		lu := c.lu[lo:hi]
		lu = lu[:len(u)]
		for k := range lu {
			lu[k] = l[k] * u[k]
		}
	}
}

// maxCellEdges bounds the polygons the cell pass handles on the stack.
const maxCellEdges = 16

// trisk is the TRiSK family: energy-, enstrophy-conserving and APVM.
//
// A tendency is four passes (apvm adds two before the cell pass, for q on
// cells and q̂ on edges; a general Hodge star one on edges). Vertices: q. Edges: F and the kinetic-energy
// shares. Cells: the divergence, the Bernoulli function Φ = K + g(h + b)
// and the TRiSK sums (ops.TRiSK gives the closed form) of F and of q_e F,
// which the cell combines with q_e and Φ into its side's share T^i_e of
// the momentum tendency of each of its edges. Edges:
// ∂u_e/∂t = (T^{c0}_e − T^{c1}_e)/d_e. Each share is written by exactly one
// cell, so the passes split over workers without changing a bit.
//
// The cell pass is where the time goes (about half of it on hexagons):
// some 160 floating-point operations per hexagon, on amd64 on packed
// SSE2 pairs (packed_amd64.s), while the vertex pass is bound by its
// gathers of u and h and the edge and momentum passes by memory traffic.
// The README's speed section has the measurements. In a Runge–Kutta
// step (StageThen) the momentum pass also does the next stage's edge
// pass, so that a stage is three passes.
type trisk struct {
	core
	name      string
	enstrophy bool   // T = q_e G + Φ instead of ½(q_e G_F + G_qF) + Φ
	tt        []pair // edges: the momentum shares T^{c0}_e, T^{c1}_e
	slots     []cellSlot

	runs []run // maximal ranges of cells with the same number of edges

	phaseCells, phaseMomentum func(lo, hi int)

	// apvm only
	apvm   float64 // c in q̂ = q − c Δt u·∇q
	dt     float64
	gv     []pair    // edges: each side's cell sum G^i_e[l u] (ops.TRiSK), as tt
	qcell  []float64 // PV at cells
	corr   []float64 // edges: q_e − q̂_e
	phaseQ func(lo, hi int)
	phaseA func(lo, hi int)
}

func newTRiSK(name string, g ops.Grid, phys Physics, pool *par.Pool, opt Options) *trisk {
	s := &trisk{core: newCore(g, phys, pool), name: name, enstrophy: name == TRiSKEnstrophy}
	s.tt = make([]pair, g.NumEdges)
	touch(s.tt)
	for i := 0; i < g.NumCells; i++ {
		if lo, hi := g.EdgesOfCell(i); hi-lo > maxCellEdges {
			panic(fmt.Sprintf("scheme: cell %d has %d edges, more than %d", i, hi-lo, maxCellEdges))
		}
	}
	s.runs = cellRuns(g)
	s.slots = cellSlots(g, s.invArea)
	s.bind()
	s.phaseCells = s.doCells
	s.phaseMomentum = s.doMomentum
	s.phaseFinish = s.doFinish
	s.phaseFinishEdges = s.doFinishEdges
	s.phaseLast = s.lastPasses
	if name == APVM {
		s.apvm = opt.APVMFactor
		s.qcell = make([]float64, g.NumCells)
		s.lu = make([]float64, g.NumEdges)
		s.gv = make([]pair, g.NumEdges)
		s.corr = make([]float64, g.NumEdges)
		s.phaseQ = s.cellPV
		s.phaseA = s.anticipate
	}
	return s
}

func (s *trisk) Name() string     { return s.name }
func (s *trisk) SetDt(dt float64) { s.dt = dt }
func (s *trisk) Tendency(dst, x []float64) {
	s.x, s.dst, s.dh = x, dst, dst[:s.nc]
	s.passes()
	s.pool.For(s.ne, s.phaseMomentum)
	s.x, s.dst, s.dh = nil, nil, nil
}

// stageValue is one element of a stage: a x0 + b (x + Δt f), or x + Δt f
// exactly for the first stage.
func stageValue(x, x0, f, a, b, dt float64) float64 {
	if a == 0 && b == 1 {
		return x + dt*f
	}
	return a*x0 + b*(x+dt*f)
}

// passes runs every pass up to the cell pass.
func (s *trisk) passes() {
	s.ahead = nil
	s.pool.For(s.nv, s.phaseVertices)
	s.edgePasses()
	s.lastPasses()
}

// lastPasses runs the passes after the vertex and edge passes up to the
// cell pass (apvm's two, then the cell pass).
func (s *trisk) lastPasses() {
	if s.corr != nil {
		s.pool.For(s.nc, s.phaseQ)
		s.pool.For(s.ne, s.phaseA)
	}
	s.pool.For(s.nc, s.phaseCells)
}

// doCells sets, for each cell i, ∂h_i/∂t = −(1/A_i) Σ_e n_{e,i} F_e, the
// Bernoulli function Φ_i = K_i + g(h_i + b_i) with
// K_i = (1/4A_i) Σ_e l_e d_e u_e², and for each edge e of the cell the share
//
//	T^i_e = ½ (q_e G^i_e[F] + G^i_e[q F]) + Φ_i   (trisk-energy, apvm)
//	T^i_e = q_e G^i_e[F] + Φ_i                    (trisk-enstrophy)
//
// where G^i_e[x] is the cell's part of Σ_{e'} W_{e,e'} x_{e'} (ops.TRiSK
// derives its closed form; the kernels walk it round the cell as a
// recurrence) and q_e = (q_{v0} + q_{v1})/2 is formed
// from the cell's two vertices of the edge. The momentum pass takes the
// difference of the two cells' shares, which is the energy-conserving PV
// flux (Ringler et al. 2010, eq. 49) or the enstrophy-conserving one (§5)
// minus the gradient of Φ.
//
// The kernels carry a quarter of each signed flux and of the sums A and B
// of ops.TRiSK, and half of each G: the halvings of the recurrence and of
// T then become exact scalings by powers of two (½(x + y) with x, y halved
// is x + y; ½(q_e G + G') is q_e(G/2) + G'/2), which spares 13 of the
// roughly 160 floating-point operations of a hexagon and changes no bit.
func (s *trisk) doCells(lo, hi int) {
	for _, r := range s.runs {
		a, b, ok := r.Clip(lo, hi)
		if !ok {
			continue
		}
		switch {
		case r.N == 6:
			s.cells6(a, b)
		case r.N == 4:
			s.cells4(a, b)
		case r.N == 3:
			s.cells3(a, b)
		default:
			s.cellsAny(a, b)
		}
	}
}

// run is a range of cells (or of rows of H) that all have the same
// number of entries.
type run = ops.RowRun

func cellRuns(g ops.Grid) []run { return ops.RowRuns(g.CellEdgeStart) }

// cellSlot is one edge of a cell as the cell pass reads it, so that one
// stream carries what the CSR arrays spread over four: r = K_{i,v}/A_i,
// the kite fraction of the vertex v that ends the edge anticlockwise
// (computed once, as the kernels computed it each time: K × (1/A_i)), the
// edge's side index 2e + o, with o = 0 where n_e points out of the cell
// and 1 where it points in (the slot of tt it writes and the ±1 sign of
// its flux), and v.
type cellSlot struct {
	r          float64
	side, vert int32
}

func cellSlots(g ops.Grid, invArea []float64) []cellSlot {
	out := make([]cellSlot, len(g.CellEdges))
	for i := 0; i < g.NumCells; i++ {
		for k := g.CellEdgeStart[i]; k < g.CellEdgeStart[i+1]; k++ {
			o := int32(g.CellEdgeSign[k]>>1) & 1
			out[k] = cellSlot{r: g.CellKiteArea[k] * invArea[i], side: 2*g.CellEdges[k] + o, vert: g.CellVertices[k]}
		}
	}
	return out
}

// quarterSign is a quarter of the sign of a side's flux. Multiplying by
// it is exact and avoids a branch that the orientation pattern makes
// unpredictable; the quarter makes the halvings of the cell sums exact
// scalings of the kernels' inputs instead of multiplications in them (see
// doCells).
var quarterSign = [2]float64{0.25, -0.25}

// cellRange returns what a cell kernel reads for the cells [lo, hi): the
// depths (to replace, in a stage), 1/A, where ∂h/∂t goes (nil in a stage)
// or the stage's x0 (nil in a tendency), the bottom (nil if flat) and the
// cells' slots.
func (s *trisk) cellRange(lo, hi int) (h, invA, dh, x0, b []float64, slots []cellSlot) {
	h, invA = s.x[lo:hi], s.invArea[lo:hi]
	invA = invA[:len(h)]
	if s.dh != nil {
		dh = s.dh[lo:hi]
		dh = dh[:len(h)]
	} else {
		x0 = s.x0[lo:hi]
		x0 = x0[:len(h)]
	}
	if s.phys.Bottom != nil {
		b = s.phys.Bottom[lo:hi]
		b = b[:len(h)]
	}
	return h, invA, dh, x0, b, s.slots[s.g.CellEdgeStart[lo]:s.g.CellEdgeStart[hi]]
}

// bernoulli returns Φ_i = K_i + g(h_i + b_i), K_i = (1/4A_i) ke, from
// ke = Σ_e l_e d_e u_e² over the cell's edges (read before setDepth).
func (s *trisk) bernoulli(h, invA, b []float64, i int, ke float64) float64 {
	hb := h[i]
	if b != nil {
		hb += b[i]
	}
	return 0.25*ke*invA[i] + s.phys.G*hb
}

// setDepth stores the cell pass's ∂h_i/∂t = f in a tendency (dh), or
// replaces h_i by its stage value.
func (c *core) setDepth(h, dh, x0 []float64, i int, f float64) {
	if dh != nil {
		dh[i] = f
		return
	}
	h[i] = stageValue(h[i], x0[i], f, c.stageA, c.stageB, c.stageDt)
}

// share is T^i_e for edge e of cell i from q_e, half the cell's sums
// G[F] and G[qF], and Φ_i.
func share(enst bool, qe, ga, gb, phi float64) float64 {
	if enst {
		p := qe * ga
		return (p + p) + phi
	}
	return (qe*ga + gb) + phi
}

// cells6 is cellsAny for hexagons, written out for six edges: the same
// arithmetic in the same order, with every value in a register or a
// named stack slot instead of an indexed array. Per edge m of the cell:
// a_m = ±F_e/4, qe_m the edge's q from the cell's two vertices (less
// apvm's correction q_e − q̂_e, as in cellsAny), b_m =
// qe_m a_m, r_m the kite fraction after the edge and c_m the fractions
// before it; sa, sb are A of ops.TRiSK for a and b (a quarter of it, as
// a and b are), ta, tb its B, ha, hb half of A, and ga_m, gb_m half the
// cell's sums G_m.
func (s *trisk) cells6(lo, hi int) {
	if !s.cellsPacked(6, lo, hi) {
		s.cells6Go(lo, hi)
	}
}

// cells6Go is cells6 in Go, for every build; cellsPacked is the same
// arithmetic on packed SSE2 pairs where the build has it.
func (s *trisk) cells6Go(lo, hi int) {
	h, invA, dh, x0, b, slots := s.cellRange(lo, hi)
	slots = slots[:6*len(h)]
	q, fk, tt, corr, enst := s.q, s.fk, s.tt, s.corr, s.enstrophy
	for i := range h {
		sl := (*[6]cellSlot)(slots[6*i : 6*i+6])
		s0, s1, s2, s3, s4, s5 := sl[0].side, sl[1].side, sl[2].side, sl[3].side, sl[4].side, sl[5].side
		q5, q0, q1, q2, q3, q4 := q[sl[5].vert], q[sl[0].vert], q[sl[1].vert], q[sl[2].vert], q[sl[3].vert], q[sl[4].vert]
		p0, p1, p2, p3, p4, p5 := &fk[s0>>1], &fk[s1>>1], &fk[s2>>1], &fk[s3>>1], &fk[s4>>1], &fk[s5>>1]
		qe0, qe1, qe2, qe3, qe4, qe5 := 0.5*(q5+q0), 0.5*(q0+q1), 0.5*(q1+q2), 0.5*(q2+q3), 0.5*(q3+q4), 0.5*(q4+q5)
		if corr != nil {
			qe0, qe1, qe2, qe3, qe4, qe5 = qe0-corr[s0>>1], qe1-corr[s1>>1], qe2-corr[s2>>1], qe3-corr[s3>>1], qe4-corr[s4>>1], qe5-corr[s5>>1]
		}
		a0, a1, a2, a3, a4, a5 := quarterSign[s0&1]*p0[0], quarterSign[s1&1]*p1[0], quarterSign[s2&1]*p2[0], quarterSign[s3&1]*p3[0], quarterSign[s4&1]*p4[0], quarterSign[s5&1]*p5[0]
		b0, b1, b2, b3, b4, b5 := qe0*a0, qe1*a1, qe2*a2, qe3*a3, qe4*a4, qe5*a5
		r0, r1, r2, r3, r4 := sl[0].r, sl[1].r, sl[2].r, sl[3].r, sl[4].r
		c1 := r0 // C_0 = 0 drops out of every sum below, exactly
		c2 := c1 + r1
		c3 := c2 + r2
		c4 := c3 + r3
		c5 := c4 + r4
		sa := 0.0 + a0 + a1 + a2 + a3 + a4 + a5
		sb := 0.0 + b0 + b1 + b2 + b3 + b4 + b5
		ta := c1*a1 + c2*a2 + c3*a3 + c4*a4 + c5*a5
		tb := c1*b1 + c2*b2 + c3*b3 + c4*b4 + c5*b5
		ke := 0.0 + p0[1] + p1[1] + p2[1] + p3[1] + p4[1] + p5[1]
		phi := s.bernoulli(h, invA, b, i, ke)
		ha, hb := sa+sa, sb+sb
		s.setDepth(h, dh, x0, i, -((ha + ha) * invA[i]))
		ga0, gb0 := (sa-a0)-(ta+ta), (sb-b0)-(tb+tb)
		ga1, gb1 := ga0+(r0*ha-(a0+a1)), gb0+(r0*hb-(b0+b1))
		ga2, gb2 := ga1+(r1*ha-(a1+a2)), gb1+(r1*hb-(b1+b2))
		ga3, gb3 := ga2+(r2*ha-(a2+a3)), gb2+(r2*hb-(b2+b3))
		ga4, gb4 := ga3+(r3*ha-(a3+a4)), gb3+(r3*hb-(b3+b4))
		ga5, gb5 := ga4+(r4*ha-(a4+a5)), gb4+(r4*hb-(b4+b5))
		tt[s0>>1][s0&1] = share(enst, qe0, ga0, gb0, phi)
		tt[s1>>1][s1&1] = share(enst, qe1, ga1, gb1, phi)
		tt[s2>>1][s2&1] = share(enst, qe2, ga2, gb2, phi)
		tt[s3>>1][s3&1] = share(enst, qe3, ga3, gb3, phi)
		tt[s4>>1][s4&1] = share(enst, qe4, ga4, gb4, phi)
		tt[s5>>1][s5&1] = share(enst, qe5, ga5, gb5, phi)
	}
}

// cells4 is cellsAny for quadrilaterals (the quad grids and the cubed
// sphere), written out like cells6 with the same arithmetic in the same
// order.
func (s *trisk) cells4(lo, hi int) {
	if !s.cellsPacked(4, lo, hi) {
		s.cells4Go(lo, hi)
	}
}

// cells4Go is cells4 in Go (see cells6Go).
func (s *trisk) cells4Go(lo, hi int) {
	h, invA, dh, x0, b, slots := s.cellRange(lo, hi)
	slots = slots[:4*len(h)]
	q, fk, tt, corr, enst := s.q, s.fk, s.tt, s.corr, s.enstrophy
	for i := range h {
		sl := (*[4]cellSlot)(slots[4*i : 4*i+4])
		s0, s1, s2, s3 := sl[0].side, sl[1].side, sl[2].side, sl[3].side
		q3, q0, q1, q2 := q[sl[3].vert], q[sl[0].vert], q[sl[1].vert], q[sl[2].vert]
		p0, p1, p2, p3 := &fk[s0>>1], &fk[s1>>1], &fk[s2>>1], &fk[s3>>1]
		qe0, qe1, qe2, qe3 := 0.5*(q3+q0), 0.5*(q0+q1), 0.5*(q1+q2), 0.5*(q2+q3)
		if corr != nil {
			qe0, qe1, qe2, qe3 = qe0-corr[s0>>1], qe1-corr[s1>>1], qe2-corr[s2>>1], qe3-corr[s3>>1]
		}
		a0, a1, a2, a3 := quarterSign[s0&1]*p0[0], quarterSign[s1&1]*p1[0], quarterSign[s2&1]*p2[0], quarterSign[s3&1]*p3[0]
		b0, b1, b2, b3 := qe0*a0, qe1*a1, qe2*a2, qe3*a3
		r0, r1, r2 := sl[0].r, sl[1].r, sl[2].r
		c1 := r0 // C_0 = 0 drops out of every sum below, exactly
		c2 := c1 + r1
		c3 := c2 + r2
		sa := 0.0 + a0 + a1 + a2 + a3
		sb := 0.0 + b0 + b1 + b2 + b3
		ta := c1*a1 + c2*a2 + c3*a3
		tb := c1*b1 + c2*b2 + c3*b3
		ke := 0.0 + p0[1] + p1[1] + p2[1] + p3[1]
		phi := s.bernoulli(h, invA, b, i, ke)
		ha, hb := sa+sa, sb+sb
		s.setDepth(h, dh, x0, i, -((ha + ha) * invA[i]))
		ga0, gb0 := (sa-a0)-(ta+ta), (sb-b0)-(tb+tb)
		ga1, gb1 := ga0+(r0*ha-(a0+a1)), gb0+(r0*hb-(b0+b1))
		ga2, gb2 := ga1+(r1*ha-(a1+a2)), gb1+(r1*hb-(b1+b2))
		ga3, gb3 := ga2+(r2*ha-(a2+a3)), gb2+(r2*hb-(b2+b3))
		tt[s0>>1][s0&1] = share(enst, qe0, ga0, gb0, phi)
		tt[s1>>1][s1&1] = share(enst, qe1, ga1, gb1, phi)
		tt[s2>>1][s2&1] = share(enst, qe2, ga2, gb2, phi)
		tt[s3>>1][s3&1] = share(enst, qe3, ga3, gb3, phi)
	}
}

// cells3 is cellsAny for triangles (the triangular planes), written out
// like cells6 with the same arithmetic in the same order.
func (s *trisk) cells3(lo, hi int) {
	if !s.cellsPacked(3, lo, hi) {
		s.cells3Go(lo, hi)
	}
}

// cells3Go is cells3 in Go (see cells6Go).
func (s *trisk) cells3Go(lo, hi int) {
	h, invA, dh, x0, b, slots := s.cellRange(lo, hi)
	slots = slots[:3*len(h)]
	q, fk, tt, corr, enst := s.q, s.fk, s.tt, s.corr, s.enstrophy
	for i := range h {
		sl := (*[3]cellSlot)(slots[3*i : 3*i+3])
		s0, s1, s2 := sl[0].side, sl[1].side, sl[2].side
		q2, q0, q1 := q[sl[2].vert], q[sl[0].vert], q[sl[1].vert]
		p0, p1, p2 := &fk[s0>>1], &fk[s1>>1], &fk[s2>>1]
		qe0, qe1, qe2 := 0.5*(q2+q0), 0.5*(q0+q1), 0.5*(q1+q2)
		if corr != nil {
			qe0, qe1, qe2 = qe0-corr[s0>>1], qe1-corr[s1>>1], qe2-corr[s2>>1]
		}
		a0, a1, a2 := quarterSign[s0&1]*p0[0], quarterSign[s1&1]*p1[0], quarterSign[s2&1]*p2[0]
		b0, b1, b2 := qe0*a0, qe1*a1, qe2*a2
		r0, r1 := sl[0].r, sl[1].r
		c1 := r0 // C_0 = 0 drops out of every sum below, exactly
		c2 := c1 + r1
		sa, sb := 0.0+a0+a1+a2, 0.0+b0+b1+b2
		ta, tb := c1*a1+c2*a2, c1*b1+c2*b2
		phi := s.bernoulli(h, invA, b, i, 0.0+p0[1]+p1[1]+p2[1])
		ha, hb := sa+sa, sb+sb
		s.setDepth(h, dh, x0, i, -((ha + ha) * invA[i]))
		ga0, gb0 := (sa-a0)-(ta+ta), (sb-b0)-(tb+tb)
		ga1, gb1 := ga0+(r0*ha-(a0+a1)), gb0+(r0*hb-(b0+b1))
		ga2, gb2 := ga1+(r1*ha-(a1+a2)), gb1+(r1*hb-(b1+b2))
		tt[s0>>1][s0&1] = share(enst, qe0, ga0, gb0, phi)
		tt[s1>>1][s1&1] = share(enst, qe1, ga1, gb1, phi)
		tt[s2>>1][s2&1] = share(enst, qe2, ga2, gb2, phi)
	}
}

// cellsAny is the cell pass for cells of any number of edges.
func (s *trisk) cellsAny(lo, hi int) {
	h, invA, dh, x0, b, slots := s.cellRange(lo, hi)
	start := s.g.CellEdgeStart[lo : hi+1]
	k0 := int(start[0])
	q, fk, tt, corr, enst := s.q, s.fk, s.tt, s.corr, s.enstrophy
	var a, bq, r, qe [maxCellEdges]float64
	for i := range h {
		sl := slots[int(start[i])-k0 : int(start[i+1])-k0]
		n := len(sl)
		aa, bb, rr, qq := a[:n], bq[:n], r[:n], qe[:n]
		qprev := q[sl[n-1].vert]
		var sa, ta, sb, tb, ke, cm float64
		for m, c := range sl {
			p := &fk[c.side>>1]
			qm := q[c.vert]
			qem := 0.5 * (qprev + qm)
			qprev = qm
			if corr != nil {
				qem -= corr[c.side>>1]
			}
			am := quarterSign[c.side&1] * p[0]
			bm := qem * am
			aa[m], bb[m], rr[m], qq[m] = am, bm, c.r, qem
			sa += am
			sb += bm
			ta += cm * am
			tb += cm * bm
			ke += p[1]
			cm += c.r
		}
		phi := s.bernoulli(h, invA, b, i, ke)
		ha, hb := sa+sa, sb+sb
		s.setDepth(h, dh, x0, i, -((ha + ha) * invA[i]))
		// Half the cell's sums G_j = Σ_k w_{j,j+k} a_{j+k}, by
		// G_0 = ½(A − a_0) − B and G_{j+1} = G_j + R_j A − ½(a_j + a_{j+1}),
		// which follows from the closed form of ops.TRiSK, from a quarter of
		// a, A and B.
		ga := (sa - aa[0]) - (ta + ta)
		gb := (sb - bb[0]) - (tb + tb)
		for j, c := range sl {
			if j > 0 {
				ga += rr[j-1]*ha - (aa[j-1] + aa[j])
				gb += rr[j-1]*hb - (bb[j-1] + bb[j])
			}
			tt[c.side>>1][c.side&1] = share(enst, qq[j], ga, gb, phi)
		}
	}
}

// doMomentum sets ∂u_e/∂t = (T^{c0}_e − T^{c1}_e)/d_e.
func (s *trisk) doMomentum(lo, hi int) {
	du := s.dst[s.nc+lo : s.nc+hi]
	tt, d := s.tt[lo:hi], s.g.DualLength[lo:hi]
	tt, d = tt[:len(du)], d[:len(du)]
	// A division, not a stored 1/d_e: the pass is bound by memory
	// traffic, which the 6 MB of reciprocals would add to. Where the
	// build has it, finishPacked divides two edges at a time.
	for e := finishPacked(0, du, nil, tt, d, 0, 0, 0); e < len(du); e++ {
		du[e] = (tt[e][0] - tt[e][1]) / d[e]
	}
}

// doFinish finishes a stage for the edges in [lo, hi), with
// ∂u_e/∂t = (T^{c0}_e − T^{c1}_e)/d_e.
func (s *trisk) doFinish(lo, hi int) {
	a, b, dt := s.stageA, s.stageB, s.stageDt
	x := s.x[s.nc+lo : s.nc+hi]
	tt, d := s.tt[lo:hi], s.g.DualLength[lo:hi]
	tt, d = tt[:len(x)], d[:len(x)]
	if a == 0 && b == 1 {
		for e := finishPacked(1, x, nil, tt, d, a, b, dt); e < len(x); e++ {
			x[e] += dt * ((tt[e][0] - tt[e][1]) / d[e])
		}
		return
	}
	x0 := s.x0[s.nc+lo : s.nc+hi]
	x0 = x0[:len(x)]
	for e := finishPacked(2, x, x0, tt, d, a, b, dt); e < len(x); e++ {
		x[e] = a*x0[e] + b*(x[e]+dt*((tt[e][0]-tt[e][1])/d[e]))
	}
}

// finishBlock is how many edges doFinishEdges finishes before it runs
// the next stage's edge pass on them: their u_e, d_e and l_e are still in
// the first-level cache (16 KB of them).
const finishBlock = 512

// doFinishEdges is the scheme's finishing pass (phaseFinish) and then the
// next stage's edge pass (the circulations, with a general Hodge star) on
// [lo, hi), block by block.
func (c *core) doFinishEdges(lo, hi int) {
	for b := lo; b < hi; b += finishBlock {
		e := min(b+finishBlock, hi)
		c.phaseFinish(b, e)
		if c.hodge == nil {
			c.doEdges(b, e)
		} else {
			c.doCirculation(b, e)
		}
	}
}
