package mesh

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// perturbedPlane rebuilds the planar mesh base with every vertex moved by
// a smooth periodic displacement of amplitude distort (fraction of the
// spacing) plus a random one of amplitude jitter, and every cell centre at
// the mean of its vertices: the topology is kept and the dual is no
// longer orthogonal. A test-local grid for the Hodge star only.
func perturbedPlane(t *testing.T, base *Mesh, distort, jitter float64, seed uint64) *Mesh {
	t.Helper()
	lx, ly := base.Surface.Lx, base.Surface.Ly
	deg := len(base.CellVertices) / base.NumCells
	p := newPlaneCells(lx, ly, base.NumCells, base.NumVertices, deg)
	dx := base.Spacing()
	rng := rand.New(rand.NewPCG(seed, 7))
	for v := 0; v < base.NumVertices; v++ {
		x, y := base.VertexX[v], base.VertexY[v]
		ax := distort*dx*math.Sin(2*math.Pi*y/ly)*math.Cos(2*math.Pi*x/lx) + jitter*dx*(rng.Float64()-0.5)
		ay := distort*dx*math.Sin(2*math.Pi*x/lx)*math.Cos(4*math.Pi*y/ly) + jitter*dx*(rng.Float64()-0.5)
		p.vx = append(p.vx, math.Mod(x+ax+lx, lx))
		p.vy = append(p.vy, math.Mod(y+ay+ly, ly))
	}
	for i := 0; i < base.NumCells; i++ {
		lo, hi := base.EdgesOfCell(i)
		// CellVertices[k] follows side k: the polygon starts at the last.
		vs := append([]int32{base.CellVertices[hi-1]}, base.CellVertices[lo:hi-1]...)
		p.cellVerts = append(p.cellVerts, vs...)
		var sx, sy float64
		for _, v := range vs {
			sx += wrap(p.vx[v]-p.vx[vs[0]], lx)
			sy += wrap(p.vy[v]-p.vy[vs[0]], ly)
		}
		n := float64(len(vs))
		p.cx = append(p.cx, math.Mod(p.vx[vs[0]]+sx/n+lx, lx))
		p.cy = append(p.cy, math.Mod(p.vy[vs[0]]+sy/n+ly, ly))
	}
	return p.build(base.Kind, base.N)
}

type hodgeCase struct {
	name string
	m    *Mesh
}

func distortedMeshes(t *testing.T) []hodgeCase {
	t.Helper()
	var cs []hodgeCase
	for _, k := range []Kind{Quad, Hex, Tri} {
		base, err := New(Spec{Kind: k, N: 8, Length: 1e6})
		if err != nil {
			t.Fatal(err)
		}
		cs = append(cs,
			hodgeCase{string(k) + " distort 0.2", perturbedPlane(t, base, 0.2, 0, 1)},
			hodgeCase{string(k) + " jitter 0.2", perturbedPlane(t, base, 0, 0.2, 3)})
	}
	return cs
}

// The construction reduces to diag(l/d) on the circumcentric grids, so the
// existing grids keep their diagonal Hodge star (see ConsistentHodge). The
// reduction is an identity in exact arithmetic; the stabilisation adds
// Λ − A PᵀP to A PᵀP, which costs a few ulps (measured ≤ 1.5e-15 relative
// on hexagons, 0 on squares), hence the bound of 2e-15.
func TestConsistentHodgeIsDiagonalOnOrthogonalGrids(t *testing.T) {
	for _, m := range planarMeshes(t) {
		h, err := ConsistentHodge(m)
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for e := 0; e < m.NumEdges; e++ {
			diag := m.EdgeLength[e] / m.DualLength[e]
			for k := h.Start[e]; k < h.Start[e+1]; k++ {
				want := 0.0
				if int(h.Col[k]) == e {
					want = diag
				}
				worst = max(worst, math.Abs(h.Val[k]-want)/diag)
			}
		}
		if worst > 2e-15 {
			t.Errorf("%s n=%d %gx%g: max |H − diag(l/d)| / (l/d) = %.3g, want ≤ 2e-15", m.Kind, m.N, m.Surface.Lx, m.Surface.Ly, worst)
		}
		if err := EnsureHodge(m); err != nil || m.Hodge != nil {
			t.Errorf("%s n=%d: EnsureHodge on an orthogonal grid stored a matrix (err %v)", m.Kind, m.N, err)
		}
	}
}

