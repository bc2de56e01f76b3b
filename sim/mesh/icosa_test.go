package mesh

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gyrebench/sim/internal/r3"
)

const earthRadius = 6.37122e6 // Williamson et al. (1992, J. Comput. Phys. 102, 211–224), from memory

func icosa(t testing.TB, n int, opt string) *Mesh {
	t.Helper()
	m, err := New(Spec{Kind: Icosahedral, N: n, Radius: earthRadius, Optimize: opt})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func cellPos(m *Mesh, i int32) vec3 { return vec3{m.CellX[i], m.CellY[i], m.CellZ[i]} }
func vertPos(m *Mesh, v int32) vec3 { return vec3{m.VertexX[v], m.VertexY[v], m.VertexZ[v]} }
func edgePos(m *Mesh, e int) vec3   { return vec3{m.EdgeX[e], m.EdgeY[e], m.EdgeZ[e]} }

// Counts of the icosahedral geodesic grid (each bisection quadruples the
// 20 triangles; Euler's formula fixes the rest; e.g. Heikes & Randall
// 1995, Mon. Wea. Rev. 123, 1862–1880, from memory):
// N_c = 10·4ⁿ + 2, N_e = 30·4ⁿ, N_v = 20·4ⁿ; 12 pentagons, the rest
// hexagons; every Voronoi vertex has three edges; V − E + F = 2.
func TestIcosahedralCounts(t *testing.T) {
	for _, tc := range []struct {
		n   int
		opt string
	}{{0, "none"}, {1, "none"}, {2, "lloyd"}, {3, "none"}, {4, "lloyd"}, {5, "none"}, {7, "none"}} {
		m := icosa(t, tc.n, tc.opt)
		p := 1 << (2 * tc.n)
		if m.NumCells != 10*p+2 || m.NumEdges != 30*p || m.NumVertices != 20*p {
			t.Errorf("level %d: cells, edges, vertices = %d, %d, %d; want %d, %d, %d",
				tc.n, m.NumCells, m.NumEdges, m.NumVertices, 10*p+2, 30*p, 20*p)
		}
		if chi := m.NumVertices - m.NumEdges + m.NumCells; chi != 2 {
			t.Errorf("level %d: V − E + F = %d, want 2 on the sphere", tc.n, chi)
		}
		sides := map[int]int{}
		for i := 0; i < m.NumCells; i++ {
			lo, hi := m.EdgesOfCell(i)
			sides[hi-lo]++
		}
		if sides[5] != 12 || sides[5]+sides[6] != m.NumCells {
			t.Errorf("level %d: cells by number of sides %v, want 12 pentagons and the rest hexagons", tc.n, sides)
		}
		for v := 0; v < m.NumVertices; v++ {
			if lo, hi := m.EdgesOfVertex(v); hi-lo != 3 {
				t.Fatalf("level %d: vertex %d has %d edges, want 3", tc.n, v, hi-lo)
			}
		}
		if tc.n == 7 {
			checkAreaSums(t, m)
		}
	}
}

func checkAreaSums(t *testing.T, m *Mesh) {
	t.Helper()
	total := 4 * math.Pi * earthRadius * earthRadius
	var sc, sv float64
	for _, a := range m.CellArea {
		sc += a
	}
	for _, a := range m.VertexArea {
		sv += a
	}
	if math.Abs(sc-total) > 1e-12*total || math.Abs(sv-total) > 1e-12*total {
		t.Errorf("level %d: Σ A_i − 4πa² = %.3g, Σ A_v − 4πa² = %.3g (relative), want < 1e-12",
			m.N, (sc-total)/total, (sv-total)/total)
	}
	for k, a := range m.CellKiteArea {
		if !(a > 0) {
			t.Fatalf("level %d: kite %d has area %g", m.N, k, a)
		}
	}
}

// Areas are exact spherical areas, so the cells and the dual triangles each
// tile the sphere: Σ A_i = Σ A_v = 4πa². Each dual cell is the Delaunay
// triangle of its three generators, whose area l'Huilier's theorem gives
// from the side lengths alone (an independent formula). The pentagons are
// images of each other under the icosahedral group, so their areas agree.
func TestIcosahedralAreas(t *testing.T) {
	lhuilier := func(a, b, c float64) float64 {
		s := (a + b + c) / 2
		return 4 * math.Atan(math.Sqrt(math.Tan(s/2)*math.Tan((s-a)/2)*math.Tan((s-b)/2)*math.Tan((s-c)/2)))
	}
	for _, opt := range []string{"none", "lloyd"} {
		for n := 0; n <= 5; n++ {
			m := icosa(t, n, opt)
			checkAreaSums(t, m)
			for v := 0; v < m.NumVertices; v++ {
				lo := m.VertexEdgeStart[v]
				var side [3]float64
				for k := 0; k < 3; k++ {
					side[k] = m.DualLength[m.VertexEdges[int(lo)+k]] / earthRadius
				}
				want := earthRadius * earthRadius * lhuilier(side[0], side[1], side[2])
				if math.Abs(m.VertexArea[v]-want) > 1e-8*want {
					t.Fatalf("%s level %d vertex %d: A_v = %.12g, l'Huilier %.12g", opt, n, v, m.VertexArea[v], want)
				}
			}
			var pent []float64
			for i := 0; i < m.NumCells; i++ {
				if lo, hi := m.EdgesOfCell(i); hi-lo == 5 {
					pent = append(pent, m.CellArea[i])
				}
			}
			for _, a := range pent {
				if math.Abs(a-pent[0]) > 1e-9*pent[0] {
					t.Errorf("%s level %d: pentagon areas differ: %v", opt, n, pent)
					break
				}
			}
		}
	}
}

// Positions and orientation follow the package conventions: points on the
// sphere, each vertex equidistant from its three cells (Voronoi), the edge
// point midway between c0 and c1 and on the arc v0–v1, n_e a unit tangent
// from c0 to c1, t_e = k × n_e from v0 to v1, cells anticlockwise seen
// from outside, and the triangulation locally Delaunay (no generator
// closer to a circumcentre than that triangle's corners).
func TestIcosahedralGeometry(t *testing.T) {
	for _, opt := range []string{"none", "lloyd"} {
		for n := 0; n <= 4; n++ {
			m := icosa(t, n, opt)
			a := earthRadius
			onSphere := func(what string, i int, p vec3) {
				if math.Abs(p.Norm()-a) > 1e-9*a {
					t.Fatalf("%s level %d: %s %d at radius %.10g, want %.10g", opt, n, what, i, p.Norm(), a)
				}
			}
			chord := func(p, q vec3) float64 { return 2 * a * math.Asin(q.Sub(p).Norm()/(2*a)) }
			for i := 0; i < m.NumCells; i++ {
				x := cellPos(m, int32(i))
				onSphere("cell", i, x)
				lo, hi := m.EdgesOfCell(i)
				turn := 0.0
				for k := lo; k < hi; k++ {
					e1, e2 := int(m.CellEdges[k]), int(m.CellEdges[lo+(k+1-lo)%(hi-lo)])
					// Directions to the edge points in the tangent plane at x.
					p, q := edgePos(m, e1), edgePos(m, e2)
					p, q = p.Sub(x.Scale(p.Dot(x)/x.Dot(x))), q.Sub(x.Scale(q.Dot(x)/x.Dot(x)))
					turn += math.Atan2(p.Cross(q).Dot(x.Unit()), p.Dot(q))
				}
				if math.Abs(turn-2*math.Pi) > 1e-9 {
					t.Fatalf("%s level %d cell %d: edges turn by %g about the centre, want +2π (anticlockwise)", opt, n, i, turn)
				}
			}
			for v := 0; v < m.NumVertices; v++ {
				p := vertPos(m, int32(v))
				onSphere("vertex", v, p)
				lo, hi := m.EdgesOfVertex(v)
				r0 := chord(p, cellPos(m, m.VertexCells[lo]))
				for k := lo; k < hi; k++ {
					if r := chord(p, cellPos(m, m.VertexCells[k])); math.Abs(r-r0) > 1e-7*r0 {
						t.Fatalf("%s level %d vertex %d: distances to its cells %g and %g", opt, n, v, r0, r)
					}
				}
			}
			for e := 0; e < m.NumEdges; e++ {
				c0, c1 := cellPos(m, m.EdgeCells[2*e]), cellPos(m, m.EdgeCells[2*e+1])
				v0, v1 := vertPos(m, m.EdgeVertices[2*e]), vertPos(m, m.EdgeVertices[2*e+1])
				x := edgePos(m, e)
				nrm := vec3{m.NormalX[e], m.NormalY[e], m.NormalZ[e]}
				onSphere("edge point", e, x)
				if d0, d1 := chord(x, c0), chord(x, c1); math.Abs(d0-d1) > 1e-9*d0 || math.Abs(d0+d1-m.DualLength[e]) > 1e-9*d0 {
					t.Fatalf("%s level %d edge %d: distances to c0, c1 = %g, %g; d_e = %g", opt, n, e, d0, d1, m.DualLength[e])
				}
				if l := chord(v0, v1); math.Abs(l-m.EdgeLength[e]) > 1e-9*l {
					t.Fatalf("%s level %d edge %d: l_e = %g, chord formula %g", opt, n, e, m.EdgeLength[e], l)
				}
				if s := r3.Triple(v0.Unit(), v1.Unit(), x.Unit()); math.Abs(s) > 1e-12 {
					t.Fatalf("%s level %d edge %d: edge point off the great circle v0–v1 by %g", opt, n, e, s)
				}
				if math.Abs(nrm.Norm()-1) > 1e-14 || math.Abs(nrm.Dot(x.Unit())) > 1e-14 {
					t.Fatalf("%s level %d edge %d: n_e = %v is not a unit tangent", opt, n, e, nrm)
				}
				tan := x.Unit().Cross(nrm)
				if nrm.Dot(c1.Sub(c0)) <= 0 || tan.Dot(v1.Sub(v0)) <= 0 {
					t.Fatalf("%s level %d edge %d: n_e must point from c0 to c1 and k × n_e from v0 to v1", opt, n, e)
				}
				// Local Delaunay: the far generator of each side's triangle
				// lies outside the other triangle's circumcircle.
				for _, w := range []struct{ cc, far vec3 }{{v0, farCorner(m, e, 1)}, {v1, farCorner(m, e, 0)}} {
					if chord(w.cc, w.far) < chord(w.cc, c0)*(1-1e-12) {
						t.Fatalf("%s level %d edge %d: triangulation not Delaunay", opt, n, e)
					}
				}
			}
		}
	}
}

// farCorner returns the generator of the triangle EdgeVertices[2e+s]
// that is not an end of edge e.
func farCorner(m *Mesh, e, s int) vec3 {
	v := int(m.EdgeVertices[2*e+s])
	lo, hi := m.EdgesOfVertex(v)
	for k := lo; k < hi; k++ {
		if c := m.VertexCells[k]; c != m.EdgeCells[2*e] && c != m.EdgeCells[2*e+1] {
			return cellPos(m, c)
		}
	}
	panic("no third cell")
}

// Lloyd's algorithm drives the generators towards the centroids of their
// cells (Du, Faber & Gunzburger 1999, SIAM Review 41, 637–676), so the
// largest generator–centroid distance must fall well below that of the
// bisected icosahedron. The icosahedron itself and level 1 are centroidal
// by symmetry. CentroidOffset is checked against a brute-force integral of
// x over every cell, each sector split into 4⁴ small triangles.
func TestLloydReducesCentroidOffset(t *testing.T) {
	for n := 0; n <= 5; n++ {
		none, lloyd := icosa(t, n, "none"), icosa(t, n, "lloyd")
		on, ol := none.CentroidOffset(), lloyd.CentroidOffset()
		d := none.Spacing()
		t.Logf("level %d: max generator–centroid distance %.4g km (none), %.4g km (lloyd); spacing %.0f km", n, on/1e3, ol/1e3, d/1e3)
		if n <= 1 {
			if on > 1e-9*d || ol > 1e-9*d {
				t.Errorf("level %d: centroid offsets %g, %g m on a symmetric grid, want 0", n, on, ol)
			}
			continue
		}
		if on < 1e-3*d {
			t.Errorf("level %d: the bisected grid has offset %g m; the check cannot tell Lloyd from nothing", n, on)
		}
		if ol > on/20 {
			t.Errorf("level %d: Lloyd offset %.4g m, not 20 times below the bisected grid's %.4g m", n, ol, on)
		}
		if n == 3 {
			if got, want := bruteOffset(none), on; math.Abs(got-want) > 1e-4*want {
				t.Errorf("level 3: brute-force centroid offset %.6g m, CentroidOffset %.6g m", got, want)
			}
		}
	}
}

// bruteOffset returns the largest generator–centroid distance with the
// first moment integrated numerically.
func bruteOffset(m *Mesh) float64 {
	var sub func(a, b, c vec3, depth int) vec3
	sub = func(a, b, c vec3, depth int) vec3 {
		if depth == 0 {
			return a.Add(b).Add(c).Unit().Scale(r3.TriArea(a, b, c))
		}
		ab, bc, ca := a.Add(b).Unit(), b.Add(c).Unit(), c.Add(a).Unit()
		return sub(a, ab, ca, depth-1).Add(sub(ab, b, bc, depth-1)).Add(sub(ca, bc, c, depth-1)).Add(sub(ab, bc, ca, depth-1))
	}
	worst := 0.0
	for i := 0; i < m.NumCells; i++ {
		x := cellPos(m, int32(i)).Unit()
		lo, hi := m.EdgesOfCell(i)
		var s vec3
		for k := lo; k < hi; k++ {
			p := vertPos(m, m.CellVertices[k]).Unit()
			q := vertPos(m, m.CellVertices[lo+(k+1-lo)%(hi-lo)]).Unit()
			s = s.Add(sub(x, p, q, 4))
		}
		worst = max(worst, arc(s.Unit(), x))
	}
	return worst * m.Surface.Radius
}

// The nominal spacing d = √(2A/√3), the centre spacing of a regular
// hexagon of the mean cell area A = 4πa²/N_c (derived here), matches the
// mean distance between neighbouring centres to within a few per cent.
func TestIcosahedralSpacing(t *testing.T) {
	for _, tc := range []struct {
		n    int
		dKm  float64
		rtKm float64 // √A
	}{{3, 958, 891}, {4, 480, 446}, {5, 240, 223}} {
		m := icosa(t, tc.n, "none")
		a := 4 * math.Pi * earthRadius * earthRadius / float64(m.NumCells)
		if got := math.Sqrt(a) / 1e3; math.Abs(got-tc.rtKm) > 1 {
			t.Errorf("level %d: √A = %.1f km, √(4πa²/N_c) gives %.0f", tc.n, got, tc.rtKm)
		}
		if got := m.Spacing() / 1e3; math.Abs(got-tc.dKm) > 0.05*tc.dKm {
			t.Errorf("level %d: mean centre spacing %.1f km, nominal %.0f km", tc.n, got, tc.dKm)
		}
	}
}

func TestIcosahedralSpecErrors(t *testing.T) {
	for _, tc := range []struct {
		spec Spec
		want string
	}{
		{Spec{Kind: Icosahedral, N: -1, Radius: 1}, "grid.n"},
		{Spec{Kind: Icosahedral, N: 10, Radius: 1}, "grid.n"},
		{Spec{Kind: Icosahedral, N: 3, Radius: 0}, "physics.radius"},
		{Spec{Kind: Icosahedral, N: 3, Radius: math.Inf(1)}, "physics.radius"},
		{Spec{Kind: Icosahedral, N: 3, Radius: 1, Optimize: "spring"}, `grid.optimize = "spring"`},
		{Spec{Kind: Hex, N: 8, Length: 1, Optimize: "lloyd"}, `grid.optimize = "lloyd"`},
	} {
		_, err := New(tc.spec)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("New(%+v) = %v, want an error naming %s", tc.spec, err, tc.want)
		}
	}
}

