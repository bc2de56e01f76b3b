package linear

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"gyrebench/sim"
	"gyrebench/sim/scheme"
)

// A discrete geostrophic state on a distorted f-plane is steady under the
// linearised tendency, with either Hodge star: from a vertex stream
// function ψ, the fluxes F = D1 ψ ((D1 ψ)_e = ψ_{v1} − ψ_{v0}) are
// divergence-free because D2 D1 = 0; the circulations solve
// H₀ H v = F (a dense solve here); and g h' = −(f/H₀) Rᵀψ with the
// kite-area map R balances the Coriolis term because W D1 = −D̄1 Rᵀ
// (Thuburn, Ringler, Skamarock & Klemp 2009, J. Comput. Phys. 228,
// 8321–8335; the sign is that of the orientations of package mesh). The
// wrong sign of h' must miss by the size of the terms.
func TestGeostrophicStateSteadyOnDistortedPlane(t *testing.T) {
	for _, kind := range []string{"quad", "hex", "tri"} {
		for _, hodge := range scheme.HodgeNames {
			cfg := sim.DefaultConfig()
			cfg.Grid.Kind, cfg.Grid.N, cfg.Grid.Distort, cfg.Grid.Jitter, cfg.Grid.Seed = kind, 8, 0.15, 0.1, 6
			cfg.Scheme.Hodge, cfg.Physics.Beta = hodge, 0
			op, err := NewOperator(cfg)
			if err != nil {
				t.Fatal(err)
			}
			m := op.Mesh
			nc, ne, nv := m.NumCells, m.NumEdges, m.NumVertices
			if (op.grid.Hodge != nil) != (hodge == scheme.HodgeConsistent) {
				t.Fatalf("%s %s: general Hodge star present %t", kind, hodge, op.grid.Hodge != nil)
			}
			h0, f, g := cfg.Physics.Depth, cfg.Physics.F0, cfg.Physics.G
			rng := rand.New(rand.NewPCG(1, 2))
			psi := make([]float64, nv)
			for v := range psi {
				psi[v] = rng.NormFloat64()
			}
			// H as a dense matrix: the grid's, or diag(l/d).
			hm := mat.NewDense(ne, ne, nil)
			b := mat.NewVecDense(ne, nil)
			for e := 0; e < ne; e++ {
				if hodge == scheme.HodgeConsistent {
					for k := m.Hodge.Start[e]; k < m.Hodge.Start[e+1]; k++ {
						hm.Set(e, int(m.Hodge.Col[k]), h0*m.Hodge.Val[k])
					}
				} else {
					hm.Set(e, e, h0*m.EdgeLength[e]/m.DualLength[e])
				}
				b.SetVec(e, psi[m.EdgeVertices[2*e+1]]-psi[m.EdgeVertices[2*e]])
			}
			var v mat.VecDense
			if err := v.SolveVec(hm, b); err != nil {
				t.Fatal(err)
			}
			x := make([]float64, nc+ne)
			for e := 0; e < ne; e++ {
				x[nc+e] = v.AtVec(e) / m.DualLength[e]
			}
			for _, sign := range []float64{1, -1} {
				for i := 0; i < nc; i++ {
					r := 0.0
					for k := m.CellEdgeStart[i]; k < m.CellEdgeStart[i+1]; k++ {
						r += m.CellKiteArea[k] / m.CellArea[i] * psi[m.CellVertices[k]]
					}
					x[i] = -sign * f / (g * h0) * r
				}
				dst := make([]float64, nc+ne)
				op.Apply(dst, x)
				// The size of the terms: J applied to each half alone.
				hOnly, uOnly := append([]float64(nil), x...), append([]float64(nil), x...)
				clear(hOnly[nc:])
				clear(uOnly[:nc])
				jh, ju := make([]float64, nc+ne), make([]float64, nc+ne)
				op.Apply(jh, hOnly)
				op.Apply(ju, uOnly)
				var res, big, dres, dbig float64
				for k := nc; k < nc+ne; k++ {
					res = max(res, math.Abs(dst[k]))
					big = max(big, math.Abs(jh[k]), math.Abs(ju[k]))
				}
				for i := 0; i < nc; i++ {
					dres = max(dres, math.Abs(dst[i]))
					s := 0.0
					for k := m.CellEdgeStart[i]; k < m.CellEdgeStart[i+1]; k++ {
						s += math.Abs(b.AtVec(int(m.CellEdges[k])))
					}
					dbig = max(dbig, s/m.CellArea[i])
				}
				if sign == 1 {
					if res > 1e-10*big || dres > 1e-12*dbig {
						t.Errorf("%s %s: geostrophic state: velocity tendency %.3g of %.3g, depth tendency %.3g of %.3g", kind, hodge, res, big, dres, dbig)
					}
					t.Logf("%s %s: steady to %.3g (velocity), %.3g (depth)", kind, hodge, res/big, dres/dbig)
				} else if res < 0.5*big {
					t.Errorf("%s %s: the opposite depth sign is also steady (%.3g of %.3g): the check is void", kind, hodge, res, big)
				}
			}
			op.Close()
		}
	}
}