func denseHodge(m *Mesh, h *Hodge) *mat.SymDense {
	a := mat.NewSymDense(m.NumEdges, nil)
	for e := 0; e < m.NumEdges; e++ {
		for k := h.Start[e]; k < h.Start[e+1]; k++ {
			if f := int(h.Col[k]); f >= e {
				a.SetSym(e, f, h.Val[k])
			}
		}
	}
	return a
}

// Symmetric bit for bit, positive definite (a Cholesky factorisation
// exists and the smallest eigenvalue is positive), and exact for uniform
// flow: H N w = flux of w (Brezzi, Lipnikov & Shashkov 2005: the
// consistency condition of the mimetic inner product).
func TestConsistentHodgeOnDistortedPlanes(t *testing.T) {
	for _, c := range distortedMeshes(t) {
		m := c.m
		if dev := DualNonOrthogonality(m); dev < 0.05 {
			t.Fatalf("%s: dual deviation |cos| = %g, the test grid is too regular", c.name, dev)
		}
		if err := EnsureHodge(m); err != nil || m.Hodge == nil {
			t.Fatalf("%s: EnsureHodge stored no matrix (err %v)", c.name, err)
		}
		h := m.Hodge
		for e := 0; e < m.NumEdges; e++ {
			if h.Col[h.Start[e]] != int32(e) {
				t.Fatalf("%s: row %d does not start with its diagonal", c.name, e)
			}
			for k := h.Start[e]; k < h.Start[e+1]; k++ {
				if f := int(h.Col[k]); h.At(f, e) != h.Val[k] {
					t.Fatalf("%s: H[%d][%d] = %v but H[%d][%d] = %v", c.name, e, f, h.Val[k], f, e, h.At(f, e))
				}
			}
		}
		a := denseHodge(m, h)
		var ch mat.Cholesky
		if !ch.Factorize(a) {
			t.Errorf("%s: Cholesky factorisation of H failed", c.name)
		}
		var eig mat.EigenSym
		if !eig.Factorize(a, false) {
			t.Fatalf("%s: eigen-decomposition failed", c.name)
		}
		ev := eig.Values(nil)
		if ev[0] <= 0 {
			t.Errorf("%s: min eigenvalue of H = %g, want > 0", c.name, ev[0])
		}
		t.Logf("%s: dual |cos| ≤ %.3f, H eigenvalues in [%.4g, %.4g]", c.name, DualNonOrthogonality(m), ev[0], ev[len(ev)-1])

		for _, w := range [][2]float64{{1, 0}, {0, 1}, {0.6, -0.8}} {
			v := make([]float64, m.NumEdges)
			for e := range v {
				d := m.delta(int(m.EdgeCells[2*e]), int(m.EdgeCells[2*e+1]), true, true)
				v[e] = w[0]*d[0] + w[1]*d[1]
			}
			hv := make([]float64, m.NumEdges)
			h.Apply(hv, v, 0, m.NumEdges)
			worst, scale := 0.0, 0.0
			for e := range hv {
				tv := m.delta(int(m.EdgeVertices[2*e]), int(m.EdgeVertices[2*e+1]), false, false)
				want := tv[1]*w[0] - tv[0]*w[1] // J(x_v0 − x_v1)·w = l n·w
				worst = max(worst, math.Abs(hv[e]-want))
				scale = max(scale, math.Abs(want))
			}
			if worst > 1e-12*scale {
				t.Errorf("%s: uniform flow %v: max |H N w − flux| = %.3g of %.3g, want ≤ 1e-12 relative", c.name, w, worst, scale)
			}
		}
	}
}
