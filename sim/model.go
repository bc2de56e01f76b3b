package sim

import (
	"fmt"
	"math"
	"runtime"
	"strings"

	"gyrebench/sim/cases"
	"gyrebench/sim/diag"
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

	x     []float64 // state [h | u]
	good  []float64 // the state before the step in progress, when rewind is nil
	time  float64
	steps int64

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
	m.tend = s.Tendency
	m.stager, _ = s.(step.Stager)
	m.cfg.Scheme.Name = name
	return nil
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
		copy(m.good, m.x)
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

// check returns the first bad value of the state, or nil. It scans blocks
// without a branch per value and looks for the culprit only in a block
// that failed: the scan runs after every step.
func (m *Model) check() *BlowUpError {
	nc := m.mesh.NumCells
	const block = 512
	h, u := m.x[:nc], m.x[nc:]
	for lo := 0; lo < len(h); lo += block {
		b := h[lo:min(lo+block, len(h))]
		// min catches h ≤ 0 and −Inf, the sum of h − h a NaN or +Inf.
		low, nan := math.Inf(1), 0.0
		for _, v := range b {
			low = min(low, v)
			nan += v - v
		}
		if low > 0 && nan == 0 {
			continue
		}
		for i, v := range b {
			if !(v > 0 && v <= math.MaxFloat64) {
				return &BlowUpError{Cell: lo + i, Edge: -1, Value: v}
			}
		}
	}
	for lo := 0; lo < len(u); lo += block {
		b := u[lo:min(lo+block, len(u))]
		nan := 0.0
		for _, v := range b {
			nan += v - v // NaN for NaN and ±Inf, else 0
		}
		if nan == 0 {
			continue
		}
		for e, v := range b {
			if v-v != 0 {
				return &BlowUpError{Cell: -1, Edge: lo + e, Value: v}
			}
		}
	}
	return nil
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
