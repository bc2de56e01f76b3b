package ops

import (
	"math"
	"math/rand/v2"
	"testing"

	"gyrebench/sim/mesh"
)

// The recurrence must give the same P_e = Σ W_{e,e'} x_{e'} as the direct
// sum over the mesh's stored TRiSK weights, to round-off.
func TestTRiSKRecurrenceMatchesWeights(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Quad, N: 8, Length: 1e6}, {Kind: mesh.Hex, N: 8, Length: 1e6}, {Kind: mesh.Tri, N: 8, Length: 1e6},
		{Kind: mesh.Hex, N: 10, Length: 1e6, Height: 1e6},
	} {
		m, err := mesh.New(spec)
		if err != nil {
			t.Fatal(err)
		}
		g := Grid{Topology: &m.Topology, Metric: &m.Metric}
		tr := NewTRiSK(g)
		pr := m.TRiSKPairs()
		x := make([]float64, m.NumEdges)
		y := make([]float64, m.NumEdges)
		for e := range x {
			x[e], y[e] = rng.NormFloat64(), rng.NormFloat64()
		}
		G, H := make([]float64, tr.Slots()), make([]float64, tr.Slots())
		tr.CellSums2(G, H, x, y, 0, m.NumCells)
		G1 := make([]float64, tr.Slots())
		tr.CellSums(G1, x, 0, m.NumCells)
		for e := 0; e < m.NumEdges; e++ {
			var want, wantY, scale float64
			for p := pr.Start[e]; p < pr.Start[e+1]; p++ {
				w := pr.Weight[p]
				want += w * x[pr.Edges[p]]
				wantY += w * y[pr.Edges[p]]
				scale += math.Abs(w * x[pr.Edges[p]])
			}
			got, gotY := tr.Edge(G, e), tr.Edge(H, e)
			if math.Abs(got-want) > 1e-14*scale || math.Abs(gotY-wantY) > 1e-14*scale*10 || tr.Edge(G1, e) != got {
				t.Fatalf("%s edge %d: recurrence %g, %g; direct %g, %g", spec.Kind, e, got, gotY, want, wantY)
			}
		}
	}
}

// PVStencil stores t_{e,v} d_e per vertex slot; since t = ±1 its
// potential vorticity is, bit for bit, that of the formula summed in slot
// order, q_v = (Σ t (d u) + f A_v) / Σ K h, on every grid family
// (vertices of three, four and six edges take their own paths, on amd64
// the packed kernel for an even number of them and the written-out loop
// for the rest; no grid of the package has vertices of another degree,
// so the general loop is checked by calling it on every vertex).
func TestPVStencilMatchesGrid(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Quad, N: 8, Length: 1e6}, {Kind: mesh.Hex, N: 8, Length: 1e6}, {Kind: mesh.Tri, N: 8, Length: 1e6},
		{Kind: mesh.Icosahedral, N: 2, Radius: 6.37122e6}, {Kind: mesh.Cubed, N: 4, Radius: 6.37122e6},
		{Kind: mesh.Hex, N: 8, Length: 1e6, Distort: 0.15, Jitter: 0.1, Seed: 2},
	} {
		m, err := mesh.New(spec)
		if err != nil {
			t.Fatal(err)
		}
		g := Grid{Topology: &m.Topology, Metric: &m.Metric}
		u, h, f := make([]float64, m.NumEdges), make([]float64, m.NumCells), make([]float64, m.NumVertices)
		for e := range u {
			u[e] = 10 * rng.NormFloat64()
		}
		for i := range h {
			h[i] = 1000 + 100*rng.Float64()
		}
		for v := range f {
			f[v] = 1e-4 * rng.NormFloat64()
		}
		want, got := make([]float64, m.NumVertices), make([]float64, m.NumVertices)
		for v := range want {
			var c, k float64
			for j := g.VertexEdgeStart[v]; j < g.VertexEdgeStart[v+1]; j++ {
				e := g.VertexEdges[j]
				c += float64(g.VertexEdgeSign[j]) * (g.DualLength[e] * u[e])
				k += g.VertexKiteArea[j] * h[g.VertexCells[j]]
			}
			want[v] = (c + f[v]*g.VertexArea[v]) / k
		}
		s := NewPVStencil(g)
		mid := m.NumVertices / 3
		s.PotentialVorticity(got[:mid], f, u, h, 0, mid)
		s.PotentialVorticity(got[mid:], f, u, h, mid, m.NumVertices)
		general := make([]float64, m.NumVertices)
		s.pvAny(general, f, u, h, 0)
		if r := s.runs[0]; r.N == 3 || r.N == 4 || r.N == 6 {
			n := int(r.Hi-r.Lo) - 1 // odd, so that the Go loop does the last vertex
			wantDone := 0
			if packedKernels {
				wantDone = n &^ 1
			}
			if done := s.pvPacked(int(r.N), make([]float64, n), f, u, h, int(r.Lo)); done != wantDone {
				t.Fatalf("%s: the packed kernel did %d of %d vertices, want %d", spec.Kind, done, n, wantDone)
			}
		}
		for v := range want {
			if math.Float64bits(got[v]) != math.Float64bits(want[v]) {
				t.Fatalf("%s vertex %d: stencil %v, grid %v", spec.Kind, v, got[v], want[v])
			}
			if math.Float64bits(general[v]) != math.Float64bits(want[v]) {
				t.Fatalf("%s vertex %d: general loop %v, grid %v", spec.Kind, v, general[v], want[v])
			}
		}
	}
}
