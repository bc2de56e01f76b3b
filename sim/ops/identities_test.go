package ops

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gyrebench/sim/mesh"
)

// The TRiSK identities on grids whose dual is not orthogonal (Thuburn,
// Ringler, Skamarock & Klemp 2009, J. Comput. Phys. 228, 8321–8335, §4;
// Thuburn & Cotter 2012, SIAM J. Sci. Comput. 34, B203–B225): with the
// kite-area map R_{v,i} = K_{i,v}/A_i (Σ_v R_{v,i} = 1), W from R and the
// topology alone is antisymmetric, and with the orientations of package
// mesh ((D1 ψ)_e = ψ_{v1} − ψ_{v0}, (D2 F)_i = Σ n_{e,i} F_e,
// (D̄1 φ)_e = φ_{c1} − φ_{c0}, (D̄2 x)_v = Σ t_{e,v} x_e)
//
//	D̄2 W = −R D2,   W D1 = −D̄1 Rᵀ,
//
// to round-off, on the regular grids, the distorted and jittered planes
// and the cubed sphere. W is applied by the recurrence of TRiSK and, for
// the antisymmetry, taken from mesh.TRiSKPairs.
func TestTRiSKIdentitiesOnAnyGrid(t *testing.T) {
	specs := []mesh.Spec{
		{Kind: mesh.Hex, N: 8, Length: 1e6},
		{Kind: mesh.Icosahedral, N: 2, Radius: 6.37122e6},
		{Kind: mesh.Cubed, N: 6, Radius: 6.37122e6},
		{Kind: mesh.Cubed, N: 16, Radius: 6.37122e6},
	}
	for _, k := range []mesh.Kind{mesh.Quad, mesh.Hex, mesh.Tri} {
		specs = append(specs,
			mesh.Spec{Kind: k, N: 8, Length: 1e6, Distort: 0.25},
			mesh.Spec{Kind: k, N: 8, Length: 1e6, Jitter: 0.2, Seed: 9})
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, spec := range specs {
		m, err := mesh.New(spec)
		if err != nil {
			t.Fatal(err)
		}
		name := fmt.Sprintf("%s n=%d distort %g jitter %g", spec.Kind, spec.N, spec.Distort, spec.Jitter)
		g := Grid{Topology: &m.Topology, Metric: &m.Metric}
		nc, ne, nv := m.NumCells, m.NumEdges, m.NumVertices

		sumR := make([]float64, nc)
		for v := 0; v < nv; v++ {
			for k := m.VertexEdgeStart[v]; k < m.VertexEdgeStart[v+1]; k++ {
				i := m.VertexCells[k]
				sumR[i] += m.VertexKiteArea[k] / m.CellArea[i]
			}
		}
		for i, s := range sumR {
			if math.Abs(s-1) > 1e-14 {
				t.Fatalf("%s: Σ_v R_vi = %.17g at cell %d", name, s, i)
			}
		}

		pr := m.TRiSKPairs()
		var asym, wmax float64
		for e := 0; e < ne; e++ {
			for p := pr.Start[e]; p < pr.Start[e+1]; p++ {
				f := pr.Edges[p]
				back := 0.0
				for q := pr.Start[f]; q < pr.Start[f+1]; q++ {
					if pr.Edges[q] == int32(e) {
						back = pr.Weight[q]
					}
				}
				asym = max(asym, math.Abs(pr.Weight[p]+back))
				wmax = max(wmax, math.Abs(pr.Weight[p]))
			}
		}

		tr := NewTRiSK(g)
		sums := make([]float64, tr.Slots())
		applyW := func(dst, x []float64) {
			tr.CellSums(sums, x, 0, nc)
			for e := range dst {
				dst[e] = tr.Edge(sums, e)
			}
		}
		// D̄2 W F + R D2 F on random fluxes.
		f, wf := make([]float64, ne), make([]float64, ne)
		for e := range f {
			f[e] = rng.NormFloat64()
		}
		applyW(wf, f)
		div := make([]float64, nc)
		for i := range div {
			for k := m.CellEdgeStart[i]; k < m.CellEdgeStart[i+1]; k++ {
				div[i] += float64(m.CellEdgeSign[k]) * f[m.CellEdges[k]]
			}
		}
		var compat, cscale float64
		for v := 0; v < nv; v++ {
			var curl, rd float64
			for k := m.VertexEdgeStart[v]; k < m.VertexEdgeStart[v+1]; k++ {
				curl += float64(m.VertexEdgeSign[k]) * wf[m.VertexEdges[k]]
				i := m.VertexCells[k]
				rd += m.VertexKiteArea[k] / m.CellArea[i] * div[i]
			}
			compat = max(compat, math.Abs(curl+rd))
			cscale = max(cscale, math.Abs(rd))
		}
		// W D1 ψ + D̄1 Rᵀ ψ on a random stream function.
		psi := make([]float64, nv)
		for v := range psi {
			psi[v] = rng.NormFloat64()
		}
		d1, wd1 := make([]float64, ne), make([]float64, ne)
		for e := range d1 {
			d1[e] = psi[m.EdgeVertices[2*e+1]] - psi[m.EdgeVertices[2*e]]
		}
		applyW(wd1, d1)
		rt := make([]float64, nc)
		for i := range rt {
			for k := m.CellEdgeStart[i]; k < m.CellEdgeStart[i+1]; k++ {
				rt[i] += m.CellKiteArea[k] / m.CellArea[i] * psi[m.CellVertices[k]]
			}
		}
		var geo, gscale float64
		for e := 0; e < ne; e++ {
			grad := rt[m.EdgeCells[2*e+1]] - rt[m.EdgeCells[2*e]]
			geo = max(geo, math.Abs(wd1[e]+grad))
			gscale = max(gscale, math.Abs(grad))
		}
		t.Logf("%s: |W + Wᵀ| %.2g, |D̄2W + RD2| %.2g, |WD1 + D̄1Rᵀ| %.2g (relative)", name, asym/wmax, compat/cscale, geo/gscale)
		if asym > 1e-14*wmax || compat > 1e-13*cscale || geo > 1e-13*gscale {
			t.Errorf("%s: |W + Wᵀ| %.3g, |D̄2W + RD2| %.3g, |WD1 + D̄1Rᵀ| %.3g, relative; want round-off", name, asym/wmax, compat/cscale, geo/gscale)
		}
	}
}
