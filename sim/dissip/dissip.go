// Package dissip holds the explicit dissipation of gyrebench's momentum
// equation and the energy and potential-enstrophy budgets that separate
// it from a scheme's own spatial error.
//
// The dissipation adds to ∂u/∂t, after the scheme's tendency,
//
//	D(u) = ν₂ ∇²u − ν₄ ∇⁴u + ν_δ ∇δ,
//
// with ∇² the C-grid vector Laplacian ∇δ + k×∇ζ of ops.VectorLaplacian,
// ∇⁴ = ∇²(∇²·) the same operator applied twice, and ν_δ an extra
// divergence damping that acts on the divergent part only (Ringler,
// Thuburn, Klemp & Skamarock 2010, J. Comput. Phys. 229, 3065–3090, their
// discussion of dissipation: from memory). ∂h/∂t is untouched, so mass
// stays exact. In the energy inner product Σ_e l_e d_e u_e v_e each term is
// negative semi-definite (ops.VectorLaplacian), so at uniform depth D
// removes kinetic energy; with varying depth the thickness-weighted product
// of the energy budget is not sign-definite in principle, and Rates
// reports what it is.
package dissip

import (
	"fmt"
	"math"

	"gyrebench/sim/ops"
)

// Coefficients are the dissipation coefficients, the scenario's
// scheme.viscosity, scheme.hyperviscosity and scheme.divergence_damping.
type Coefficients struct {
	Viscosity         float64 // ν₂, m² s⁻¹
	Hyperviscosity    float64 // ν₄, m⁴ s⁻¹
	DivergenceDamping float64 // ν_δ, m² s⁻¹
}

// Zero reports whether every coefficient is zero: no dissipation at all.
func (c Coefficients) Zero() bool {
	return c.Viscosity == 0 && c.Hyperviscosity == 0 && c.DivergenceDamping == 0
}

// Validate checks that every coefficient is finite and ≥ 0; its error
// names the key, the value and what is allowed.
func (c Coefficients) Validate() error {
	for _, k := range []struct {
		name, unit string
		v          float64
	}{
		{"scheme.viscosity", "m² s⁻¹", c.Viscosity},
		{"scheme.hyperviscosity", "m⁴ s⁻¹", c.Hyperviscosity},
		{"scheme.divergence_damping", "m² s⁻¹", c.DivergenceDamping},
	} {
		if !(k.v >= 0) || math.IsInf(k.v, 0) {
			return fmt.Errorf("%s = %g: must be a finite number ≥ 0 (%s); 0 turns it off", k.name, k.v, k.unit)
		}
	}
	return nil
}

// String describes the nonzero coefficients for people, e.g.
// "ν₄ = 1e+12 m⁴/s"; "" when all are zero.
func (c Coefficients) String() string {
	s := ""
	add := func(part string) {
		if s != "" {
			s += ", "
		}
		s += part
	}
	if c.Viscosity != 0 {
		add(fmt.Sprintf("ν₂ = %.4g m²/s", c.Viscosity))
	}
	if c.Hyperviscosity != 0 {
		add(fmt.Sprintf("ν₄ = %.4g m⁴/s", c.Hyperviscosity))
	}
	if c.DivergenceDamping != 0 {
		add(fmt.Sprintf("ν_δ = %.4g m²/s", c.DivergenceDamping))
	}
	return s
}

// Operator evaluates D(u) on one grid. It holds scratch for one
// evaluation and serves one goroutine at a time.
type Operator struct {
	c       Coefficients
	lap     *ops.VectorLaplacian
	run     func(n int, body func(lo, hi int))
	a, b, t []float64 // edge scratch

	dst   []float64
	apply func(lo, hi int)
}

// New returns the dissipation operator of g with edge Hodge star star and
// coefficients c. run runs its loops (par.Pool.For, or nil for the
// calling goroutine); results do not depend on how it splits them.
func New(g ops.Grid, star ops.EdgeHodge, c Coefficients, run func(n int, body func(lo, hi int))) (*Operator, error) {
	if err := c.Validate(); err != nil {
		return nil, err
	}
	if run == nil {
		run = func(n int, body func(lo, hi int)) { body(0, n) }
	}
	o := &Operator{c: c, lap: ops.NewVectorLaplacian(g, star), run: run,
		a: make([]float64, g.NumEdges), b: make([]float64, g.NumEdges), t: make([]float64, g.NumEdges)}
	o.apply = o.addPass
	return o, nil
}

// Coefficients returns the operator's coefficients.
func (o *Operator) Coefficients() Coefficients { return o.c }

// Add adds D(u) to dst (both on edges). It allocates nothing.
func (o *Operator) Add(dst, u []float64) {
	c := o.c
	clear(o.a)
	clear(o.b)
	if c.Viscosity != 0 || c.DivergenceDamping != 0 {
		o.lap.Apply(o.a, u, c.Viscosity+c.DivergenceDamping, c.Viscosity, o.run)
	}
	if c.Hyperviscosity != 0 {
		o.lap.Apply(o.t, u, 1, 1, o.run)
		o.lap.Apply(o.b, o.t, -c.Hyperviscosity, -c.Hyperviscosity, o.run)
	}
	o.dst = dst
	o.run(len(dst), o.apply)
	o.dst = nil
}

// Tendency sets dst = D(u).
func (o *Operator) Tendency(dst, u []float64) {
	clear(dst)
	o.Add(dst, u)
}

func (o *Operator) addPass(lo, hi int) {
	dst, a, b := o.dst[lo:hi], o.a[lo:hi], o.b[lo:hi]
	a, b = a[:len(dst)], b[:len(dst)]
	for e := range dst {
		dst[e] += a[e] + b[e]
	}
}
