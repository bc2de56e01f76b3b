package linear

import (
	"math"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scheme"
)

// exactJacobian builds the linearisation about rest by hand from the mesh
// arrays, independently of package scheme: with h_e = H at rest,
//
//	∂h_i/∂t  = −(H/A_i) Σ_e n_{e,i} l_e u_e
//	∂u_e/∂t  = −g (h_{c1} − h_{c0})/d_e + (1/d_e) Σ_{e'} W_{e,e'} l_{e'} f_{ee'} u_{e'}
//
// where the PV flux q F⊥ of Ringler et al. (2010, J. Comput. Phys. 229,
// eqs. 49 and §5) becomes, with q = f/H and F = l H u, f_{ee'} =
// (f_e + f_{e'})/2 for the energy-conserving form and f_e for the
// enstrophy-conserving one, f_e = (f_{v0} + f_{v1})/2. The kinetic energy
// and the relative-vorticity part of q are quadratic and drop out.
func exactJacobian(m *mesh.Mesh, g, depth float64, fv []float64, enstrophy bool) []float64 {
	nc, ne := m.NumCells, m.NumEdges
	n := nc + ne
	j := make([]float64, n*n)
	for i := 0; i < nc; i++ {
		lo, hi := m.EdgesOfCell(i)
		for k := lo; k < hi; k++ {
			e := int(m.CellEdges[k])
			j[i*n+nc+e] += -depth / m.CellArea[i] * float64(m.CellEdgeSign[k]) * m.EdgeLength[e]
		}
	}
	fe := make([]float64, ne)
	for e := range fe {
		fe[e] = 0.5 * (fv[m.EdgeVertices[2*e]] + fv[m.EdgeVertices[2*e+1]])
	}
	pr := m.TRiSKPairs()
	for e := 0; e < ne; e++ {
		r := (nc + e) * n
		d := m.DualLength[e]
		j[r+int(m.EdgeCells[2*e+1])] += -g / d
		j[r+int(m.EdgeCells[2*e])] += g / d
		for p := pr.Start[e]; p < pr.Start[e+1]; p++ {
			ep := int(pr.Edges[p])
			f := 0.5 * (fe[e] + fe[ep])
			if enstrophy {
				f = fe[e]
			}
			j[r+nc+ep] += pr.Weight[p] * m.EdgeLength[ep] * f / d
		}
	}
	return j
}

func TestAssembledMatchesHandDerived(t *testing.T) {
	for _, tc := range []struct {
		kind   mesh.Kind
		n      int
		scheme string
		beta   float64
		// enstrophy selects the enstrophy form of the exact Coriolis term.
		enstrophy bool
	}{
		{mesh.Quad, 4, scheme.TRiSKEnergy, 0, false},
		{mesh.Quad, 4, scheme.TRiSKEnergy, 2e-11, false},
		{mesh.Quad, 5, scheme.TRiSKEnstrophy, 2e-11, true},
		// Arakawa–Lamb (1981) reduces to TRiSK for uniform q (square.go).
		{mesh.Quad, 4, scheme.AL81, 0, false},
		{mesh.Quad, 4, scheme.SadournyEnergy, 0, false},
		// Sadourny's (1975) enstrophy scheme is trisk-enstrophy on squares,
		// with variable f too.
		{mesh.Quad, 5, scheme.SadournyEnstrophy, 2e-11, true},
		// The APVM correction is a product of two perturbations at rest, so
		// its linearisation is that of trisk-energy; this also exercises the
		// cubic terms that the Richardson step removes.
		{mesh.Quad, 4, scheme.APVM, 2e-11, false},
		{mesh.Hex, 4, scheme.TRiSKEnergy, 2e-11, false},
		{mesh.Tri, 4, scheme.TRiSKEnstrophy, 2e-11, true},
	} {
		cfg := sim.DefaultConfig()
		cfg.Grid.Kind, cfg.Grid.N = string(tc.kind), tc.n
		cfg.Scheme.Name = tc.scheme
		cfg.Physics.Beta = tc.beta
		op, err := NewOperator(cfg)
		if err != nil {
			t.Fatal(err)
		}
		got := op.Assemble().Dense()
		want := exactJacobian(op.Mesh, cfg.Physics.G, cfg.Physics.Depth, sim.Coriolis(op.Mesh, cfg.Physics, [3]float64{0, 0, 1}), tc.enstrophy)
		op.Close()
		// Compare the Coriolis block on its own scale too: it is 10⁻⁴ of the
		// gravity-wave entries and would hide under a single norm.
		n, nc := op.Len(), op.Mesh.NumCells
		var scale, scaleUU, errAll, errUU float64
		for r := 0; r < n; r++ {
			for c := 0; c < n; c++ {
				d := math.Abs(got[r*n+c] - want[r*n+c])
				scale = max(scale, math.Abs(want[r*n+c]))
				errAll = max(errAll, d)
				if r >= nc && c >= nc {
					scaleUU = max(scaleUU, math.Abs(want[r*n+c]))
					errUU = max(errUU, d)
				}
			}
		}
		if errAll > 1e-12*scale || errUU > 1e-12*scaleUU {
			t.Errorf("%s n=%d %s β=%g: max error %.3g (scale %.3g), Coriolis block %.3g (scale %.3g)",
				tc.kind, tc.n, tc.scheme, tc.beta, errAll, scale, errUU, scaleUU)
		}
	}
}
