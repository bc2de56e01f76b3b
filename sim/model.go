package sim

import (
	"fmt"
	"math"
	"runtime"
	"strings"

	"gyrebench/sim/cases"
	"gyrebench/sim/diag"
	"gyrebench/sim/dissip"
	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
	"gyrebench/sim/remap"
	"gyrebench/sim/scheme"
	"gyrebench/sim/step"
)

// Model is one shallow-water run: a mesh, a scheme, an integrator and a
// state, advanced one step at a time. A Model is used by one goroutine.
type Model struct {
	cfg     Config
	workers int
	mesh    *mesh.Mesh
	grid    ops.Grid
	pool    *par.Pool
	phys    scheme.Physics

	sch    scheme.Scheme
	integ  step.Integrator
	rewind step.Rewinder // integ, when it can undo its last step; else nil
	tend   step.Tendency
	// staged and stager are integ and sch when both can fuse the update of
	// a stage into the tendency's last pass (step.StagedStepper); else nil.
	staged step.StagedStepper
	stager step.Stager
	// dis is the explicit dissipation, nil when every coefficient is zero;
	// it is added to the scheme's ∂u/∂t and turns the fused stage path
	// off (stager is nil then).
	dis *dissip.Operator

	budget       *dissip.Budget // built on first use
	tendS, tendD []float64      // scratch of Rates
	scale        *dissip.GridScale

	x     []float64 // state [h | u]
	good  []float64 // the state before the step in progress, when rewind is nil
	time  float64
	steps int64

	// blockBad[k] is whether block k of x failed the last check; checkFn
	// and keepFn are the pool's loop bodies for the check and for copying
	// x into good, built once so that a step allocates nothing.
	blockBad        []bool
	checkFn, keepFn func(lo, hi int)

	calc     *diag.Calculator
	initial  diag.Invariants
	steadyH  []float64 // exact depth for steady cases, else nil
	caseInfo *cases.Case
}

// BlowUpError reports a step that produced a non-finite value or a
// non-positive depth. The model keeps the state before that step.
type BlowUpError struct {
	Step  int64   // the step that failed (1-based count of steps tried)
	Time  float64 // simulated time at the start of that step, s
	Cell  int     // first bad cell, or −1
	Edge  int     // first bad edge, or −1
	Value float64 // the offending value
}

func (e *BlowUpError) Error() string {
	if e.Cell >= 0 {
		return fmt.Sprintf("run blew up at step %d (t = %g s): depth %g in cell %d", e.Step, e.Time, e.Value, e.Cell)
	}
	return fmt.Sprintf("run blew up at step %d (t = %g s): velocity %g on edge %d", e.Step, e.Time, e.Value, e.Edge)
}

// NewModel validates the config, builds the mesh, sets the initial state
// and readies the scheme and integrator. workers ≤ 0 means AutoWorkers for
// the mesh.
func NewModel(cfg Config, workers int) (*Model, error) {
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	msh, err := mesh.New(cfg.MeshSpec())
	if err != nil {
		return nil, err
	}
	return newModelOn(cfg, msh, workers, nil, nil)
}

