package mesh

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// maxRelDiff returns max |a−b| / scale over the two arrays, differences
// taken modulo period when it is not 0.
func maxRelDiff(a, b []float64, scale, period float64) float64 {
	worst := 0.0
	for k := range a {
		d := a[k] - b[k]
		if period > 0 {
			d = wrap(d, period)
		}
		worst = max(worst, math.Abs(d)/scale)
	}
	return worst
}

func maxAbs(a []float64) float64 {
	m := 0.0
	for _, v := range a {
		m = max(m, math.Abs(v))
	}
	return m
}

// icosahedralPoints returns the unit generators and circumcentres of an
// icosahedral mesh as its generator computes them (dividing the stored
// metres by the radius would round them again).
func icosahedralPoints(m *Mesh, opt string) (x, p []vec3) {
	tr := bisected(m.N, opt)
	if opt == OptimizeLloyd {
		t := voronoiTopology(tr)
		lloyd(&t, tr, tr.pt)
	}
	p = make([]vec3, len(tr.tri)/3)
	circumcentres(tr, tr.pt, p)
	return tr.pt, p
}

// The general geometry (edge point at the crossing of the dual and primal
// edges, exact kites) applied to the orthogonal grids reproduces their
// stored metric, which their generators compute from the midpoints of the
// dual edges: on an orthogonal grid the two points coincide.
func TestGeneralGeometryOnOrthogonalGrids(t *testing.T) {
	var ms []*Mesh
	var opts []string
	for _, m := range planarMeshes(t) {
		if m.Orthogonal {
			ms, opts = append(ms, m), append(opts, "")
		}
	}
	for _, opt := range []string{OptimizeNone, OptimizeLloyd} {
		for n := 0; n <= 4; n++ {
			ms, opts = append(ms, icosa(t, n, opt)), append(opts, opt)
		}
	}
	for im, m := range ms {
		g := *m
		var err error
		if m.Surface.Sphere {
			x, p := icosahedralPoints(m, opts[im])
			err = g.sphereGeometryFrom(x, p)
		} else {
			err = g.planeGeometry()
		}
		if err != nil {
			t.Fatalf("%s n=%d: %v", m.Kind, m.N, err)
		}
		// Positions relative to the spacing, lengths and areas relative to
		// the largest of their kind. The triangles' stored edge points and
		// normals are the hexagons' (the triangles are their dual), from
		// the hexagon centres, where this path uses the triangles'
		// circumcentres: positions in metres rounded to ulp(L), which is
		// n·2⁻⁵² of the spacing. For them positions are compared relative
		// to the domain and the rest to 1e-14.
		h := m.Spacing()
		tol := 1e-15
		if m.Kind == Tri {
			h, tol = max(m.Surface.Lx, m.Surface.Ly), 1e-14
		}
		worst := 0.0
		px, py := m.Surface.Lx, m.Surface.Ly
		for _, c := range []struct {
			name          string
			a, b          []float64
			scale, period float64
		}{
			{"EdgeX", m.EdgeX, g.EdgeX, h, px}, {"EdgeY", m.EdgeY, g.EdgeY, h, py}, {"EdgeZ", m.EdgeZ, g.EdgeZ, h, 0},
			{"NormalX", m.NormalX, g.NormalX, 1, 0}, {"NormalY", m.NormalY, g.NormalY, 1, 0}, {"NormalZ", m.NormalZ, g.NormalZ, 1, 0},
			{"EdgeLength", m.EdgeLength, g.EdgeLength, maxAbs(m.EdgeLength), 0},
			{"DualLength", m.DualLength, g.DualLength, maxAbs(m.DualLength), 0},
			{"CellArea", m.CellArea, g.CellArea, maxAbs(m.CellArea), 0},
			{"VertexArea", m.VertexArea, g.VertexArea, maxAbs(m.VertexArea), 0},
			{"CellKiteArea", m.CellKiteArea, g.CellKiteArea, maxAbs(m.CellKiteArea), 0},
			{"VertexKiteArea", m.VertexKiteArea, g.VertexKiteArea, maxAbs(m.VertexKiteArea), 0},
		} {
			if c.a == nil {
				continue
			}
			d := maxRelDiff(c.a, c.b, c.scale, c.period)
			worst = max(worst, d)
			if lim := tol; d > lim && (c.scale != h || d > 1e-15) {
				t.Errorf("%s n=%d: general %s differs from the stored one by %.3g relative, want ≤ %g", m.Kind, m.N, c.name, d, lim)
			}
		}
		t.Logf("%s n=%d: largest relative difference %.2g", m.Kind, m.N, worst)
	}
}

