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
