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
// With a general edge Hodge star H (the grid's Metric.Hodge, on grids
// whose dual is not orthogonal) the kinetic part of E is
// ½ Σ_e h_e v_e (H v)_e with v_e = d_e u_e, the energy whose variation the
// schemes use (Thuburn & Cotter 2012, SIAM J. Sci. Comput. 34, B203–B225,
// from memory); H = diag(l/d) gives the form above.
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

// Calculator computes invariants and derived fields. It works through the
// mesh in fixed chunks with small scratch buffers, so it costs almost no
// memory beside the model.
type Calculator struct {
	g    ops.Grid
	grav float64
	f, b []float64
	a, c []float64 // chunk scratch
	v    []float64 // edges: d_e u_e, only with a general Hodge star
}

// chunk is the number of elements processed at a time.
const chunk = 2048

// New returns a calculator for the grid, gravity, Coriolis parameter at
// vertices and bottom height at cells (nil for flat).
func New(g ops.Grid, grav float64, fVertex, bottom []float64) *Calculator {
	c := &Calculator{g: g, grav: grav, f: fVertex, b: bottom, a: make([]float64, chunk), c: make([]float64, chunk)}
	if g.Hodge != nil {
		c.v = make([]float64, g.NumEdges)
	}
	return c
}

// circulations fills c.v with v_e = d_e u_e.
func (c *Calculator) circulations(u []float64) {
	for e, ue := range u {
		c.v[e] = c.g.DualLength[e] * ue
	}
}

// Compute returns the invariants of x = [h | u] for time step dt.
func (c *Calculator) Compute(x []float64, dt float64) Invariants {
	g := c.g
	nc := g.NumCells
	h, u := x[:nc], x[nc:]
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
	he, flx := c.a, c.c
	if c.v != nil {
		c.circulations(u)
	}
	for lo := 0; lo < g.NumEdges; lo += chunk {
		hi := min(lo+chunk, g.NumEdges)
		g.EdgeFlux(he, flx, h, u, lo, hi)
		if c.v != nil {
			g.Hodge.Apply(flx, c.v, lo, hi) // H v over the chunk
		}
		for e := lo; e < hi; e++ {
			ue, hm, d := u[e], he[e-lo], g.DualLength[e]
			if c.v != nil {
				inv.Energy += 0.5 * hm * c.v[e] * flx[e-lo]
			} else {
				inv.Energy += 0.5 * g.EdgeLength[e] * d * hm * ue * ue
			}
			s := math.Abs(ue)
			inv.MaxSpeed = max(inv.MaxSpeed, s)
			inv.CourantAdvective = max(inv.CourantAdvective, s*dt/d)
			inv.CourantGravity = max(inv.CourantGravity, math.Sqrt(c.grav*math.Max(hm, 0))*dt/d)
		}
	}
	zeta, hv := c.a, c.c
	for lo := 0; lo < g.NumVertices; lo += chunk {
		hi := min(lo+chunk, g.NumVertices)
		g.Vorticity(zeta, hv, u, h, lo, hi)
		for v := lo; v < hi; v++ {
			eta := zeta[v-lo] + c.f[v]
			a := g.VertexArea[v]
			inv.Circulation += a * eta
			inv.PotentialEnstrophy += 0.5 * a * eta * eta / hv[v-lo]
		}
	}
	return inv
}

// Vorticity fills zeta with the relative vorticity at vertices and pv with
// the potential vorticity (either may be nil).
func (c *Calculator) Vorticity(zeta, pv, x []float64) {
	g := c.g
	nc := g.NumCells
	z, hv := c.a, c.c
	for lo := 0; lo < g.NumVertices; lo += chunk {
		hi := min(lo+chunk, g.NumVertices)
		g.Vorticity(z, hv, x[nc:], x[:nc], lo, hi)
		for v := lo; v < hi; v++ {
			if zeta != nil {
				zeta[v] = z[v-lo]
			}
			if pv != nil {
				pv[v] = (z[v-lo] + c.f[v]) / hv[v-lo]
			}
		}
	}
}

// Divergence fills div with ∇·u at cells (velocity, not mass flux).
func (c *Calculator) Divergence(div, x []float64) {
	g := c.g
	nc := g.NumCells
	u := x[nc:]
	lu := make([]float64, g.NumEdges) // not a hot path: drawn on request
	if c.v != nil {
		c.circulations(u)
		g.Hodge.Apply(lu, c.v, 0, g.NumEdges) // H v, the flux per unit depth
	} else {
		for e, ue := range u {
			lu[e] = g.EdgeLength[e] * ue
		}
	}
	g.DivKE(div, nil, lu, u, 0, nc)
}

// KineticEnergy fills ke with K = |u|²/2 at cells:
// K_i = (1/4A_i) Σ_e v_e (H v)_e, which is (1/4A_i) Σ_e l_e d_e u_e² for
// the diagonal Hodge star.
func (c *Calculator) KineticEnergy(ke, x []float64) {
	g := c.g
	nc := g.NumCells
	if c.v == nil {
		g.DivKE(nil, ke, x[nc:], x[nc:], 0, nc)
		return
	}
	c.circulations(x[nc:])
	hv := make([]float64, g.NumEdges) // not a hot path: drawn on request
	g.Hodge.Apply(hv, c.v, 0, g.NumEdges)
	for i := 0; i < nc; i++ {
		s := 0.0
		for k := g.CellEdgeStart[i]; k < g.CellEdgeStart[i+1]; k++ {
			e := g.CellEdges[k]
			s += c.v[e] * hv[e]
		}
		ke[i] = 0.25 * s / g.CellArea[i]
	}
}

// RelDrift returns (now − start)/|start|, or now − start when start is 0.
func RelDrift(now, start float64) float64 {
	if start == 0 {
		return now
	}
	return (now - start) / math.Abs(start)
}

// Norms are the normalised error norms of Williamson, Drake, Hack, Jakob &
// Swarztrauber (1992, J. Comput. Phys. 102, 211–224; definitions from
// memory): with I the area-weighted
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
