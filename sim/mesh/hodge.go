package mesh

import (
	"fmt"
	"math"

	"gyrebench/sim/internal/r3"
)

// Hodge is a general edge Hodge star H in compressed sparse rows: it maps
// the circulations v_e = d_e u_e along the dual edges to the fluxes per
// unit thickness across the primal edges, so that the mass flux is
// F = ĥ ∘ (H v) (symmetrised, see package scheme) and the kinetic energy
// ½ Σ_e ĥ_e v_e (H v)_e. On a grid whose dual is orthogonal H is
// diag(l_e/d_e), and the metric keeps no Hodge (Metric.Hodge is nil).
//
// Row e holds Col[Start[e]:Start[e+1]] and Val in the same range; the
// first entry of each row is the diagonal (Col = e). H is symmetric bit
// for bit: H[e][e'] and H[e'][e] are the same sums in the same order.
type Hodge struct {
	Start []int32 // NumEdges+1
	Col   []int32
	Val   []float64
}

// Apply sets dst[e−lo] = (H v)_e for e in [lo, hi).
func (h *Hodge) Apply(dst, v []float64, lo, hi int) {
	for e := lo; e < hi; e++ {
		s := 0.0
		for k := h.Start[e]; k < h.Start[e+1]; k++ {
			s += h.Val[k] * v[h.Col[k]]
		}
		dst[e-lo] = s
	}
}

// At returns H[e][f] (0 outside the stencil).
func (h *Hodge) At(e, f int) float64 {
	for k := h.Start[e]; k < h.Start[e+1]; k++ {
		if int(h.Col[k]) == f {
			return h.Val[k]
		}
	}
	return 0
}

// EnsureHodge computes and stores Metric.Hodge (ConsistentHodge) when the
// dual of m is not orthogonal (Mesh.Orthogonal false), and leaves it nil
// when it is, where H is the diagonal l_e/d_e that the schemes apply
// without a matrix. It is idempotent; it writes to m, so call it before
// the mesh is shared between goroutines (sim.HodgeGrid does, as a model
// is built).
func EnsureHodge(m *Mesh) error {
	if m.Metric.Hodge != nil || m.Orthogonal {
		return nil
	}
	h, err := ConsistentHodge(m)
	if err != nil {
		return err
	}
	m.Metric.Hodge = h
	return nil
}

// delta returns the vector from point a to point b (cells when aCell,
// else vertices; likewise bCell) on the plane (minimum periodic image) or
// the chord on the sphere.
func (m *Mesh) delta(a, b int, aCell, bCell bool) vec3 {
	pa, pb := m.point(a, aCell), m.point(b, bCell)
	d := pb.Sub(pa)
	if !m.Surface.Sphere {
		d[0] = wrap(d[0], m.Surface.Lx)
		d[1] = wrap(d[1], m.Surface.Ly)
	}
	return d
}

func (m *Mesh) point(i int, cell bool) vec3 {
	c := &m.Coords
	if cell {
		if m.Surface.Sphere {
			return vec3{c.CellX[i], c.CellY[i], c.CellZ[i]}
		}
		return vec3{c.CellX[i], c.CellY[i], 0}
	}
	if m.Surface.Sphere {
		return vec3{c.VertexX[i], c.VertexY[i], c.VertexZ[i]}
	}
	return vec3{c.VertexX[i], c.VertexY[i], 0}
}