// newModelOn builds a model on an existing mesh; a non-nil state replaces
// the initial condition and a non-nil bottom the case's bottom height.
func newModelOn(cfg Config, msh *mesh.Mesh, workers int, state, bottomIn []float64) (*Model, error) {
	grid, err := HodgeGrid(msh, cfg.Scheme.Hodge)
	if err != nil {
		return nil, err
	}
	m := &Model{cfg: cfg, workers: workers, mesh: msh, grid: grid}
	nc, ne := msh.NumCells, msh.NumEdges
	m.x = make([]float64, nc+ne)
	cs, err := cases.Lookup(cfg.Initial.Case)
	if err != nil {
		return nil, err
	}
	axis, err := cs.RotationAxis(cfg.Initial.Params)
	if err != nil {
		return nil, err
	}
	m.phys = scheme.Physics{G: cfg.Physics.G, FVertex: Coriolis(msh, cfg.Physics, axis)}
	m.caseInfo = cs
	bottom := make([]float64, nc)
	cp := cases.Physics{G: cfg.Physics.G, F0: cfg.Physics.F0, Beta: cfg.Physics.Beta, Depth: cfg.Physics.Depth, Radius: cfg.Physics.Radius, Omega: cfg.Physics.Omega}
	if err := cs.Init(msh, cp, cfg.Initial.Params, m.x[:nc], m.x[nc:], bottom); err != nil {
		return nil, err
	}
	if bottomIn != nil {
		copy(bottom, bottomIn)
	}
	for _, b := range bottom {
		if b != 0 {
			m.phys.Bottom = bottom
			break
		}
	}
	if cs.Steady {
		m.steadyH = append([]float64(nil), m.x[:nc]...)
	}
	if state != nil {
		copy(m.x, state)
	}
	if bad := m.check(); bad != nil {
		return nil, fmt.Errorf("initial.case = %q gives an invalid initial state: %v (is physics.depth large enough?)", cfg.Initial.Case, bad.Error())
	}
	if workers <= 0 {
		workers = AutoWorkers(msh.NumCells)
	}
	m.pool = par.New(workers)
	if err := m.SetDissipation(cfg.Scheme.Dissipation()); err != nil {
		m.pool.Close()
		return nil, err
	}
	if err := m.setScheme(cfg.Scheme.Name); err != nil {
		m.pool.Close()
		return nil, err
	}
	if err := m.SetIntegrator(cfg.Time.Integrator); err != nil {
		m.pool.Close()
		return nil, err
	}
	m.calc = diag.New(m.grid, cfg.Physics.G, m.phys.FVertex, m.phys.Bottom)
	m.initial = m.calc.Compute(m.x, cfg.Time.Dt)
	return m, nil
}

// Coriolis returns f at the vertices: f0 + β(y − Ly/2) on the plane,
// 2Ω (axis · r̂) on the sphere: 2Ω sin(latitude) for the z axis, and the
// rotated f of Williamson et al. (1992) case 2 for a tilted axis.
func Coriolis(msh *mesh.Mesh, p PhysicsConfig, axis [3]float64) []float64 {
	f := make([]float64, msh.NumVertices)
	for v := range f {
		if msh.Surface.Sphere {
			r := axis[0]*msh.VertexX[v] + axis[1]*msh.VertexY[v] + axis[2]*msh.VertexZ[v]
			f[v] = 2 * p.Omega * r / msh.Surface.Radius
		} else {
			f[v] = p.F0 + p.Beta*(msh.VertexY[v]-msh.Surface.Ly/2)
		}
	}
	return f
}

// AutoWorkers is the number of workers a model of ncells uses when none is
// asked for: one per 100 000 cells, up to the number of CPUs. Measured on a
// 2-core machine shared with other work (trisk-energy, rk3): two workers
// give 1.8× on 262 144 hexagons, but on average lose 15 % on 16 384 and
// 25 % on the 40 962 cells of an icosahedral level 6, where a pass lasts
// a fraction of a millisecond and a worker that the other programs delay
// holds up every one of them.
func AutoWorkers(ncells int) int {
	return max(1, min(runtime.NumCPU(), ncells/100000))
}

// Close stops the model's workers.
func (m *Model) Close() { m.pool.Close() }

// Workers returns the number of workers the model's loops run on.
func (m *Model) Workers() int { return m.pool.Workers() }

// Config returns the model's current config (scheme, integrator and dt
// reflect changes made while running).
func (m *Model) Config() Config { return m.cfg }

// Mesh returns the model's mesh. It must not be modified.
func (m *Model) Mesh() *mesh.Mesh { return m.mesh }

// State returns the state vector [h | u]. It must not be modified.
func (m *Model) State() []float64 { return m.x }

// Depth returns h on cells; Velocity returns u on edges. Read-only.
func (m *Model) Depth() []float64    { return m.x[:m.mesh.NumCells] }
func (m *Model) Velocity() []float64 { return m.x[m.mesh.NumCells:] }

// Time returns the simulated time in seconds; Steps the steps taken.
func (m *Model) Time() float64 { return m.time }
func (m *Model) Steps() int64  { return m.steps }

// Bottom returns the bottom height on cells, or nil when flat.
func (m *Model) Bottom() []float64 { return m.phys.Bottom }

// Coriolis returns f at vertices.
func (m *Model) Coriolis() []float64 { return m.phys.FVertex }

// Diagnostics returns the calculator for derived fields.
func (m *Model) Diagnostics() *diag.Calculator { return m.calc }

