package scheme

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
)

var fusedSpecs = []mesh.Spec{
	{Kind: mesh.Quad, N: 8, Length: 2e6},
	{Kind: mesh.Hex, N: 8, Length: 2e6},
	{Kind: mesh.Hex, N: 10, Length: 2e6, Height: 1.6e6},
	{Kind: mesh.Tri, N: 8, Length: 2e6},
	{Kind: mesh.Icosahedral, N: 2, Radius: 6.37122e6},
}

// reference is the trisk tendency written operator by operator with the
// ops package (Ringler et al. 2010, J. Comput. Phys. 229, eqs. 21, 26, 49
// and §5): flux, divergence and kinetic energy, PV on vertices and edges,
// the TRiSK sums of F and q F, and the momentum equation. The scheme
// regroups the same sums per cell, so the two agree to round-off.
func reference(f fixture, name string) []float64 {
	g := f.g
	nc, ne, nv := g.NumCells, g.NumEdges, g.NumVertices
	h, u := f.x[:nc], f.x[nc:]
	out := make([]float64, nc+ne)
	flux := make([]float64, ne)
	g.EdgeFlux(nil, flux, h, u, 0, ne)
	div, ke := make([]float64, nc), make([]float64, nc)
	g.DivKE(div, ke, flux, u, 0, nc)
	phi := make([]float64, nc)
	for i := range phi {
		phi[i] = ke[i] + f.phys.G*(h[i]+f.phys.Bottom[i])
		out[i] = -div[i]
	}
	q := make([]float64, nv)
	zeta, hv := make([]float64, nv), make([]float64, nv)
	g.Vorticity(zeta, hv, u, h, 0, nv)
	for v := range q {
		q[v] = (zeta[v] + f.phys.FVertex[v]) / hv[v]
	}
	qe, qf := make([]float64, ne), make([]float64, ne)
	for e := range qe {
		qe[e] = 0.5 * (q[g.EdgeVertices[2*e]] + q[g.EdgeVertices[2*e+1]])
		qf[e] = qe[e] * flux[e]
	}
	tr := ops.NewTRiSK(g)
	ga, gb := make([]float64, tr.Slots()), make([]float64, tr.Slots())
	tr.CellSums2(ga, gb, flux, qf, 0, nc)
	for e := 0; e < ne; e++ {
		c0, c1 := g.EdgeCells[2*e], g.EdgeCells[2*e+1]
		perp := 0.5 * (qe[e]*tr.Edge(ga, e) + tr.Edge(gb, e))
		if name == TRiSKEnstrophy {
			perp = qe[e] * tr.Edge(ga, e)
		}
		out[nc+e] = (perp - (phi[c1] - phi[c0])) / g.DualLength[e]
	}
	return out
}

// The fused passes compute the same tendency as the operators composed
// one by one, to round-off relative to the size of the terms.
func TestTendencyMatchesOperators(t *testing.T) {
	for _, spec := range fusedSpecs {
		for _, name := range []string{TRiSKEnergy, TRiSKEnstrophy} {
			f := randomFixtureOn(t, spec, 3)
			s, err := New(name, f.g, f.phys, par.New(1), Options{})
			if err != nil {
				t.Fatal(err)
			}
			got := make([]float64, len(f.x))
			s.Tendency(got, f.x)
			want := reference(f, name)
			scale := make([]float64, 2)
			nc := f.g.NumCells
			for k, w := range want {
				scale[min(k/nc, 1)] = max(scale[min(k/nc, 1)], math.Abs(w))
			}
			for k, w := range want {
				if d := math.Abs(got[k] - w); d > 1e-11*scale[min(k/nc, 1)] {
					t.Fatalf("%s on %s %d: element %d is %g, operators give %g", name, spec.Kind, spec.N, k, got[k], w)
				}
			}
		}
	}
}

