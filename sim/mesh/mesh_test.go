package mesh

import (
	"math"
	"math/rand/v2"
	"testing"
)

func planarMeshes(t *testing.T) []*Mesh {
	t.Helper()
	var ms []*Mesh
	for _, k := range []Kind{Quad, Hex, Tri} {
		for _, n := range []int{4, 6, 12} {
			m, err := New(Spec{Kind: k, N: n, Length: 1e6})
			if err != nil {
				t.Fatal(err)
			}
			ms = append(ms, m)
		}
		// The same families on the other families' natural domain, as
		// built for a mid-run change of grid family.
		for _, h := range []float64{1e6, 1e6 * math.Sqrt(3) / 2} {
			m, err := New(Spec{Kind: k, N: 12, Length: 1e6, Height: h})
			if err != nil {
				t.Fatal(err)
			}
			ms = append(ms, m)
		}
	}
	return append(ms, distortedMeshes(t)...)
}

// distortedMeshes are the planar families with their vertices moved
// smoothly, randomly and both, up to just below the limits: grids whose
// dual is not orthogonal.
func distortedMeshes(t *testing.T) []*Mesh {
	t.Helper()
	var ms []*Mesh
	for _, k := range []Kind{Quad, Hex, Tri} {
		for _, s := range []Spec{
			{N: 4, Distort: 0.2999},
			{N: 12, Distort: 0.15},
			{N: 12, Jitter: 0.2499, Seed: 7},
			{N: 12, Distort: 0.2, Jitter: JitterLimit(0.2) * 0.999, Seed: 3},
			{N: 12, Height: 1e6, Distort: 0.1, Jitter: 0.1, Seed: 1},
		} {
			s.Kind, s.Length = k, 1e6
			m, err := New(s)
			if err != nil {
				t.Fatal(err)
			}
			ms = append(ms, m)
		}
	}
	return ms
}

// testMeshes adds icosahedral levels 1–3, bisected and Lloyd-relaxed, and
// cubed spheres of 2, 3 and 5 cells along a cube edge to the planar meshes,
// for the checks that hold on any C-grid.
func testMeshes(t *testing.T) []*Mesh {
	t.Helper()
	ms := planarMeshes(t)
	for _, n := range []int{2, 3, 5} {
		m, err := New(Spec{Kind: Cubed, N: n, Radius: 6.37122e6})
		if err != nil {
			t.Fatal(err)
		}
		ms = append(ms, m)
	}
	for _, opt := range []string{OptimizeNone, OptimizeLloyd} {
		for n := 1; n <= 3; n++ {
			m, err := New(Spec{Kind: Icosahedral, N: n, Radius: 6.37122e6, Optimize: opt})
			if err != nil {
				t.Fatal(err)
			}
			ms = append(ms, m)
		}
	}
	return ms
}

func TestCountsAndEuler(t *testing.T) {
	for _, m := range planarMeshes(t) {
		n := m.N
		r := planeRows(m.Kind, n, m.Surface.Lx, m.Surface.Ly) // n unless stretched
		want := map[Kind][3]int{Quad: {n * r, 2 * n * r, n * r}, Hex: {n * r, 3 * n * r, 2 * n * r}, Tri: {2 * n * r, 3 * n * r, n * r}}[m.Kind]
		if m.NumCells != want[0] || m.NumEdges != want[1] || m.NumVertices != want[2] {
			t.Errorf("%s n=%d: cells, edges, vertices = %d, %d, %d; want %v", m.Kind, n, m.NumCells, m.NumEdges, m.NumVertices, want)
		}
		// Euler characteristic of the torus is 0.
		if chi := m.NumVertices - m.NumEdges + m.NumCells; chi != 0 {
			t.Errorf("%s n=%d: V − E + F = %d, want 0 on the torus", m.Kind, n, chi)
		}
	}
}

