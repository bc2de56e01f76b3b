package linear

import (
	"fmt"
	"math"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
	"gyrebench/sim/scheme"
)

// Operator is the shallow-water tendency linearised about the state of
// rest x₀ = [H | 0] on one mesh, evaluated through the scheme the
// nonlinear run uses. State vectors have the layout of package scheme:
// NumCells depths, then NumEdges normal velocities.
//
// An Operator is used by one goroutine; Close releases its worker pool.
type Operator struct {
	Mesh   *mesh.Mesh
	Scheme string

	grid   ops.Grid
	pool   *par.Pool
	sch    scheme.Scheme
	fv     []float64 // Coriolis parameter at vertices
	depth  float64
	g      float64
	nc, ne int

	// richardson: the tendency is of degree 3 in the velocity (apvm), so
	// central differences need one Richardson step; the other schemes are
	// of degree 2 and a central difference is exact.
	richardson bool

	rest   []float64 // x₀
	wsqrt  []float64 // S: square roots of the energy weights
	stepH  float64   // perturbation size for depth columns, m
	stepU  float64   // perturbation size for velocity columns, m s⁻¹
	xp, fp []float64 // scratch: perturbed state and its tendency
	fm, d1 []float64
	part   []float64 // scratch of Apply
	tmp    []float64
}

// validated returns a copy of cfg that passes sim's validation whatever
// the initial condition: the case plays no part in the linear analysis,
// but every other field is checked by the same rules as a run.
func validated(cfg sim.Config) (sim.Config, error) {
	c := cfg
	c.Initial.Case, c.Initial.Params = "gaussian-bump", nil
	if mesh.Kind(c.Grid.Kind).OnSphere() {
		c.Initial.Case = "williamson-2"
	}
	if err := c.Validate(); err != nil {
		return c, err
	}
	return c, nil
}

// NewOperator validates cfg and builds its mesh and scheme, about rest
// with depth physics.depth, flat bottom and the run's Coriolis parameter.
func NewOperator(cfg sim.Config) (*Operator, error) {
	cfg, err := validated(cfg)
	if err != nil {
		return nil, err
	}
	msh, err := mesh.New(cfg.MeshSpec())
	if err != nil {
		return nil, err
	}
	return newOperatorOn(cfg, msh)
}

func newOperatorOn(cfg sim.Config, msh *mesh.Mesh) (*Operator, error) {
	p := cfg.Physics
	grid, err := sim.HodgeGrid(msh, cfg.Scheme.Hodge)
	if err != nil {
		return nil, err
	}
	op := &Operator{
		Mesh: msh, Scheme: cfg.Scheme.Name,
		grid:  grid,
		pool:  par.New(1),
		fv:    sim.Coriolis(msh, p, [3]float64{0, 0, 1}), // rest: the axis of every case but tilted Williamson 2
		depth: p.Depth, g: p.G,
		nc: msh.NumCells, ne: msh.NumEdges,
		richardson: cfg.Scheme.Name == scheme.APVM,
	}
	sch, err := scheme.New(cfg.Scheme.Name, op.grid, scheme.Physics{G: p.G, FVertex: op.fv}, op.pool, scheme.Options{APVMFactor: cfg.Scheme.APVMFactor})
	if err != nil {
		op.pool.Close()
		return nil, err
	}
	sch.SetDt(cfg.Time.Dt)
	op.sch = sch
	n := op.nc + op.ne
	op.rest = make([]float64, n)
	for i := 0; i < op.nc; i++ {
		op.rest[i] = op.depth
	}
	op.wsqrt = make([]float64, n)
	for i := 0; i < op.nc; i++ {
		op.wsqrt[i] = math.Sqrt(op.g * msh.CellArea[i])
	}
	// The energy weights of the diagonal Hodge star. With a general one
	// (grid.Hodge) the kinetic energy H₀ vᵀ H v is not diagonal, so this
	// scaling no longer makes the operator exactly skew; its eigenvalues
	// do not depend on the scaling.
	for e := 0; e < op.ne; e++ {
		op.wsqrt[op.nc+e] = math.Sqrt(op.depth * msh.EdgeLength[e] * msh.DualLength[e])
	}
	// Depth columns: the tendency is exactly linear in h while u = 0 (every
	// term that is not −g∇h carries a factor u), so a large step costs no
	// truncation error and keeps g(H + δh) − gH free of cancellation.
	// Velocity columns: the tendency is a polynomial of degree 2 in u at
	// rest (degree 3 for apvm); a Froude number of 10⁻² keeps the quadratic
	// terms small against the linear ones.
	op.stepH = op.depth / 4
	op.stepU = 1e-2 * math.Sqrt(op.g*op.depth)
	op.xp, op.fp = make([]float64, n), make([]float64, n)
	op.fm, op.d1 = make([]float64, n), make([]float64, n)
	op.part, op.tmp = make([]float64, n), make([]float64, n)
	op.sch.Tendency(op.fp, op.rest)
	res := 0.0
	for _, v := range op.fp {
		res = max(res, math.Abs(v))
	}
	// At rest every flux vanishes and Φ = gH is uniform, so the tendency is
	// zero to round-off; the scale is that of a depth gradient of H.
	if res > 1e-12*op.g*op.depth/msh.Spacing() {
		op.Close()
		return nil, fmt.Errorf("linear: the state of rest is not steady for scheme %q (largest tendency %g)", cfg.Scheme.Name, res)
	}
	return op, nil
}