func ExampleNew_icosahedral() {
	m, err := New(Spec{Kind: Icosahedral, N: 4, Radius: 6.37122e6, Optimize: OptimizeLloyd})
	if err != nil {
		fmt.Println(err)
		return
	}
	pent := 0
	for i := 0; i < m.NumCells; i++ {
		if lo, hi := m.EdgesOfCell(i); hi-lo == 5 {
			pent++
		}
	}
	fmt.Printf("%d cells (%d pentagons), %d edges, %d vertices; spacing ≈ %.0f km\n",
		m.NumCells, pent, m.NumEdges, m.NumVertices, m.Spacing()/1e3)
	// Output: 2562 cells (12 pentagons), 7680 edges, 5120 vertices; spacing ≈ 481 km
}

func BenchmarkIcosahedral(b *testing.B) {
	for _, tc := range []struct {
		n   int
		opt string
	}{{5, OptimizeNone}, {5, OptimizeLloyd}, {7, OptimizeNone}, {7, OptimizeLloyd}} {
		b.Run(fmt.Sprintf("level=%d/%s", tc.n, tc.opt), func(b *testing.B) {
			for b.Loop() {
				if _, err := New(Spec{Kind: Icosahedral, N: tc.n, Radius: earthRadius, Optimize: tc.opt}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// The renumbering puts neighbours near in memory: the mean index distance
// between a cell and each neighbour, and between a cell's first edge and
// its others, stays below 2√N, where the bisection's own numbering gives
// about N/3 (for example 14 629 against 278 at level 6; the ordering of
// a quadtree makes the distance grow like √N). The counts and the checks
// of TestIcosahedralGeometry show that the renumbered mesh is the same
// mesh.
func TestIcosahedralLocality(t *testing.T) {
	for n := 3; n <= 6; n++ {
		m := icosa(t, n, OptimizeNone)
		var cellDist, edgeDist float64
		for i := 0; i < m.NumCells; i++ {
			lo, hi := m.EdgesOfCell(i)
			for k := lo; k < hi; k++ {
				e := m.CellEdges[k]
				j := m.EdgeCells[2*e] + m.EdgeCells[2*e+1] - int32(i)
				cellDist += math.Abs(float64(int(j) - i))
				edgeDist += math.Abs(float64(e - m.CellEdges[lo]))
			}
		}
		cellDist /= float64(len(m.CellEdges))
		edgeDist /= float64(len(m.CellEdges))
		if bound := 2 * math.Sqrt(float64(m.NumCells)); cellDist > bound {
			t.Errorf("level %d: mean index distance between neighbouring cells %.0f, want at most 2√N_c = %.0f", n, cellDist, bound)
		}
		if bound := 2 * math.Sqrt(float64(m.NumEdges)); edgeDist > bound {
			t.Errorf("level %d: mean index distance between the edges of a cell %.0f, want at most 2√N_e = %.0f", n, edgeDist, bound)
		}
		t.Logf("level %d: mean index distance %.0f between neighbouring cells, %.0f between the edges of a cell", n, cellDist, edgeDist)
	}
}