// Invariants returns the invariants of the current state.
func (m *Model) Invariants() diag.Invariants { return m.calc.Compute(m.x, m.cfg.Time.Dt) }

// Initial returns the invariants of the initial state.
func (m *Model) Initial() diag.Invariants { return m.initial }

// ExactDepth returns the exact depth at the current time for cases that
// have one (steady cases), or nil.
func (m *Model) ExactDepth() []float64 { return m.steadyH }

func (m *Model) setScheme(name string) error {
	if scheme.SquareOnly(name) && !m.mesh.Orthogonal {
		return fmt.Errorf("scheme.name = %q is written for the regular quad grid; on this distorted grid use one of: %s", name, strings.Join(scheme.Anywhere(), ", "))
	}
	s, err := scheme.New(name, m.grid, m.phys, m.pool, scheme.Options{APVMFactor: m.cfg.Scheme.APVMFactor})
	if err != nil {
		return err
	}
	s.SetDt(m.cfg.Time.Dt)
	m.sch = s
	m.cfg.Scheme.Name = name
	m.wire()
	return nil
}

// wire sets the tendency the integrator uses: the scheme's alone when
// there is no dissipation (so that nothing changes, bit for bit), else the
// scheme's followed by adding D(u) to ∂u/∂t; the fused stage path has no
// place for the extra term, so it is used only without dissipation.
func (m *Model) wire() {
	s, d, nc := m.sch, m.dis, m.mesh.NumCells
	if d == nil {
		m.tend = s.Tendency
		m.stager, _ = s.(step.Stager)
		return
	}
	m.tend = func(dst, x []float64) {
		s.Tendency(dst, x)
		d.Add(dst[nc:], x[nc:])
	}
	m.stager = nil
}

// star is the edge Hodge star the dissipation and its grid scale use: the
// diagonal one of the orthogonal grids. A general edge Hodge star belongs
// here once the mesh carries one.
func (m *Model) star() ops.EdgeHodge { return m.grid.DiagonalHodge() }

// SetDissipation changes the explicit dissipation coefficients; the next
// step uses them. All zero removes the term.
func (m *Model) SetDissipation(c dissip.Coefficients) error {
	if err := c.Validate(); err != nil {
		return err
	}
	if c.Zero() {
		m.dis = nil
	} else {
		d, err := dissip.New(m.grid, m.star(), c, m.pool.For)
		if err != nil {
			return err
		}
		m.dis = d
	}
	m.cfg.Scheme.Viscosity, m.cfg.Scheme.Hyperviscosity, m.cfg.Scheme.DivergenceDamping = c.Viscosity, c.Hyperviscosity, c.DivergenceDamping
	if m.sch != nil {
		m.wire()
	}
	if m.integ != nil {
		m.integ.Restart()
	}
	return nil
}

// Dissipation returns the dissipation coefficients in effect.
func (m *Model) Dissipation() dissip.Coefficients { return m.cfg.Scheme.Dissipation() }

// Tendency sets dst = dx/dt of the current state as the integrator sees
// it: the scheme's tendency plus the dissipation.
func (m *Model) Tendency(dst []float64) { m.tend(dst, m.x) }

// Rates returns the instantaneous energy and potential-enstrophy rates of
// the current state, split into the scheme's term and the dissipation's.
// It evaluates one scheme tendency.
func (m *Model) Rates() dissip.Rates {
	if m.budget == nil {
		m.budget = dissip.NewBudget(m.grid, m.cfg.Physics.G, m.phys.FVertex, m.phys.Bottom)
		m.tendS = make([]float64, len(m.x))
		m.tendD = make([]float64, m.mesh.NumEdges)
	}
	m.sch.Tendency(m.tendS, m.x)
	var d []float64
	if m.dis != nil {
		m.dis.Tendency(m.tendD, m.x[m.mesh.NumCells:])
		d = m.tendD
	}
	return m.budget.Rates(m.x, m.tendS, d)
}

// GridScale returns the grid's spacing and largest discrete wavenumber,
// for choosing a dissipation coefficient by its grid-scale e-folding time
// (measured once per model).
func (m *Model) GridScale() dissip.GridScale {
	if m.scale == nil {
		s := dissip.MeasureGridScale(m.grid, m.star(), m.pool.For)
		m.scale = &s
	}
	return *m.scale
}