// Close releases the worker pool.
func (op *Operator) Close() { op.pool.Close() }

// Len returns the number of unknowns, NumCells + NumEdges.
func (op *Operator) Len() int { return op.nc + op.ne }

// Rest returns a copy of the state of rest x₀.
func (op *Operator) Rest() []float64 { return append([]float64(nil), op.rest...) }

// EnergyWeights returns w with ½ Σ_k w_k x'_k² the energy of a small
// perturbation x' of rest (Ringler et al. 2010, J. Comput. Phys. 229, §4,
// expanded to second order): w = g A_i on cells and H l_e d_e on edges.
// The kinetic energy Σ_i A_i h_i K_i with K_i = (1/A_i) Σ_e (l_e d_e/4) u_e²
// gives H Σ_e (l_e d_e/2) u_e², since every edge has two cells.
func (op *Operator) EnergyWeights() []float64 {
	w := make([]float64, len(op.wsqrt))
	for k, s := range op.wsqrt {
		w[k] = s * s
	}
	return w
}

// Tendency sets dst to the scheme's (nonlinear) tendency at x.
func (op *Operator) Tendency(dst, x []float64) { op.sch.Tendency(dst, x) }

// central sets dst = [F(x₀+s v) − F(x₀−s v)]/(2s) for the direction v.
func (op *Operator) central(dst, v []float64, s float64) {
	for k := range op.xp {
		op.xp[k] = op.rest[k] + s*v[k]
	}
	op.sch.Tendency(op.fp, op.xp)
	for k := range op.xp {
		op.xp[k] = op.rest[k] - s*v[k]
	}
	op.sch.Tendency(op.fm, op.xp)
	inv := 0.5 / s
	for k := range dst {
		dst[k] = (op.fp[k] - op.fm[k]) * inv
	}
}

// derivative sets dst = J v for a direction v that is either all depth or
// all velocity. F(x₀ + s v) − F(x₀ − s v) keeps only the odd powers of s.
// Along a depth direction F is linear (u = 0 removes every other term).
// Along a velocity direction F is a polynomial in s: of degree 2 for
// trisk-energy, trisk-enstrophy and al81 (fluxes and q are linear in u,
// their products and K quadratic), so the central difference D(s) is
// exact up to rounding; of degree 3 for apvm (the anticipated q carries
// u·∇q), where the Richardson combination [4 D(s/2) − D(s)]/3 removes the
// s² term and is exact again.
func (op *Operator) derivative(dst, v []float64, s float64) {
	if !op.richardson {
		op.central(dst, v, s)
		return
	}
	op.central(op.d1, v, s)
	op.central(dst, v, s/2)
	for k := range dst {
		dst[k] = (4*dst[k] - op.d1[k]) / 3
	}
}

// Apply sets dst = J v, the linearised tendency applied to v, without
// assembling J. It costs four tendency evaluations (eight for apvm).
func (op *Operator) Apply(dst, v []float64) {
	n := op.Len()
	if len(dst) != n || len(v) != n {
		panic(fmt.Sprintf("linear: Apply with %d and %d values for %d unknowns", len(dst), len(v), n))
	}
	for k := range dst {
		dst[k] = 0
	}
	part, tmp := op.part, op.tmp
	for _, r := range [][2]int{{0, op.nc}, {op.nc, n}} {
		big := 0.0
		for k := r[0]; k < r[1]; k++ {
			big = max(big, math.Abs(v[k]))
		}
		if big == 0 {
			continue
		}
		for k := range part {
			part[k] = 0
		}
		copy(part[r[0]:r[1]], v[r[0]:r[1]])
		s := op.stepU
		if r[0] == 0 {
			s = op.stepH
		}
		op.derivative(tmp, part, s/big)
		for k := range dst {
			dst[k] += tmp[k]
		}
	}
}

// Assemble returns J as a sparse matrix, one column per unknown, each
// column from the scheme's tendency by the central difference of
// derivative. Entries below 10⁻¹⁴ of their column's largest
// are rounding residue of the cancelled quadratic terms and are dropped.
func (op *Operator) Assemble() *CSR {
	n := op.Len()
	b := newBuilder(n)
	e := make([]float64, n)
	col := make([]float64, n)
	for j := 0; j < n; j++ {
		e[j] = 1
		s := op.stepU
		if j < op.nc {
			s = op.stepH
		}
		op.derivative(col, e, s)
		e[j] = 0
		big := 0.0
		for _, v := range col {
			big = max(big, math.Abs(v))
		}
		for i, v := range col {
			if v != 0 && math.Abs(v) > 1e-14*big {
				b.add(i, j, v)
			}
		}
	}
	return b.build()
}

// Scaled returns B = S J S⁻¹ with S = diag(√w) from EnergyWeights, the
// operator in coordinates where the perturbation energy is half the
// squared Euclidean norm. An energy-conserving scheme makes B
// antisymmetric.
func (op *Operator) Scaled(j *CSR) *CSR {
	b := j.clone()
	for r := 0; r < b.N; r++ {
		for k := b.RowStart[r]; k < b.RowStart[r+1]; k++ {
			b.Value[k] *= op.wsqrt[r] / op.wsqrt[b.Col[k]]
		}
	}
	return b
}