// Stage must give, bit for bit, what Tendency followed by the stage's
// element-wise update gives, for every stage form and worker count.
func TestStageMatchesTendency(t *testing.T) {
	stages := []struct{ a, b float64 }{{0, 1}, {0.75, 0.25}, {1.0 / 3, 2.0 / 3}}
	var fixtures []fixture
	for _, spec := range fusedSpecs {
		fixtures = append(fixtures, randomFixtureOn(t, spec, 5))
		if spec.Kind != mesh.Icosahedral {
			// The same with a general Hodge star (two edge passes).
			fixtures = append(fixtures, distorted(t, spec, 5))
		}
	}
	for _, f := range fixtures {
		spec := mesh.Spec{Kind: f.m.Kind}
		x0 := make([]float64, len(f.x))
		for k, v := range f.x {
			x0[k] = v * (1 + 1e-3*math.Sin(float64(k)))
		}
		for _, name := range schemesOn(f) {
			for _, w := range []int{1, 2, 3} {
				pool := par.New(w)
				s, err := New(name, f.g, f.phys, pool, Options{})
				if err != nil {
					t.Fatal(err)
				}
				s.SetDt(60)
				st := s.(interface {
					Stage(x, x0 []float64, a, b, dt float64)
				})
				for _, c := range stages {
					k := make([]float64, len(f.x))
					s.Tendency(k, f.x)
					want := make([]float64, len(f.x))
					for i := range want {
						want[i] = stageValue(f.x[i], x0[i], k[i], c.a, c.b, 60)
					}
					got := append([]float64(nil), f.x...)
					st.Stage(got, x0, c.a, c.b, 60)
					for i := range got {
						if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
							t.Fatalf("%s on %s (general Hodge %t), %d workers, stage (%g, %g): element %d is %g, want %g", name, spec.Kind, f.g.Hodge != nil, w, c.a, c.b, i, got[i], want[i])
						}
					}
				}
				pool.Close()
			}
		}
	}
}

// The hexagon, quadrilateral and triangle kernels are the general cell kernel
// written out: on their cells all must give the same bits, apvm's
// correction of q_e included.
func TestHexagonKernelMatchesGeneral(t *testing.T) {
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 16, Length: 2e6}, {Kind: mesh.Icosahedral, N: 2, Radius: 6.37122e6},
		{Kind: mesh.Quad, N: 16, Length: 2e6}, {Kind: mesh.Cubed, N: 6, Radius: 6.37122e6},
		{Kind: mesh.Quad, N: 16, Length: 2e6, Jitter: 0.2, Seed: 3},
		{Kind: mesh.Tri, N: 16, Length: 2e6}, {Kind: mesh.Tri, N: 16, Length: 2e6, Distort: 0.1, Seed: 3},
	} {
		f := randomFixtureOn(t, spec, 7)
		if err := mesh.EnsureHodge(f.m); err != nil {
			t.Fatal(err)
		}
		for _, name := range []string{TRiSKEnergy, TRiSKEnstrophy, APVM} {
			s := newTRiSK(name, f.g, f.phys, par.New(1), Options{APVMFactor: 0.5})
			s.SetDt(600)
			dx := make([]float64, len(f.x))
			s.x, s.dst, s.dh = f.x, dx, dx[:s.nc]
			s.pool.For(s.nv, s.phaseVertices)
			s.edgePasses()
			if s.corr != nil {
				s.pool.For(s.nc, s.phaseQ)
				s.pool.For(s.ne, s.phaseA)
				if !slices.ContainsFunc(s.corr, func(c float64) bool { return c != 0 }) {
					t.Fatalf("%s %s: the anticipated-PV correction is zero everywhere", spec.Kind, name)
				}
			}
			special := 0
			for _, r := range s.runs {
				kernel := map[int32]func(lo, hi int){6: s.cells6, 4: s.cells4, 3: s.cells3}[r.N]
				if kernel == nil {
					continue
				}
				special += int(r.Hi - r.Lo)
				kernel(int(r.Lo), int(r.Hi))
				dhK := append([]float64(nil), dx[r.Lo:r.Hi]...)
				ttK := append([]pair(nil), s.tt...)
				s.cellsAny(int(r.Lo), int(r.Hi))
				for i, v := range dhK {
					if math.Float64bits(v) != math.Float64bits(dx[int(r.Lo)+i]) {
						t.Fatalf("%s %s: cell %d: ∂h/∂t %g by the %d-edge kernel, %g by the general one", spec.Kind, name, int(r.Lo)+i, v, r.N, dx[int(r.Lo)+i])
					}
				}
				for e := range ttK {
					if ttK[e] != s.tt[e] {
						t.Fatalf("%s %s: edge %d: shares %v by the %d-edge kernel, %v by the general one", spec.Kind, name, e, ttK[e], r.N, s.tt[e])
					}
				}
			}
			if special == 0 {
				t.Fatalf("%s: no hexagon, quadrilateral or triangle runs", fmt.Sprint(spec.Kind))
			}
		}
	}
}

