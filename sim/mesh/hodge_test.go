package mesh

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

type hodgeCase struct {
	name string
	m    *Mesh
}

func hodgeTestMeshes(t *testing.T) []hodgeCase {
	t.Helper()
	var ms []hodgeCase
	for _, k := range []Kind{Quad, Hex, Tri} {
		for _, s := range []Spec{
			{N: 8, Distort: 0.2},
			{N: 8, Jitter: 0.2, Seed: 3},
			{N: 8, Distort: 0.15, Jitter: 0.1, Seed: 5},
		} {
			s.Kind, s.Length = k, 1e6
			m, err := New(s)
			if err != nil {
				t.Fatal(err)
			}
			ms = append(ms, hodgeCase{fmt.Sprintf("%s n=%d distort %g jitter %g", k, s.N, s.Distort, s.Jitter), m})
		}
	}
	return ms
}

// The construction reduces to diag(l/d) on the circumcentric grids, so the
// existing grids keep their diagonal Hodge star (see ConsistentHodge). The
// reduction is an identity in exact arithmetic; the stabilisation adds
// Λ − A PᵀP to A PᵀP, which costs a few ulps (measured up to 1.4e-15 relative
// on hexagons, 7e-16 on squares and triangles), hence the bound of 2e-15.
func TestConsistentHodgeIsDiagonalOnOrthogonalGrids(t *testing.T) {
	for _, m := range planarMeshes(t) {
		if !m.Orthogonal {
			continue
		}
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
	for _, c := range hodgeTestMeshes(t) {
		m := c.m
		if dev := m.NonOrthogonality(); dev < 0.05 {
			t.Fatalf("%s: dual deviation %g rad, the test grid is too regular", c.name, dev)
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
		t.Logf("%s: dual deviation ≤ %.3f rad, H eigenvalues in [%.4g, %.4g]", c.name, m.NonOrthogonality(), ev[0], ev[len(ev)-1])

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

// fluxError returns the relative l2 and max errors of H v against the
// fluxes of the smooth field w = (sin 2πy/L, cos 2πx/L), with v and the
// fluxes by the midpoint rule on the dual and primal edges (exact to
// second order); diagonal uses l_e/d_e instead of the mesh's H.
func fluxError(m *Mesh, diagonal bool) (l2, linf float64) {
	lx, ly := m.Surface.Lx, m.Surface.Ly
	w := func(x, y float64) (float64, float64) {
		return math.Sin(2 * math.Pi * y / ly), math.Cos(2 * math.Pi * x / lx)
	}
	ne := m.NumEdges
	v, hv, flux := make([]float64, ne), make([]float64, ne), make([]float64, ne)
	for e := 0; e < ne; e++ {
		c0, v0 := int(m.EdgeCells[2*e]), int(m.EdgeVertices[2*e])
		d := m.delta(c0, int(m.EdgeCells[2*e+1]), true, true)
		wx, wy := w(m.CellX[c0]+d[0]/2, m.CellY[c0]+d[1]/2)
		v[e] = wx*d[0] + wy*d[1]
		t := m.delta(v0, int(m.EdgeVertices[2*e+1]), false, false)
		wx, wy = w(m.VertexX[v0]+t[0]/2, m.VertexY[v0]+t[1]/2)
		flux[e] = t[1]*wx - t[0]*wy // J(x_v0 − x_v1)·w
	}
	if diagonal {
		for e := range hv {
			hv[e] = m.EdgeLength[e] / m.DualLength[e] * v[e]
		}
	} else {
		m.Hodge.Apply(hv, v, 0, ne)
	}
	var n2, d2, big float64
	for e := range hv {
		n2 += (hv[e] - flux[e]) * (hv[e] - flux[e])
		d2 += flux[e] * flux[e]
		linf = max(linf, math.Abs(hv[e]-flux[e]))
		big = max(big, math.Abs(flux[e]))
	}
	return math.Sqrt(n2 / d2), linf / big
}

// On smoothly distorted planes the consistent H converges on a smooth
// flow (measured order 1.6–2.0 in l2 and max from n = 8 to 64; required
// ≥ 1.5), the
// diagonal l/d does not (its error stays of the size of the dual's
// deviation from orthogonality).
func TestHodgeConvergesOnSmoothFlow(t *testing.T) {
	for _, k := range []Kind{Quad, Hex, Tri} {
		var prev [2][2]float64
		for _, n := range []int{8, 16, 32, 64} {
			m, err := New(Spec{Kind: k, N: n, Length: 1e6, Distort: 0.2})
			if err != nil {
				t.Fatal(err)
			}
			if err := EnsureHodge(m); err != nil {
				t.Fatal(err)
			}
			var cur [2][2]float64
			cur[0][0], cur[0][1] = fluxError(m, false)
			cur[1][0], cur[1][1] = fluxError(m, true)
			if n > 8 {
				for j, name := range []string{"consistent", "diagonal"} {
					o2 := math.Log2(prev[j][0] / cur[j][0])
					oi := math.Log2(prev[j][1] / cur[j][1])
					t.Logf("%s n=%d %s: l2 %.3g (order %.2f), max %.3g (order %.2f)", k, n, name, cur[j][0], o2, cur[j][1], oi)
					if j == 0 && (o2 < 1.5 || oi < 1.5) {
						t.Errorf("%s n=%d consistent: orders %.2f (l2), %.2f (max), want ≥ 1.5", k, n, o2, oi)
					}
					if j == 1 && (o2 > 0.2 || cur[j][0] < 0.01) {
						t.Errorf("%s n=%d diagonal: l2 %.3g order %.2f: expected no convergence", k, n, cur[j][0], o2)
					}
				}
			}
			prev = cur
		}
	}
}

// On the cubed sphere H is symmetric bit for bit and positive definite
// (Cholesky), built in the gnomonic tangent planes of the vertices.
func TestConsistentHodgeOnCubedSphere(t *testing.T) {
	for _, n := range []int{3, 4, 8} {
		m, err := New(Spec{Kind: Cubed, N: n, Radius: 6.37122e6})
		if err != nil {
			t.Fatal(err)
		}
		if err := EnsureHodge(m); err != nil || m.Hodge == nil {
			t.Fatalf("cubed n=%d: EnsureHodge stored no matrix (err %v)", n, err)
		}
		h := m.Hodge
		for e := 0; e < m.NumEdges; e++ {
			for k := h.Start[e]; k < h.Start[e+1]; k++ {
				if f := int(h.Col[k]); h.At(f, e) != h.Val[k] {
					t.Fatalf("cubed n=%d: H[%d][%d] = %v but H[%d][%d] = %v", n, e, f, h.Val[k], f, e, h.At(f, e))
				}
			}
		}
		var ch mat.Cholesky
		if !ch.Factorize(denseHodge(m, h)) {
			t.Errorf("cubed n=%d: Cholesky factorisation of H failed", n)
		}
	}
}