// SetScheme switches the scheme; the next step uses it on the same state.
func (m *Model) SetScheme(name string) error {
	if err := m.setScheme(name); err != nil {
		return err
	}
	m.integ.Restart()
	return nil
}

// SetIntegrator switches the time integrator.
func (m *Model) SetIntegrator(name string) error {
	in, err := step.New(name, len(m.x), step.Options{Asselin: m.cfg.Time.Asselin, For: m.pool.For})
	if err != nil {
		return err
	}
	m.integ = in
	m.rewind, _ = in.(step.Rewinder)
	m.staged, _ = in.(step.StagedStepper)
	if m.rewind == nil && m.good == nil {
		m.good = make([]float64, len(m.x))
	}
	m.cfg.Time.Integrator = name
	return nil
}

// SetDt changes the time step.
func (m *Model) SetDt(dt float64) error {
	if err := positive("time.dt", dt); err != nil {
		return err
	}
	m.cfg.Time.Dt = dt
	m.sch.SetDt(dt)
	m.integ.Restart()
	return nil
}

// Step advances the state by one time step. If the step produces a
// non-finite value or a non-positive depth, the state is put back as it
// was and a *BlowUpError is returned.
func (m *Model) Step() error {
	if m.rewind == nil {
		m.pool.For(len(m.x), m.keepFn)
	}
	if m.staged != nil && m.stager != nil {
		m.staged.StepStaged(m.stager, m.x, m.cfg.Time.Dt)
	} else {
		m.integ.Step(m.tend, m.x, m.cfg.Time.Dt)
	}
	if bad := m.check(); bad != nil {
		bad.Step, bad.Time = m.steps+1, m.time
		if m.rewind != nil {
			m.rewind.Rewind(m.x)
		} else {
			copy(m.x, m.good)
		}
		m.integ.Restart()
		return bad
	}
	m.steps++
	m.time += m.cfg.Time.Dt
	return nil
}

// checkBlock is the number of values check scans as one block.
const checkBlock = 512

// check returns the first bad value of the state, or nil. It runs after
// every step, on the pool: each block is scanned without a branch per
// value, and the culprit is looked for only in the first block that
// failed. Before the pool exists (the initial state) it runs serially.
func (m *Model) check() *BlowUpError {
	nb := m.depthBlocks() + (len(m.x)-m.mesh.NumCells+checkBlock-1)/checkBlock
	if len(m.blockBad) != nb {
		m.blockBad = make([]bool, nb)
		m.checkFn = m.checkBlocks
		m.keepFn = func(lo, hi int) { copy(m.good[lo:hi], m.x[lo:hi]) }
	}
	if m.pool != nil {
		m.pool.For(nb, m.checkFn)
	} else {
		m.checkBlocks(0, nb)
	}
	for k, bad := range m.blockBad {
		if bad {
			return m.culprit(k)
		}
	}
	return nil
}

// depthBlocks is the number of blocks of the depths; the velocities' blocks
// follow them.
func (m *Model) depthBlocks() int { return (m.mesh.NumCells + checkBlock - 1) / checkBlock }

// block returns the values of block k and whether they are depths.
func (m *Model) block(k int) (lo int, b []float64, depth bool) {
	nc, nh := m.mesh.NumCells, m.depthBlocks()
	if k < nh {
		lo = k * checkBlock
		return lo, m.x[lo:min(lo+checkBlock, nc)], true
	}
	lo = nc + (k-nh)*checkBlock
	return lo, m.x[lo:min(lo+checkBlock, len(m.x))], false
}

// checkBlocks marks the blocks in [lo, hi) that hold a bad value.
func (m *Model) checkBlocks(lo, hi int) {
	for k := lo; k < hi; k++ {
		_, b, depth := m.block(k)
		if depth {
			m.blockBad[k] = !allPositive(b)
		} else {
			m.blockBad[k] = !allFinite(b)
		}
	}
}

// culprit is the first bad value in block k, which failed the check.
func (m *Model) culprit(k int) *BlowUpError {
	lo, b, depth := m.block(k)
	for i, v := range b {
		if depth && !(v > 0 && v <= math.MaxFloat64) {
			return &BlowUpError{Cell: lo + i, Edge: -1, Value: v}
		}
		if !depth && v-v != 0 {
			return &BlowUpError{Cell: -1, Edge: lo + i - m.mesh.NumCells, Value: v}
		}
	}
	return nil // not reached: the block failed the check
}