// The generators' Orthogonal flag matches the geometry: on the regular
// planes and the Voronoi spheres n_e is normal to the primal edge to
// round-off; on the distorted planes it is not, by several degrees.
func TestOrthogonalFlag(t *testing.T) {
	for _, m := range testMeshes(t) {
		dev := m.NonOrthogonality()
		if m.Orthogonal && dev > 1e-12 {
			t.Errorf("%s n=%d: marked orthogonal but the dual edges deviate by %.3g rad", m.Kind, m.N, dev)
		}
		if !m.Orthogonal && dev < 5*math.Pi/180 {
			t.Errorf("%s n=%d: marked non-orthogonal but the largest deviation is only %.3g°", m.Kind, m.N, dev*180/math.Pi)
		}
	}
}

// On the distorted planes: the topology is that of the regular grid, the
// positions stay in the periodic domain, X_e lies on both the dual and the
// primal segment, the centres are the area centroids of the cells
// (checked by a triangle fan about the vertex mean, another
// decomposition), the kites add up to the cell polygons and to the
// polygons of centres round the vertices, and the build is reproducible
// from the seed.
func TestDistortedPlanes(t *testing.T) {
	for _, m := range distortedMeshes(t) {
		reg, err := New(Spec{Kind: m.Kind, N: m.N, Length: m.Surface.Lx, Height: m.Surface.Ly})
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(m.EdgeCells, reg.EdgeCells) || !slices.Equal(m.EdgeVertices, reg.EdgeVertices) ||
			!slices.Equal(m.CellEdges, reg.CellEdges) || !slices.Equal(m.VertexEdges, reg.VertexEdges) ||
			!slices.Equal(m.CellVertices, reg.CellVertices) || !slices.Equal(m.VertexCells, reg.VertexCells) {
			t.Errorf("%s n=%d: the distorted grid changed the topology", m.Kind, m.N)
		}
		lx, ly := m.Surface.Lx, m.Surface.Ly
		in := func(x, l float64) bool { return x >= 0 && x < l }
		for v := 0; v < m.NumVertices; v++ {
			if !in(m.VertexX[v], lx) || !in(m.VertexY[v], ly) {
				t.Fatalf("%s n=%d: vertex %d at (%g, %g) outside the domain", m.Kind, m.N, v, m.VertexX[v], m.VertexY[v])
			}
		}
		moved := 0.0
		for v := 0; v < m.NumVertices; v++ {
			moved = max(moved, math.Hypot(wrap(m.VertexX[v]-reg.VertexX[v], lx), wrap(m.VertexY[v]-reg.VertexY[v], ly)))
		}
		if moved < 0.01*reg.Spacing() {
			t.Errorf("%s n=%d: vertices moved by at most %g m", m.Kind, m.N, moved)
		}
		for e := 0; e < m.NumEdges; e++ {
			c0, c1 := m.EdgeCells[2*e], m.EdgeCells[2*e+1]
			v0, v1 := m.EdgeVertices[2*e], m.EdgeVertices[2*e+1]
			for _, seg := range [][2]int32{{c0, c1}, {-1 - v0, -1 - v1}} {
				pos := func(k int32) (float64, float64) {
					if k < 0 {
						return m.VertexX[-1-k], m.VertexY[-1-k]
					}
					return m.CellX[k], m.CellY[k]
				}
				ax, ay := pos(seg[0])
				bx, by := pos(seg[1])
				dx, dy := wrap(bx-ax, lx), wrap(by-ay, ly)
				px, py := wrap(m.EdgeX[e]-ax, lx), wrap(m.EdgeY[e]-ay, ly)
				l2 := dx*dx + dy*dy
				s := (px*dx + py*dy) / l2
				off := math.Abs(px*dy-py*dx) / math.Sqrt(l2)
				if !(s > 0 && s < 1) || off > 1e-9*math.Sqrt(l2) {
					t.Fatalf("%s n=%d edge %d: X_e at %.3g along the segment, %.3g m off it", m.Kind, m.N, e, s, off)
				}
			}
		}
		for i := 0; i < m.NumCells; i++ {
			lo, hi := m.EdgesOfCell(i)
			k := hi - lo
			v0 := m.CellVertices[lo]
			rx := make([]float64, k)
			ry := make([]float64, k)
			var mx, my float64
			for j := 0; j < k; j++ {
				v := m.CellVertices[lo+j]
				rx[j], ry[j] = wrap(m.VertexX[v]-m.VertexX[v0], lx), wrap(m.VertexY[v]-m.VertexY[v0], ly)
				mx += rx[j] / float64(k)
				my += ry[j] / float64(k)
			}
			var a, sx, sy float64
			for j := 0; j < k; j++ {
				ax, ay, bx, by := rx[j]-mx, ry[j]-my, rx[(j+1)%k]-mx, ry[(j+1)%k]-my
				ta := (ax*by - ay*bx) / 2
				a += ta
				sx += ta * (ax + bx) / 3
				sy += ta * (ay + by) / 3
			}
			cx, cy := m.VertexX[v0]+mx+sx/a, m.VertexY[v0]+my+sy/a
			if d := math.Hypot(wrap(cx-m.CellX[i], lx), wrap(cy-m.CellY[i], ly)); d > 1e-9*reg.Spacing() {
				t.Fatalf("%s n=%d cell %d: centre %g m from the centroid", m.Kind, m.N, i, d)
			}
			if math.Abs(a-m.CellArea[i]) > 1e-12*m.CellArea[i] {
				t.Fatalf("%s n=%d cell %d: area %g, polygon %g", m.Kind, m.N, i, m.CellArea[i], a)
			}
		}
		// The kites tile the dual cells too: the polygon of the centres
		// around each vertex, fanned from the vertex.
		for v := 0; v < m.NumVertices; v++ {
			lo, hi := m.EdgesOfVertex(v)
			a := 0.0
			for k := lo; k < hi; k++ {
				c, d := m.VertexCells[k], m.VertexCells[lo+(k+1-lo)%(hi-lo)]
				ax, ay := wrap(m.CellX[c]-m.VertexX[v], lx), wrap(m.CellY[c]-m.VertexY[v], ly)
				bx, by := wrap(m.CellX[d]-m.VertexX[v], lx), wrap(m.CellY[d]-m.VertexY[v], ly)
				a += (ax*by - ay*bx) / 2
			}
			if math.Abs(a-m.VertexArea[v]) > 1e-12*a {
				t.Fatalf("%s n=%d vertex %d: Σ kites %g, polygon of centres %g", m.Kind, m.N, v, m.VertexArea[v], a)
			}
		}
	}
	spec := Spec{Kind: Hex, N: 8, Length: 1e6, Jitter: 0.2, Seed: 42}
	a, _ := New(spec)
	b, _ := New(spec)
	spec.Seed = 43
	c, _ := New(spec)
	if !slices.Equal(a.VertexX, b.VertexX) || !slices.Equal(a.CellY, b.CellY) {
		t.Error("the same seed built different grids")
	}
	if slices.Equal(a.VertexX, c.VertexX) {
		t.Error("seeds 42 and 43 built the same grid")
	}
}

func TestDistortionErrors(t *testing.T) {
	for _, tc := range []struct {
		spec Spec
		want string
	}{
		{Spec{Kind: Quad, N: 8, Length: 1, Distort: -0.1}, "grid.distort = -0.1"},
		{Spec{Kind: Quad, N: 8, Length: 1, Distort: 0.3}, "grid.distort = 0.3"},
		{Spec{Kind: Hex, N: 8, Length: 1, Distort: math.NaN()}, "grid.distort = NaN"},
		{Spec{Kind: Tri, N: 8, Length: 1, Jitter: 0.25}, "grid.jitter = 0.25"},
		{Spec{Kind: Tri, N: 8, Length: 1, Jitter: -1}, "grid.jitter = -1"},
		{Spec{Kind: Hex, N: 8, Length: 1, Distort: 0.2, Jitter: 0.2}, "< 0.15"},
		{Spec{Kind: Icosahedral, N: 3, Radius: 1, Distort: 0.1}, "planar grids"},
		{Spec{Kind: Cubed, N: 3, Radius: 1, Jitter: 0.1}, "planar grids"},
	} {
		_, err := New(tc.spec)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("New(%+v) = %v, want an error containing %q", tc.spec, err, tc.want)
		}
	}
}