func TestAreasAndKites(t *testing.T) {
	for _, m := range testMeshes(t) {
		total := m.Surface.Area()
		var sc, sv float64
		for _, a := range m.CellArea {
			if !(a > 0) {
				t.Fatalf("%s: non-positive cell area %g", m.Kind, a)
			}
			sc += a
		}
		for _, a := range m.VertexArea {
			if !(a > 0) {
				t.Fatalf("%s: non-positive vertex area %g", m.Kind, a)
			}
			sv += a
		}
		if math.Abs(sc-total) > 1e-12*total || math.Abs(sv-total) > 1e-12*total {
			t.Errorf("%s n=%d: Σ cell area %g, Σ vertex area %g, surface %g", m.Kind, m.N, sc, sv, total)
		}
		for _, a := range m.CellKiteArea {
			if !(a > 0) {
				t.Fatalf("%s: non-positive kite %g", m.Kind, a)
			}
		}
		if m.Surface.Sphere {
			continue // the diamonds are spherical quadrilaterals, not l d / 2
		}
		// The diamonds (c0, v0, c1, v1) tile the plane; the area of each is
		// half the cross product of its diagonals, l_e d_e / 2 on an
		// orthogonal C-grid.
		s, sx := 0.0, 0.0
		for e := range m.EdgeLength {
			s += m.EdgeLength[e] * m.DualLength[e] / 2
			c0, c1 := m.EdgeCells[2*e], m.EdgeCells[2*e+1]
			v0, v1 := m.EdgeVertices[2*e], m.EdgeVertices[2*e+1]
			dx, dy := wrap(m.CellX[c1]-m.CellX[c0], m.Surface.Lx), wrap(m.CellY[c1]-m.CellY[c0], m.Surface.Ly)
			lx, ly := wrap(m.VertexX[v1]-m.VertexX[v0], m.Surface.Lx), wrap(m.VertexY[v1]-m.VertexY[v0], m.Surface.Ly)
			sx += (dx*ly - dy*lx) / 2
		}
		if math.Abs(sx-total) > 1e-12*total {
			t.Errorf("%s n=%d: Σ (d × l) / 2 = %g, want %g", m.Kind, m.N, sx, total)
		}
		if m.Orthogonal && math.Abs(s-total) > 1e-12*total {
			t.Errorf("%s n=%d: Σ l d / 2 = %g, want %g", m.Kind, m.N, s, total)
		}
	}
}

// The discrete exterior derivatives are signed incidence: curl·grad = 0 and
// div·curlᵀ = 0 must hold in integer arithmetic for every field.
func TestExactSequence(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, m := range testMeshes(t) {
		checkExactSequence(t, m, rng)
	}
}

// checkExactSequence applies grad then curl, and skew-grad then div, to
// random integer fields and requires exact zeros.
func checkExactSequence(t *testing.T, m *Mesh, rng *rand.Rand) {
	t.Helper()
	for trial := 0; trial < 3; trial++ {
		h := make([]int64, m.NumCells)
		for i := range h {
			h[i] = rng.Int64N(1<<40) - 1<<39
		}
		psi := make([]int64, m.NumVertices)
		for i := range psi {
			psi[i] = rng.Int64N(1<<40) - 1<<39
		}
		grad := make([]int64, m.NumEdges)
		skew := make([]int64, m.NumEdges)
		for e := 0; e < m.NumEdges; e++ {
			grad[e] = h[m.EdgeCells[2*e+1]] - h[m.EdgeCells[2*e]]
			skew[e] = psi[m.EdgeVertices[2*e+1]] - psi[m.EdgeVertices[2*e]]
		}
		for v := 0; v < m.NumVertices; v++ {
			if c := signedRow(m.VertexEdgeStart, m.VertexEdges, m.VertexEdgeSign, grad, v); c != 0 {
				t.Fatalf("%s n=%d: curl·grad = %d at vertex %d", m.Kind, m.N, c, v)
			}
		}
		for i := 0; i < m.NumCells; i++ {
			if d := signedRow(m.CellEdgeStart, m.CellEdges, m.CellEdgeSign, skew, i); d != 0 {
				t.Fatalf("%s n=%d: div·curlᵀ = %d at cell %d", m.Kind, m.N, d, i)
			}
		}
	}
}

// signedRow returns Σ_k sign[k]·f[edges[k]] over row i of an incidence in
// CSR layout (start, edges, sign), in integers.
func signedRow(start, edges []int32, sign []int8, f []int64, i int) int64 {
	var s int64
	for k := start[i]; k < start[i+1]; k++ {
		s += int64(sign[k]) * f[edges[k]]
	}
	return s
}