// allPositive reports whether every value of b is positive and finite.
// The minimum catches v ≤ 0 and −Inf, the sum of v − v a NaN or +Inf; four
// independent lanes keep the additions from waiting on each other.
func allPositive(b []float64) bool {
	l0, l1, l2, l3 := math.Inf(1), math.Inf(1), math.Inf(1), math.Inf(1)
	var n0, n1, n2, n3 float64
	i := 0
	for ; i+4 <= len(b); i += 4 {
		v0, v1, v2, v3 := b[i], b[i+1], b[i+2], b[i+3]
		l0, l1, l2, l3 = min(l0, v0), min(l1, v1), min(l2, v2), min(l3, v3)
		n0, n1, n2, n3 = n0+(v0-v0), n1+(v1-v1), n2+(v2-v2), n3+(v3-v3)
	}
	for ; i < len(b); i++ {
		l0, n0 = min(l0, b[i]), n0+(b[i]-b[i])
	}
	return min(l0, l1, l2, l3) > 0 && n0+n1+n2+n3 == 0
}

// allFinite reports whether every value of b is finite: v − v is NaN for
// NaN and ±Inf, else 0.
func allFinite(b []float64) bool {
	var n0, n1, n2, n3 float64
	i := 0
	for ; i+4 <= len(b); i += 4 {
		n0, n1, n2, n3 = n0+(b[i]-b[i]), n1+(b[i+1]-b[i+1]), n2+(b[i+2]-b[i+2]), n3+(b[i+3]-b[i+3])
	}
	for ; i < len(b); i++ {
		n0 += b[i] - b[i]
	}
	return n0+n1+n2+n3 == 0
}

// SetState replaces the state (for example from a ring buffer of earlier
// states) and the simulated time.
func (m *Model) SetState(x []float64, time float64, steps int64) error {
	if len(x) != len(m.x) {
		return fmt.Errorf("state has %d values, the mesh needs %d", len(x), len(m.x))
	}
	copy(m.x, x)
	m.time, m.steps = time, steps
	m.integ.Restart()
	return nil
}

// Regrid returns a new model on another grid family or resolution of the
// same domain, carrying the current state over: depth and bottom height
// conservatively (total mass kept to round-off, a lake at rest stays at
// rest), velocity reconstructed at cell centres and projected on the new
// edge normals (package remap). Scheme, integrator, Δt, time, step count
// and the reference invariants carry over, so drifts stay relative to the
// run's start. The receiver is left unchanged and usable; the caller closes
// whichever model it drops.
func (m *Model) Regrid(kind string, n int) (*Model, error) {
	g := m.cfg.Grid
	g.SetKind(kind) // the relaxation is the icosahedral grid's; it does not carry to another family
	return m.RegridOptimize(kind, n, g.Optimize)
}

// RegridOptimize is Regrid that also sets grid.optimize ("none" or
// "lloyd", icosahedral grids only).
func (m *Model) RegridOptimize(kind string, n int, optimize string) (*Model, error) {
	cfg := m.cfg
	cfg.Grid.Kind, cfg.Grid.N, cfg.Grid.Optimize = kind, n, optimize
	if !m.mesh.Surface.Sphere {
		cfg.Grid.Height = m.mesh.Surface.Ly
		if !mesh.Kind(kind).OnSphere() && m.mesh.Surface.Ly == mesh.NaturalHeight(mesh.Kind(kind), n, cfg.Grid.Length) {
			cfg.Grid.Height = 0
		}
	}
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	msh, err := mesh.New(cfg.MeshSpec())
	if err != nil {
		return nil, err
	}
	r, err := remap.New(m.mesh, msh)
	if err != nil {
		return nil, fmt.Errorf("grid.kind = %q, grid.n = %d: %w", kind, n, err)
	}
	x := make([]float64, msh.NumCells+msh.NumEdges)
	r.Apply(x, m.x)
	var bottom []float64
	if m.phys.Bottom != nil {
		bottom = make([]float64, msh.NumCells)
		r.Cells(bottom, m.phys.Bottom)
	}
	nm, err := newModelOn(cfg, msh, m.workers, x, bottom)
	if err != nil {
		return nil, err
	}
	nm.time, nm.steps = m.time, m.steps
	nm.initial = m.initial
	return nm, nil
}