// ConsistentHodge builds the edge Hodge star by the mimetic
// finite-difference construction (Brezzi, Lipnikov & Shashkov 2005, SIAM
// J. Numer. Anal. 43, 1872–1896: a consistency term plus a stabilisation
// on its null space), one local matrix per dual cell (vertex v):
//
//	H_v = A_v P_vᵀ P_v + (I − N_v P_v)ᵀ Λ_v (I − N_v P_v),  H = Σ_v scatter(H_v).
//
// In the plane of the dual cell (on the sphere the gnomonic projection on
// the tangent plane at v), with positions relative to x_v, row k of N_v
// (k × 2) is the dual-edge vector d_k from centre c0 to centre c1 of the
// k-th edge about v, so that N_v w are the circulations of a uniform field
// w. By Stokes on the polygon of centres (anticlockwise edges s_k d_k,
// midpoints m_k, area A), Σ_k (w·d_k) s_k J m_k = A w with J the rotation
// by +90°; so P_v = M⁻¹ Bᵀ with rows B_k = s_k J m_k and M = Bᵀ N_v
// (= A I on a plane) is a reconstruction exact for uniform fields,
// P_v N_v = I. Λ_v = diag(|m_k| / |d_k|) (half-edge over dual length).
//
// Properties (tested):
//   - symmetric; positive definite, since A PᵀP is positive on the range
//     of Pᵀ and the stabilisation on the null space of P (Λ > 0);
//   - exact for uniform flow on a planar grid: for v = N w,
//     Σ_v scatter(A_v P_vᵀ w) gives for edge e the two terms
//     ±J(m_e − x_v)·w of its end vertices, in which m_e cancels and
//     J(x_{v0} − x_{v1})·w = l_e n_e·w remains, the flux of w;
//   - diag(l_e/d_e) on a circumcentric plane grid: there m_k is on the
//     primal edge through x_v and d_k is normal to it, so Λ_v N_v = A_v P_vᵀ,
//     hence N_vᵀ Λ_v N_v = A_v (P_v N_v)ᵀ = A_v I and
//     (I − NP)ᵀ Λ (I − NP) = Λ − 2A PᵀP + Pᵀ(NᵀΛN)P = Λ − A PᵀP:
//     H_v = Λ_v, and the two Λ entries of an edge add to l_e/d_e.
//
// On the sphere A_v is the spherical dual-cell area (the metric's
// VertexArea), the rest is planar in the gnomonic plane: H is then
// consistent to second order in the spacing, not exact.
func ConsistentHodge(m *Mesh) (*Hodge, error) {
	t := &m.Topology
	ne := t.NumEdges
	// Stencil: the edges of both end vertices, the edge itself first.
	h := &Hodge{Start: make([]int32, ne+1)}
	for e := 0; e < ne; e++ {
		row := len(h.Col)
		h.Col = append(h.Col, int32(e))
		for s := 0; s < 2; s++ {
			lo, hi := t.EdgesOfVertex(int(t.EdgeVertices[2*e+s]))
			for _, f := range t.VertexEdges[lo:hi] {
				if !contains(h.Col[row:], f) {
					h.Col = append(h.Col, f)
				}
			}
		}
		h.Start[e+1] = int32(len(h.Col))
	}
	h.Val = make([]float64, len(h.Col))

	var (
		n, b [maxVertexEdges][2]float64
		lam  [maxVertexEdges]float64
		hv   [maxVertexEdges][maxVertexEdges]float64
		p    [2][maxVertexEdges]float64
	)
	for v := 0; v < t.NumVertices; v++ {
		lo, hi := t.EdgesOfVertex(v)
		k := hi - lo
		if k > maxVertexEdges {
			return nil, fmt.Errorf("mesh: vertex %d has %d edges, more than %d", v, k, maxVertexEdges)
		}
		proj := m.tangentProjector(v)
		var mm [2][2]float64 // M = Bᵀ N
		for j := 0; j < k; j++ {
			e := int(t.VertexEdges[lo+j])
			p0 := proj(int(t.EdgeCells[2*e]))
			p1 := proj(int(t.EdgeCells[2*e+1]))
			n[j] = [2]float64{p1[0] - p0[0], p1[1] - p0[1]}
			mid := [2]float64{(p0[0] + p1[0]) / 2, (p0[1] + p1[1]) / 2}
			s := float64(t.VertexEdgeSign[lo+j])
			b[j] = [2]float64{-s * mid[1], s * mid[0]}
			lam[j] = math.Hypot(mid[0], mid[1]) / math.Hypot(n[j][0], n[j][1])
			for r := 0; r < 2; r++ {
				for c := 0; c < 2; c++ {
					mm[r][c] += b[j][r] * n[j][c]
				}
			}
		}
		det := mm[0][0]*mm[1][1] - mm[0][1]*mm[1][0]
		if !(det > 0) {
			return nil, fmt.Errorf("mesh: dual cell of vertex %d is degenerate or not anticlockwise (det %g)", v, det)
		}
		area := 0.5 * (mm[0][0] + mm[1][1]) // the planar polygon's area
		if m.Surface.Sphere {
			area = m.VertexArea[v]
		}
		// P = M⁻¹ Bᵀ.
		inv := [2][2]float64{{mm[1][1] / det, -mm[0][1] / det}, {-mm[1][0] / det, mm[0][0] / det}}
		for j := 0; j < k; j++ {
			p[0][j] = inv[0][0]*b[j][0] + inv[0][1]*b[j][1]
			p[1][j] = inv[1][0]*b[j][0] + inv[1][1]*b[j][1]
		}
		// H_v = A PᵀP + (I − NP)ᵀ Λ (I − NP), upper triangle then mirrored.
		for a := 0; a < k; a++ {
			for c := a; c < k; c++ {
				s := area * (p[0][a]*p[0][c] + p[1][a]*p[1][c])
				for r := 0; r < k; r++ {
					ra := -(n[r][0]*p[0][a] + n[r][1]*p[1][a])
					rc := -(n[r][0]*p[0][c] + n[r][1]*p[1][c])
					if r == a {
						ra++
					}
					if r == c {
						rc++
					}
					s += ra * lam[r] * rc
				}
				hv[a][c], hv[c][a] = s, s
			}
		}
		for a := 0; a < k; a++ {
			ea := int(t.VertexEdges[lo+a])
			for c := 0; c < k; c++ {
				f := t.VertexEdges[lo+c]
				r0, r1 := h.Start[ea], h.Start[ea+1]
				q := r0
				for h.Col[q] != f {
					q++
					if q == r1 {
						panic("mesh: Hodge stencil misses an edge of a vertex")
					}
				}
				h.Val[q] += hv[a][c]
			}
		}
	}
	return h, nil
}

// maxVertexEdges bounds the dual cells the Hodge construction handles.
const maxVertexEdges = 16

func contains(s []int32, x int32) bool {
	for _, y := range s {
		if y == x {
			return true
		}
	}
	return false
}

// tangentProjector returns the map from a cell index to its position in
// the plane of the dual cell of v, relative to x_v: the periodic image
// nearest x_v on the plane, the gnomonic projection on the tangent plane
// at x_v on the sphere, in a basis anticlockwise seen from outside.
func (m *Mesh) tangentProjector(v int) func(i int) [2]float64 {
	if !m.Surface.Sphere {
		return func(i int) [2]float64 {
			d := m.delta(v, i, false, true)
			return [2]float64{d[0], d[1]}
		}
	}
	xv := m.point(v, false)
	r := xv.Norm()
	up := xv.Scale(1 / r)
	e1, e2 := r3.TangentBasis(up)
	return func(i int) [2]float64 {
		x := m.point(i, true)
		g := x.Scale(r / x.Dot(up)).Sub(xv)
		return [2]float64{g.Dot(e1), g.Dot(e2)}
	}
}