// Thuburn et al. (2009, J. Comput. Phys. 228, §3–4): W antisymmetric, and
// the tangential flux is compatible with the kite-interpolated vertex
// thickness: A_v ∂h_v/∂t = Σ_e t_{e,v} d_e F⊥_e when ∂h_i/∂t = −div F.
func TestTRiSKWeights(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, m := range testMeshes(t) {
		pr := m.TRiSKPairs()
		w := map[[2]int32]float64{}
		for e := 0; e < m.NumEdges; e++ {
			for q := pr.Start[e]; q < pr.Start[e+1]; q++ {
				w[[2]int32{int32(e), pr.Edges[q]}] = pr.Weight[q]
			}
		}
		for k, v := range w {
			if back := w[[2]int32{k[1], k[0]}]; math.Abs(v+back) > 1e-14 {
				t.Fatalf("%s n=%d: W[%d,%d] = %g but W[%d,%d] = %g", m.Kind, m.N, k[0], k[1], v, k[1], k[0], back)
			}
		}
		F := make([]float64, m.NumEdges)
		for e := range F {
			F[e] = rng.NormFloat64()
		}
		perp := make([]float64, m.NumEdges) // d_e F⊥_e
		for e := 0; e < m.NumEdges; e++ {
			for q := pr.Start[e]; q < pr.Start[e+1]; q++ {
				ep := pr.Edges[q]
				perp[e] += pr.Weight[q] * m.EdgeLength[ep] * F[ep]
			}
		}
		div := make([]float64, m.NumCells)
		for i := range div {
			lo, hi := m.EdgesOfCell(i)
			for k := lo; k < hi; k++ {
				e := m.CellEdges[k]
				div[i] += float64(m.CellEdgeSign[k]) * m.EdgeLength[e] * F[e]
			}
			div[i] /= m.CellArea[i]
		}
		for v := 0; v < m.NumVertices; v++ {
			lo, hi := m.EdgesOfVertex(v)
			var lhs, rhs float64
			for k := lo; k < hi; k++ {
				lhs -= m.VertexKiteArea[k] * div[m.VertexCells[k]]
				rhs += float64(m.VertexEdgeSign[k]) * perp[m.VertexEdges[k]]
			}
			if math.Abs(lhs-rhs) > 1e-9*m.Spacing() {
				t.Fatalf("%s n=%d vertex %d: A_v ∂h_v/∂t = %g, Σ t d F⊥ = %g", m.Kind, m.N, v, lhs, rhs)
			}
		}
		// A uniform flow is reconstructed exactly on the regular grids:
		// F⊥_e = F · t_e with t_e = k × n_e. (On the stretched triangles it
		// is only approximate.)
		if m.Surface.Sphere || !m.Orthogonal {
			continue // no uniform flow on the sphere; kite weights are inexact on distorted grids
		}
		if m.Kind == Tri && m.Surface.Ly != NaturalHeight(Tri, m.N, m.Surface.Lx) {
			continue
		}
		fx, fy := 0.3, -1.1
		for e := 0; e < m.NumEdges; e++ {
			F[e] = fx*m.NormalX[e] + fy*m.NormalY[e]
		}
		for e := 0; e < m.NumEdges; e++ {
			s := 0.0
			for q := pr.Start[e]; q < pr.Start[e+1]; q++ {
				ep := pr.Edges[q]
				s += pr.Weight[q] * m.EdgeLength[ep] * F[ep]
			}
			s /= m.DualLength[e]
			want := -fx*m.NormalY[e] + fy*m.NormalX[e]
			if math.Abs(s-want) > 1e-12 {
				t.Fatalf("%s n=%d edge %d: F⊥ = %g, want %g", m.Kind, m.N, e, s, want)
			}
		}
	}
}

func TestSpecErrors(t *testing.T) {
	for _, s := range []Spec{
		{Kind: Quad, N: 2, Length: 1},
		{Kind: Hex, N: 5, Length: 1},
		{Kind: Quad, N: 100000, Length: 1},
		{Kind: Quad, N: 8, Length: -1},
		{Kind: "pentagon", N: 8, Length: 1},
		{Kind: Icosahedral, N: 12, Radius: 1},
	} {
		if _, err := New(s); err == nil {
			t.Errorf("New(%+v) accepted an invalid spec", s)
		} else if msg := err.Error(); len(msg) < 10 {
			t.Errorf("New(%+v): unhelpful error %q", s, msg)
		}
	}
}