// The written-out rows of the general Hodge star (five entries on
// distorted hexagons, seven on quadrilaterals and the cubed sphere,
// eleven on distorted triangles) are the general row loop written out:
// on their edges all must give the same bits, for the flux, the
// kinetic-energy share and apvm's H v, and so must their packed forms.
func TestHodgeRowKernelsMatchGeneral(t *testing.T) {
	seen := map[int32]bool{}
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 16, Length: 2e6, Distort: 0.1, Seed: 3},
		{Kind: mesh.Quad, N: 16, Length: 2e6, Jitter: 0.2, Seed: 3},
		{Kind: mesh.Cubed, N: 6, Radius: 6.37122e6},
		{Kind: mesh.Tri, N: 16, Length: 2e6, Distort: 0.1, Seed: 3},
	} {
		f := randomFixtureOn(t, spec, 7)
		if err := mesh.EnsureHodge(f.m); err != nil {
			t.Fatal(err)
		}
		for _, name := range []string{TRiSKEnergy, APVM} {
			s := newTRiSK(name, f.g, f.phys, par.New(1), Options{APVMFactor: 0.5})
			if s.hodge == nil {
				t.Fatalf("%s: no general Hodge star", spec.Kind)
			}
			dx := make([]float64, len(f.x))
			s.x, s.dst, s.dh = f.x, dx, dx[:s.nc]
			s.pool.For(s.ne, s.phaseCirc)
			special := 0
			for _, r := range s.hodgeRuns {
				kernel := map[int32]func(lo, hi int){5: s.hodgeRows5, 7: s.hodgeRows7, 11: s.hodgeRows11}[r.N]
				if kernel == nil {
					continue
				}
				seen[r.N] = true
				special += int(r.Hi - r.Lo)
				kernel(int(r.Lo), int(r.Hi))
				fkK := append([]pair(nil), s.fk...)
				luK := append([]float64(nil), s.lu...)
				s.hodgeRows(int(r.Lo), int(r.Hi))
				for e := r.Lo; e < r.Hi; e++ {
					if math.Float64bits(fkK[e][0]) != math.Float64bits(s.fk[e][0]) || math.Float64bits(fkK[e][1]) != math.Float64bits(s.fk[e][1]) {
						t.Fatalf("%s %s: edge %d: flux and share %v by the %d-entry row kernel, %v by the general one", spec.Kind, name, e, fkK[e], r.N, s.fk[e])
					}
					if s.lu != nil && math.Float64bits(luK[e]) != math.Float64bits(s.lu[e]) {
						t.Fatalf("%s %s: edge %d: H v %g by the %d-entry row kernel, %g by the general one", spec.Kind, name, e, luK[e], r.N, s.lu[e])
					}
				}
				// The packed kernel (where the build has it), over the run and
				// over a range inside it, from values set to NaN.
				for _, span := range [][2]int{{int(r.Lo), int(r.Hi)}, {int(r.Lo) + 1, int(r.Lo+r.Hi) / 2}} {
					for e := span[0]; e < span[1]; e++ {
						s.fk[e] = pair{math.NaN(), math.NaN()}
						if s.lu != nil {
							s.lu[e] = math.NaN()
						}
					}
					if got := s.hodgePacked(int(r.N), span[0], span[1]); got != packedKernels {
						t.Fatalf("%s %s: the packed %d-entry row kernel ran: %v, want %v", spec.Kind, name, r.N, got, packedKernels)
					}
					if !packedKernels {
						break
					}
					for e := span[0]; e < span[1]; e++ {
						if math.Float64bits(fkK[e][0]) != math.Float64bits(s.fk[e][0]) || math.Float64bits(fkK[e][1]) != math.Float64bits(s.fk[e][1]) {
							t.Fatalf("%s %s: edge %d: flux and share %v by the %d-entry row kernel, %v packed", spec.Kind, name, e, fkK[e], r.N, s.fk[e])
						}
						if s.lu != nil && math.Float64bits(luK[e]) != math.Float64bits(s.lu[e]) {
							t.Fatalf("%s %s: edge %d: H v %g by the %d-entry row kernel, %g packed", spec.Kind, name, e, luK[e], r.N, s.lu[e])
						}
					}
				}
			}
			if special == 0 {
				t.Fatalf("%s: no rows of 5, 7 or 11 entries", spec.Kind)
			}
		}
	}
	for _, n := range []int32{5, 7, 11} {
		if !seen[n] {
			t.Errorf("no grid exercised the %d-entry row kernel", n)
		}
	}
}

