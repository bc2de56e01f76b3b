package mesh

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gyrebench/sim/internal/r3"
)

func cubed(t testing.TB, n int) *Mesh {
	t.Helper()
	m, err := New(Spec{Kind: Cubed, N: n, Radius: earthRadius})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// The equiangular gnomonic cubed sphere (Ronchi, Iacono & Paolucci 1996,
// J. Comput. Phys. 124, 93–114; Rančić, Purser & Mesinger 1996, Q. J. R.
// Meteorol. Soc. 122, 959–982): 6n² quadrilaterals, 12n² edges, 6n²+2
// vertices (V − E + F = 2), the 8 cube corners of valence 3 and every other
// vertex of valence 4; Σ A_i = Σ A_v = 4πa²; the incidence an exact
// sequence; the dual not orthogonal (n ≥ 3).
//
// Kites tile both grids: each cell's area (the sum of its kites) equals
// the area of its four corners' spherical quadrilateral split along a
// diagonal, and each vertex's area equals the polygon of the centres
// around it, fanned from the vertex: decompositions that share nothing
// with the kites but the corners.
//
// The area ratio A_max/A_min tends to √2: the equiangular area element
// (1+tan²α)(1+tan²β)/(1+tan²α+tan²β)^{3/2} dα dβ (Ronchi et al. 1996, from
// memory) is 1 at a panel centre, 4/3^{3/2} ≈ 0.770 at a corner and
// 2^{−1/2} at the middle of a panel edge, the smallest. The largest
// deviation from orthogonality stays below the 30° at the cube corners,
// where three cells meet at 120°.
func TestCubedSphere(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{2, 3, 4, 8, 16, 32, 64, 128} {
		t.Run(fmt.Sprint("n=", n), func(t *testing.T) {
			m := cubed(t, n)
			if m.NumCells != 6*n*n || m.NumEdges != 12*n*n || m.NumVertices != 6*n*n+2 {
				t.Fatalf("cells, edges, vertices = %d, %d, %d; want %d, %d, %d",
					m.NumCells, m.NumEdges, m.NumVertices, 6*n*n, 12*n*n, 6*n*n+2)
			}
			if chi := m.NumVertices - m.NumEdges + m.NumCells; chi != 2 {
				t.Errorf("V − E + F = %d, want 2", chi)
			}
			valence := map[int]int{}
			for v := 0; v < m.NumVertices; v++ {
				lo, hi := m.EdgesOfVertex(v)
				valence[hi-lo]++
			}
			if valence[3] != 8 || valence[4] != m.NumVertices-8 {
				t.Errorf("vertices by valence %v, want 8 of 3 and the rest of 4", valence)
			}
			for i := 0; i < m.NumCells; i++ {
				if lo, hi := m.EdgesOfCell(i); hi-lo != 4 {
					t.Fatalf("cell %d has %d edges", i, hi-lo)
				}
			}
			checkAreaSums(t, m)
			checkExactSequence(t, m, rng)

			r2 := earthRadius * earthRadius
			unit := func(x, y, z float64) vec3 { return vec3{x, y, z}.Unit() }
			amin, amax := math.Inf(1), 0.0
			for i := 0; i < m.NumCells; i++ {
				lo, _ := m.EdgesOfCell(i)
				var p [4]vec3
				for k := range p {
					v := m.CellVertices[lo+k]
					p[k] = unit(m.VertexX[v], m.VertexY[v], m.VertexZ[v])
				}
				quad := r2 * (r3.TriArea(p[0], p[1], p[2]) + r3.TriArea(p[0], p[2], p[3]))
				if math.Abs(m.CellArea[i]-quad) > 1e-12*quad {
					t.Fatalf("cell %d: Σ kites %.15g, quadrilateral %.15g", i, m.CellArea[i], quad)
				}
				amin, amax = min(amin, quad), max(amax, quad)
			}
			for v := 0; v < m.NumVertices; v++ {
				lo, hi := m.EdgesOfVertex(v)
				o := unit(m.VertexX[v], m.VertexY[v], m.VertexZ[v])
				a := 0.0
				for k := lo; k < hi; k++ {
					c, d := m.VertexCells[k], m.VertexCells[lo+(k+1-lo)%(hi-lo)]
					a += r3.TriArea(o, unit(m.CellX[c], m.CellY[c], m.CellZ[c]), unit(m.CellX[d], m.CellY[d], m.CellZ[d]))
				}
				if a *= r2; math.Abs(m.VertexArea[v]-a) > 1e-12*a {
					t.Fatalf("vertex %d: Σ kites %.15g, polygon of centres %.15g", v, m.VertexArea[v], a)
				}
			}
			dev := m.NonOrthogonality() * 180 / math.Pi
			t.Logf("largest deviation from orthogonality %.2f°, A_max/A_min = %.4f", dev, amax/amin)
			if n == 2 {
				if !m.Orthogonal || dev > 1e-9 {
					t.Errorf("n = 2 is orthogonal by symmetry: Orthogonal = %t, deviation %.3g°", m.Orthogonal, dev)
				}
			} else if m.Orthogonal || dev < 5 || dev >= 30 {
				t.Errorf("Orthogonal = %t, deviation %.3g°; want false and 5° < deviation < 30°", m.Orthogonal, dev)
			}
			if n == 128 && math.Abs(amax/amin-math.Sqrt2) > 0.01 {
				t.Errorf("A_max/A_min = %.4f, want √2 to 0.01 at n = 128", amax/amin)
			}
		})
	}
}

// Orientation and positions follow the package conventions: points on the
// sphere, cells anticlockwise seen from outside, X_e on both arcs, n_e a
// unit tangent along the dual arc from c0 to c1 and t_e = k × n_e along
// v0 → v1, centres the normalised means of their corners, and the 24
// cells at the cube corners (images of each other under the cube's
// symmetries) of equal area, which needs exactly merged panel edges.
func TestCubedGeometry(t *testing.T) {
	for _, n := range []int{3, 4, 7, 16} {
		m := cubed(t, n)
		a := earthRadius
		for i := 0; i < m.NumCells; i++ {
			x := cellPos(m, int32(i))
			if math.Abs(x.Norm()-a) > 1e-9*a {
				t.Fatalf("n=%d cell %d off the sphere", n, i)
			}
			lo, hi := m.EdgesOfCell(i)
			var mean vec3
			turn := 0.0
			for k := lo; k < hi; k++ {
				mean = mean.Add(vertPos(m, m.CellVertices[k]).Unit())
				p, q := vertPos(m, m.CellVertices[k]), vertPos(m, m.CellVertices[lo+(k+1-lo)%(hi-lo)])
				p, q = p.Sub(x.Scale(p.Dot(x)/x.Dot(x))), q.Sub(x.Scale(q.Dot(x)/x.Dot(x)))
				turn += math.Atan2(p.Cross(q).Dot(x.Unit()), p.Dot(q))
			}
			if math.Abs(turn-2*math.Pi) > 1e-9 {
				t.Fatalf("n=%d cell %d: corners turn by %g about the centre, want +2π", n, i, turn)
			}
			if d := arc(mean.Unit(), x.Unit()); d > 1e-14 {
				t.Fatalf("n=%d cell %d: centre %.3g rad from the normalised corner mean", n, i, d)
			}
		}
		for e := 0; e < m.NumEdges; e++ {
			c0, c1 := cellPos(m, m.EdgeCells[2*e]).Unit(), cellPos(m, m.EdgeCells[2*e+1]).Unit()
			v0, v1 := vertPos(m, m.EdgeVertices[2*e]).Unit(), vertPos(m, m.EdgeVertices[2*e+1]).Unit()
			x := edgePos(m, e).Unit()
			nrm := vec3{m.NormalX[e], m.NormalY[e], m.NormalZ[e]}
			if s := r3.Triple(c0, c1, x); math.Abs(s) > 1e-14 {
				t.Fatalf("n=%d edge %d: X_e off the arc c0–c1 by %g", n, e, s)
			}
			if s := r3.Triple(v0, v1, x); math.Abs(s) > 1e-14 {
				t.Fatalf("n=%d edge %d: X_e off the arc v0–v1 by %g", n, e, s)
			}
			if d := arc(c0, x) + arc(x, c1) - arc(c0, c1); math.Abs(d) > 1e-12 {
				t.Fatalf("n=%d edge %d: X_e not between c0 and c1", n, e)
			}
			if d := arc(v0, x) + arc(x, v1) - arc(v0, v1); math.Abs(d) > 1e-12 {
				t.Fatalf("n=%d edge %d: X_e not between v0 and v1", n, e)
			}
			if math.Abs(nrm.Norm()-1) > 1e-14 || math.Abs(nrm.Dot(x)) > 1e-14 || math.Abs(nrm.Dot(c0.Cross(c1).Unit())) > 1e-14 {
				t.Fatalf("n=%d edge %d: n_e is not the unit tangent of the dual arc", n, e)
			}
			if nrm.Dot(c1.Sub(c0)) <= 0 || x.Cross(nrm).Dot(v1.Sub(v0)) <= 0 {
				t.Fatalf("n=%d edge %d: n_e must point from c0 to c1 and k × n_e from v0 to v1", n, e)
			}
			if math.Abs(m.DualLength[e]-a*arc(c0, c1)) > 1e-12*m.DualLength[e] || math.Abs(m.EdgeLength[e]-a*arc(v0, v1)) > 1e-12*m.EdgeLength[e] {
				t.Fatalf("n=%d edge %d: lengths are not the great-circle arcs", n, e)
			}
		}
		// Cells at a cube corner: a vertex of valence 3.
		var corner []float64
		for v := 0; v < m.NumVertices; v++ {
			if lo, hi := m.EdgesOfVertex(v); hi-lo == 3 {
				for k := lo; k < hi; k++ {
					corner = append(corner, m.CellArea[m.VertexCells[k]])
				}
			}
		}
		for _, c := range corner {
			if math.Abs(c-corner[0]) > 1e-12*corner[0] {
				t.Fatalf("n=%d: corner cell areas differ: %v", n, corner)
			}
		}
	}
}

func TestCubedSpecErrors(t *testing.T) {
	for _, tc := range []struct {
		spec Spec
		want string
	}{
		{Spec{Kind: Cubed, N: 1, Radius: 1}, "grid.n = 1"},
		{Spec{Kind: Cubed, N: MaxCubedN + 1, Radius: 1}, "grid.n = 837"},
		{Spec{Kind: Cubed, N: 8, Radius: 0}, "physics.radius"},
		{Spec{Kind: Cubed, N: 8, Radius: 1, Optimize: OptimizeLloyd}, `grid.optimize = "lloyd"`},
		{Spec{Kind: "cube", N: 8, Radius: 1}, "allowed: quad, hex, tri, icosahedral, cubed"},
	} {
		_, err := New(tc.spec)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("New(%+v) = %v, want an error containing %q", tc.spec, err, tc.want)
		}
	}
	if c, err := (Spec{Kind: Cubed, N: MaxCubedN, Radius: 1}).Cells(); err != nil || c > MaxCells {
		t.Errorf("n = %d: %d cells, %v; want at most %d", MaxCubedN, c, err, MaxCells)
	}
}

func ExampleNew_cubed() {
	m, err := New(Spec{Kind: Cubed, N: 32, Radius: 6.37122e6})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d cells, %d edges, %d vertices; orthogonal: %t\n", m.NumCells, m.NumEdges, m.NumVertices, m.Orthogonal)
	// Output: 6144 cells, 12288 edges, 6146 vertices; orthogonal: false
}

func BenchmarkCubed(b *testing.B) {
	for _, n := range []int{64, 128} {
		b.Run(fmt.Sprint("n=", n), func(b *testing.B) {
			for b.Loop() {
				if _, err := New(Spec{Kind: Cubed, N: n, Radius: earthRadius}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
