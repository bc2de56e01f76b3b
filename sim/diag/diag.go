// Package diag computes the invariants and norms of a shallow-water state:
// mass, total energy, potential enstrophy, circulation, depth extrema,
// Courant numbers, and the error norms of Williamson et al. (1992).
//
// The definitions are the discrete ones the conserving schemes conserve
// (Ringler, Thuburn, Klemp & Skamarock 2010, J. Comput. Phys. 229, §4–5):
//
//	M = Σ_i A_i h_i
//	E = Σ_e (l_e d_e / 2) h_e u_e² + Σ_i A_i g (h_i²/2 + h_i b_i)
//	Z = Σ_v A_v (ζ_v + f_v)² / (2 h_v)
//	C = Σ_v A_v (ζ_v + f_v)
//
// Sums run serially in index order, so they are bit-identical whatever
// the number of workers used by the scheme.
package diag

import (
	"math"

	"gyrebench/sim/ops"
)

// Invariants of one state.
type Invariants struct {
	Mass               float64 // m³
	Energy             float64 // m⁵ s⁻² (energy per unit density)
	PotentialEnstrophy float64 // m s⁻², Σ_v A_v h_v q_v²/2
	Circulation        float64 // m² s⁻¹, absolute
	HMin, HMax         float64 // m
	HMinCell           int
	CourantGravity     float64 // max over edges of √(g h_e) Δt / d_e
	CourantAdvective   float64 // max over edges of |u_e| Δt / d_e
	MaxSpeed           float64 // max |u_e|, m/s
}

// Calculator computes invariants, reusing its scratch space.
type Calculator struct {
	g       ops.Grid
	grav    float64
	f, b    []float64
	he, flx []float64
	zeta    []float64
	hv      []float64
}

// New returns a calculator for the grid, gravity, Coriolis parameter at
// vertices and bottom height at cells (nil for flat).
func New(g ops.Grid, grav float64, fVertex, bottom []float64) *Calculator {
	return &Calculator{
		g: g, grav: grav, f: fVertex, b: bottom,
		he: make([]float64, g.NEdges), flx: make([]float64, g.NEdges),
		zeta: make([]float64, g.NVertices), hv: make([]float64, g.NVertices),
	}
}

// Compute returns the invariants of x = [h | u] for time step dt.
func (c *Calculator) Compute(x []float64, dt float64) Invariants {
	g := c.g
	nc := g.NCells
	h, u := x[:nc], x[nc:]
	g.EdgeFlux(c.he, c.flx, h, u, 0, g.NEdges)
	g.Vorticity(c.zeta, c.hv, u, h, 0, g.NVertices)
	inv := Invariants{HMin: math.Inf(1), HMax: math.Inf(-1)}
	for i, hi := range h {
		a := g.CellArea[i]
		inv.Mass += a * hi
		p := 0.5 * hi * hi
		if c.b != nil {
			p += hi * c.b[i]
		}
		inv.Energy += a * c.grav * p
		if hi < inv.HMin {
			inv.HMin, inv.HMinCell = hi, i
		}
		inv.HMax = max(inv.HMax, hi)
	}
	for e, ue := range u {
		inv.Energy += 0.5 * g.EdgeLength[e] * g.DualLength[e] * c.he[e] * ue * ue
		s := math.Abs(ue)
		inv.MaxSpeed = max(inv.MaxSpeed, s)
		inv.CourantAdvective = max(inv.CourantAdvective, s*dt/g.DualLength[e])
		inv.CourantGravity = max(inv.CourantGravity, math.Sqrt(c.grav*math.Max(c.he[e], 0))*dt/g.DualLength[e])
	}
	for v := range c.zeta {
		eta := c.zeta[v] + c.f[v]
		a := g.VertexArea[v]
		inv.Circulation += a * eta
		inv.PotentialEnstrophy += 0.5 * a * eta * eta / c.hv[v]
	}
	return inv
}

// Vorticity fills zeta with the relative vorticity at vertices and pv with
// the potential vorticity (either may be nil).
func (c *Calculator) Vorticity(zeta, pv, x []float64) {
	g := c.g
	nc := g.NCells
	if zeta == nil {
		zeta = c.zeta
	}
	g.Vorticity(zeta, c.hv, x[nc:], x[:nc], 0, g.NVertices)
	if pv != nil {
		for v := range pv {
			pv[v] = (zeta[v] + c.f[v]) / c.hv[v]
		}
	}
}

// Divergence fills div with ∇·u at cells (velocity, not mass flux).
func (c *Calculator) Divergence(div, x []float64) {
	g := c.g
	nc := g.NCells
	u := x[nc:]
	for e, ue := range u {
		c.flx[e] = g.EdgeLength[e] * ue
	}
	g.DivKE(div, nil, c.flx, u, 0, nc)
}

// KineticEnergy fills ke with K = |u|²/2 at cells.
func (c *Calculator) KineticEnergy(ke, x []float64) {
	g := c.g
	nc := g.NCells
	g.DivKE(nil, ke, x[nc:], x[nc:], 0, nc)
}

// RelDrift returns (now − start)/|start|, or now − start when start is 0.
func RelDrift(now, start float64) float64 {
	if start == 0 {
		return now
	}
	return (now - start) / math.Abs(start)
}

// Norms are the normalised error norms of Williamson, Drake, Hack, Jakob &
// Swarztrauber (1992, J. Comput. Phys. 102, 211–224; definitions as
// recalled in references.md §1.3, from memory): with I the area-weighted
// mean,
//
//	l1 = I(|h − h_T|)/I(|h_T|), l2 = √I((h − h_T)²)/√I(h_T²),
//	l∞ = max|h − h_T| / max|h_T|.
type Norms struct{ L1, L2, LInf float64 }

// ErrorNorms returns the norms of h against the reference hT with cell
// areas as weights.
func ErrorNorms(h, hT, area []float64) Norms {
	var n1, d1, n2, d2, ni, di float64
	for i := range h {
		e := math.Abs(h[i] - hT[i])
		r := math.Abs(hT[i])
		n1 += area[i] * e
		d1 += area[i] * r
		n2 += area[i] * e * e
		d2 += area[i] * r * r
		ni = max(ni, e)
		di = max(di, r)
	}
	return Norms{L1: n1 / d1, L2: math.Sqrt(n2 / d2), LInf: ni / di}
}