// apvm's cell pass (q on cells and the TRiSK sums of l u, stored beside
// each edge) gives, bit for bit, what ops.TRiSK's CellSums and Edge give
// and what the direct sum (1/A_i) Σ_v K_{i,v} q_v gives, for the
// written-out kernels (six, four and three edges) and the general one.
func TestAPVMCellPassMatchesTRiSK(t *testing.T) {
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 16, Length: 2e6}, {Kind: mesh.Icosahedral, N: 2, Radius: 6.37122e6},
		{Kind: mesh.Quad, N: 16, Length: 2e6}, {Kind: mesh.Cubed, N: 6, Radius: 6.37122e6},
		{Kind: mesh.Tri, N: 16, Length: 2e6, Distort: 0.1, Seed: 3},
	} {
		f := randomFixtureOn(t, spec, 11)
		s := newTRiSK(APVM, f.g, f.phys, par.New(1), Options{APVMFactor: 0.5})
		dx := make([]float64, len(f.x))
		s.x, s.dst, s.dh = f.x, dx, dx[:s.nc]
		s.phaseVertices(0, s.nv)
		s.edgePasses()
		tr := ops.NewTRiSK(f.g)
		G := make([]float64, tr.Slots())
		tr.CellSums(G, s.lu, 0, s.nc)
		for _, kernel := range []struct {
			name string
			fn   func(lo, hi int)
		}{{"dispatched", s.cellPV}, {"general", s.cellPVAny}} {
			clear(s.qcell)
			clear(s.gv)
			kernel.fn(0, s.nc)
			for i := 0; i < s.nc; i++ {
				m := 0.0
				for k := f.g.CellEdgeStart[i]; k < f.g.CellEdgeStart[i+1]; k++ {
					m += f.g.CellKiteArea[k] * s.q[f.g.CellVertices[k]]
				}
				if want := m * (1 / f.g.CellArea[i]); math.Float64bits(s.qcell[i]) != math.Float64bits(want) {
					t.Fatalf("%s, %s kernel: cell %d: q %g, want %g", spec.Kind, kernel.name, i, s.qcell[i], want)
				}
			}
			for e := 0; e < s.ne; e++ {
				if got, want := s.gv[e][0]-s.gv[e][1], tr.Edge(G, e); math.Float64bits(got) != math.Float64bits(want) {
					t.Fatalf("%s, %s kernel: edge %d: Σ W l u %g, ops.TRiSK %g", spec.Kind, kernel.name, e, got, want)
				}
			}
		}
	}
}
