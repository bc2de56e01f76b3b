package mesh

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Limits of the planar distortions (Spec.Distort, Spec.Jitter). Below them
// every cell stays strictly convex and every dual edge crosses its primal
// edge inside both segments at n ≥ 4 (the build checks both and fails with
// a message otherwise).
const (
	// MaxDistort bounds the smooth distortion: the displacement gradient
	// is at most 2·Distort (at most Distort on a square domain), so the
	// map stays one-to-one with a Jacobian determinant ≥ 1 − Distort.
	MaxDistort = 0.3
	// MaxJitter bounds the random displacement radius, in edge lengths: a
	// regular hexagon's corner is half an edge from the chord through its
	// two neighbours, so two displacements below a quarter edge each
	// cannot fold it. With a smooth distortion as well the bound is
	// MaxJitter·(1 − 2·Distort), since the distortion shrinks that corner
	// distance by up to that factor.
	MaxJitter = 0.25
)

// JitterLimit returns the exclusive upper bound of Spec.Jitter for a given
// Spec.Distort.
func JitterLimit(distort float64) float64 { return MaxJitter * (1 - 2*distort) }

func (s Spec) checkDistortion() error {
	if !(s.Distort >= 0 && s.Distort < MaxDistort) {
		return fmt.Errorf("grid.distort = %g: must be ≥ 0 and < %g (a fraction of the spacing)", s.Distort, MaxDistort)
	}
	if lim := JitterLimit(s.Distort); !(s.Jitter >= 0 && s.Jitter < lim) {
		if s.Distort > 0 {
			return fmt.Errorf("grid.jitter = %g: must be ≥ 0 and < %.4g (a fraction of the edge length; %g·(1 − 2·grid.distort) with grid.distort = %g)", s.Jitter, lim, MaxJitter, s.Distort)
		}
		return fmt.Errorf("grid.jitter = %g: must be ≥ 0 and < %g (a fraction of the edge length)", s.Jitter, lim)
	}
	return nil
}

// distort moves the vertices of a regular planar mesh, keeping its
// topology and its doubly periodic domain, and rebuilds its geometry with
// the general (non-orthogonal) path.
//
// The smooth distortion is the doubly periodic map
//
//	δx = a (Lx/2π) sin(2πx/Lx) sin(2πy/Ly),
//	δy = a (Ly/2π) sin(2πx/Lx) sin(2πy/Ly),
//
// with a = Distort: neighbouring vertices one spacing h apart move
// relative to each other by at most about a·h (2a·h on the stretched
// domains), and the map is the same at every resolution, so the grid does
// not become orthogonal under refinement. Its Jacobian determinant is
// 1 + a sin(2πx/Lx + 2πy/Ly) ≥ 1 − a.
//
// The jitter then moves every vertex, in index order, by a displacement
// uniform in the disc of radius Jitter × (shortest edge of the regular
// mesh), drawn from a PCG generator seeded by (Seed, 0x6a69747465720000).
//
// Cell centres are the area centroids of the displaced polygons (not their
// circumcentres, which a distorted cell does not have, and not a Voronoi
// construction), so the dual edges are genuinely not orthogonal to the
// primal edges.
func (m *Mesh) distort(spec Spec) error {
	c := &m.Coords
	lx, ly := m.Surface.Lx, m.Surface.Ly
	a := spec.Distort
	h := math.Inf(1)
	for _, l := range m.EdgeLength {
		h = min(h, l)
	}
	rng := rand.New(rand.NewPCG(spec.Seed, 0x6a69747465720000))
	// New slices: the regular mesh may share its position arrays with the
	// mesh it was the dual of.
	vx, vy := make([]float64, m.NumVertices), make([]float64, m.NumVertices)
	for v := range vx {
		x, y := c.VertexX[v], c.VertexY[v]
		s := math.Sin(2*math.Pi*x/lx) * math.Sin(2*math.Pi*y/ly)
		x += a * lx / (2 * math.Pi) * s
		y += a * ly / (2 * math.Pi) * s
		if spec.Jitter > 0 {
			r := spec.Jitter * h * math.Sqrt(rng.Float64())
			th := 2 * math.Pi * rng.Float64()
			x += r * math.Cos(th)
			y += r * math.Sin(th)
		}
		vx[v] = math.Mod(math.Mod(x, lx)+lx, lx)
		vy[v] = math.Mod(math.Mod(y, ly)+ly, ly)
	}
	c.VertexX, c.VertexY = vx, vy
	// Area centroids of the polygons, with the corners unwrapped about the
	// first one.
	cx, cy := make([]float64, m.NumCells), make([]float64, m.NumCells)
	for i := range cx {
		lo, hi := m.EdgesOfCell(i)
		v0 := m.CellVertices[lo]
		var area, mx, my float64
		px, py := 0.0, 0.0
		for k := lo + 1; k <= hi; k++ {
			v := m.CellVertices[lo+(k-lo)%(hi-lo)]
			qx, qy := wrap(vx[v]-vx[v0], lx), wrap(vy[v]-vy[v0], ly)
			cr := px*qy - py*qx
			area += cr
			mx += (px + qx) * cr
			my += (py + qy) * cr
			px, py = qx, qy
		}
		if !(area > 0) {
			return fmt.Errorf("grid.distort = %g, grid.jitter = %g: cell %d is folded; use smaller values", spec.Distort, spec.Jitter, i)
		}
		cx[i] = math.Mod(vx[v0]+mx/(3*area)+lx, lx)
		cy[i] = math.Mod(vy[v0]+my/(3*area)+ly, ly)
	}
	c.CellX, c.CellY = cx, cy
	m.Orthogonal = false
	if err := m.planeGeometry(); err != nil {
		return fmt.Errorf("grid.distort = %g, grid.jitter = %g with grid.n = %d: %w; use smaller values or a finer grid", spec.Distort, spec.Jitter, spec.N, err)
	}
	return nil
}
