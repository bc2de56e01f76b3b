package display

import (
	"math"
	"testing"

	"gyrebench/sim/internal/testcheck"
	"gyrebench/sim/mesh"
)

// signedArea is the shoelace area of an interleaved polygon: positive
// when it is anticlockwise.
func signedArea(xy []float64) float64 {
	n := len(xy) / 2
	a := 0.0
	for k := range n {
		j := (k + 1) % n
		a += xy[2*k]*xy[2*j+1] - xy[2*j]*xy[2*k+1]
	}
	return a / 2
}

var planes = []mesh.Spec{
	{Kind: mesh.Quad, N: 8, Length: 1e6},
	{Kind: mesh.Hex, N: 8, Length: 1e6},
	{Kind: mesh.Tri, N: 8, Length: 1e6},
	{Kind: mesh.Hex, N: 12, Length: 2e6, Distort: 0.2},
}

// On the plane every polygon, unwrapped round its centre, is anticlockwise
// with the mesh's own area, and the polygons of each kind cover the
// domain. A corner taken at the wrong periodic image would make its
// polygon many times too large or turn it over.
func TestPlaneTiles(t *testing.T) {
	for _, s := range planes {
		m := testcheck.Mesh(t, s)
		g := Of(m)
		if g.Sphere || g.PeriodX != m.Surface.Lx || g.PeriodY != m.Surface.Ly {
			t.Fatalf("%s: sphere %v, periods %g × %g, want a plane of %g × %g", s.Kind, g.Sphere, g.PeriodX, g.PeriodY, m.Surface.Lx, m.Surface.Ly)
		}
		dom := m.Surface.Lx * m.Surface.Ly
		for _, c := range []struct {
			name string
			p    *Polygons
			area []float64
		}{{"cell", &g.Cells, m.CellArea}, {"dual", &g.Duals, m.VertexArea}} {
			if c.p.Len() != len(c.area) {
				t.Fatalf("%s: %d %s polygons, want %d", s.Kind, c.p.Len(), c.name, len(c.area))
			}
			total := 0.0
			for i := range c.p.Len() {
				a := signedArea(c.p.Corners(i))
				total += a
				if math.Abs(a-c.area[i]) > 1e-9*c.area[i] {
					t.Fatalf("%s: %s %d has area %g, the mesh says %g", s.Kind, c.name, i, a, c.area[i])
				}
			}
			if math.Abs(total-dom) > 1e-12*dom {
				t.Errorf("%s: %s polygons cover %g, the domain is %g", s.Kind, c.name, total, dom)
			}
			if mp := g.Map(c.p); &mp.XY[0] != &c.p.XY[0] {
				t.Errorf("%s: Map copied the %s polygons of a plane", s.Kind, c.name)
			}
		}
	}
}

var spheres = []mesh.Spec{
	{Kind: mesh.Icosahedral, N: 3, Radius: 6.371e6},
	{Kind: mesh.Icosahedral, N: 3, Radius: 6.371e6, Optimize: mesh.OptimizeLloyd},
	{Kind: mesh.Cubed, N: 8, Radius: 6.371e6},
	{Kind: mesh.Cubed, N: 7, Radius: 6.371e6},
}

// Each corner of the websocket form lies within half a period of its
// polygon's centre, in every direction that is periodic.
func TestCornersNearestTheCentre(t *testing.T) {
	for _, s := range append(append([]mesh.Spec(nil), planes...), spheres...) {
		g := Of(testcheck.Mesh(t, s))
		for _, p := range []*Polygons{&g.Cells, &g.Duals} {
			for i := range p.Len() {
				cx, cy := p.Centre[2*i], p.Centre[2*i+1]
				c := p.Corners(i)
				for k := 0; k < len(c); k += 2 {
					if math.Abs(c[k]-cx) > g.PeriodX/2 || g.PeriodY > 0 && math.Abs(c[k+1]-cy) > g.PeriodY/2 {
						t.Fatalf("%s: polygon %d corner (%g, %g) is more than half a period from its centre (%g, %g)", s.Kind, i, c[k], c[k+1], cx, cy)
					}
				}
			}
		}
	}
}

// weightedArea is the area on the unit sphere of a polygon whose edges are
// straight in longitude and latitude (degrees): ∬ cos φ dλ dφ = −∮ sin φ dλ
// by Green's theorem, integrated exactly along each straight edge.
func weightedArea(xy []float64) float64 {
	const rad = math.Pi / 180
	n := len(xy) / 2
	a := 0.0
	for k := range n {
		j := (k + 1) % n
		dl := (xy[2*j] - xy[2*k]) * rad
		p0, p1 := xy[2*k+1]*rad, xy[2*j+1]*rad
		if dp := p1 - p0; math.Abs(dp) > 1e-12 {
			a -= dl * (math.Cos(p0) - math.Cos(p1)) / dp
		} else {
			a -= dl * math.Sin((p0+p1)/2)
		}
	}
	return a
}

// mapCheck is what TestMapTilesTheSphere finds in one set of map polygons.
type mapCheck struct {
	plain          float64 // the sum of the plain map areas, square degrees
	dateLine, pole int     // polygons reaching past ±180°, and to ±90°
	worst          float64 // the largest relative error of cos φ dλ dφ against the mesh's area, within 60° of the equator
}

// checkMap returns what mapCheck describes for the map polygons mp, whose
// sphere areas are area (radius r), failing at a polygon that is not
// anticlockwise.
func checkMap(t *testing.T, name string, mp Polygons, area []float64, r float64) mapCheck {
	t.Helper()
	if mp.Len() != len(area) {
		t.Fatalf("%s: %d map polygons, want %d", name, mp.Len(), len(area))
	}
	var c mapCheck
	for i := range mp.Len() {
		xy := mp.Corners(i)
		a := signedArea(xy)
		if a <= 0 {
			t.Fatalf("%s %d has map area %g: not anticlockwise", name, i, a)
		}
		c.plain += a
		lo, hi, top := math.Inf(1), math.Inf(-1), 0.0
		for k := 0; k < len(xy); k += 2 {
			lo, hi, top = math.Min(lo, xy[k]), math.Max(hi, xy[k]), math.Max(top, math.Abs(xy[k+1]))
		}
		if lo < -180 || hi > 180 {
			c.dateLine++
		}
		if top == 90 {
			c.pole++
			continue
		}
		if math.Abs(mp.Centre[2*i+1]) <= 60 {
			c.worst = math.Max(c.worst, math.Abs(weightedArea(xy)*r*r-area[i])/area[i])
		}
	}
	return c
}

// On the longitude–latitude map the polygons of each kind tile the
// rectangle 360° × 180° exactly (shared edges are the same segments in
// both neighbours), each anticlockwise, those that straddle the date line
// and those closed at a pole included. With the map's area element
// cos φ dλ dφ a polygon covers its sphere cell's area to the accuracy of
// drawing great-circle arcs as straight lines: within 5% on these coarse
// meshes (cells of 7°–13°) within 60° of the equator, where a polygon
// unwrapped onto the wrong side of the date line would miss by its whole
// width. (Near the poles the arcs curve away from straight lines in
// (λ, φ) whatever the resolution; there the exact tiling is the check.)
func TestMapTilesTheSphere(t *testing.T) {
	for _, s := range spheres {
		m := testcheck.Mesh(t, s)
		g := Of(m)
		dateLine, pole := 0, 0
		for _, c := range []struct {
			name string
			p    *Polygons
			area []float64
		}{{"cell", &g.Cells, m.CellArea}, {"dual", &g.Duals, m.VertexArea}} {
			name := string(s.Kind) + " " + c.name
			r := checkMap(t, name, g.Map(c.p), c.area, m.Surface.Radius)
			if math.Abs(r.plain-360*180) > 1e-9*360*180 {
				t.Errorf("%s: map polygons cover %.12g square degrees, want 64800", name, r.plain)
			}
			if r.worst > 0.05 {
				t.Errorf("%s: a polygon's map area (cos φ dλ dφ) misses its cell's by %.3g of it, want at most 5%%", name, r.worst)
			}
			dateLine += r.dateLine
			pole += r.pole
		}
		// The polygons straddling the date line or closed at a pole are
		// the cases this test is for; a mesh without them proves nothing.
		if dateLine == 0 || pole == 0 {
			t.Errorf("%s n=%d: %d polygons straddle the date line and %d reach a pole; want some of each", s.Kind, s.N, dateLine, pole)
		}
	}
}

// The map areas converge to the sphere's as the mesh is refined: the
// worst relative error within 60° of the equator falls by at least a
// third from each icosahedral level to the next (it halves: the straight
// lines depart from the arcs by a fraction of the cell proportional to
// its size).
func TestMapAreaConverges(t *testing.T) {
	prev := math.Inf(1)
	for level := 3; level <= 5; level++ {
		m := testcheck.Mesh(t, mesh.Spec{Kind: mesh.Icosahedral, N: level, Radius: 1})
		g := Of(m)
		w := checkMap(t, "cell", g.Map(&g.Cells), m.CellArea, 1).worst
		if w > prev/1.5 {
			t.Errorf("level %d: worst map area error %.3g, level %d had %.3g: want a fall by a third or more", level, w, level-1, prev)
		}
		prev = w
	}
}

// solidAngle is the area of the spherical triangle (a, b, c) of unit
// vectors, signed by its orientation seen from outside (Van Oosterom and
// Strackee 1983, IEEE Trans. Biomed. Eng. 30, 125, eq. 8).
func solidAngle(a, b, c []float64) float64 {
	det := a[0]*(b[1]*c[2]-b[2]*c[1]) - a[1]*(b[0]*c[2]-b[2]*c[0]) + a[2]*(b[0]*c[1]-b[1]*c[0])
	dot := func(p, q []float64) float64 { return p[0]*q[0] + p[1]*q[1] + p[2]*q[2] }
	return 2 * math.Atan2(det, 1+dot(a, b)+dot(b, c)+dot(c, a))
}

// On the globe every corner is a unit vector, every polygon is
// anticlockwise seen from outside (each fan triangle from its first corner
// is), and the spherical polygons of each kind cover the sphere, 4π.
func TestGlobe(t *testing.T) {
	for _, s := range spheres {
		m := testcheck.Mesh(t, s)
		cells, duals, err := Globe(m)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			name string
			p    *Polygons3
			area []float64
		}{{"cell", &cells, m.CellArea}, {"dual", &duals, m.VertexArea}} {
			if c.p.Len() != len(c.area) {
				t.Fatalf("%s: %d %s polygons, want %d", s.Kind, c.p.Len(), c.name, len(c.area))
			}
			total := 0.0
			r2 := m.Surface.Radius * m.Surface.Radius
			for i := range c.p.Len() {
				q := c.p.Corners(i)
				for k := 0; k < len(q); k += 3 {
					if r := math.Sqrt(q[k]*q[k] + q[k+1]*q[k+1] + q[k+2]*q[k+2]); math.Abs(r-1) > 1e-15 {
						t.Fatalf("%s: %s %d corner at radius %.17g, want 1", s.Kind, c.name, i, r)
					}
				}
				a := 0.0
				for k := 3; k+3 < len(q); k += 3 {
					w := solidAngle(q[0:3], q[k:k+3], q[k+3:k+6])
					if w <= 0 {
						t.Fatalf("%s: %s %d is not anticlockwise seen from outside (fan triangle %d: %g)", s.Kind, c.name, i, k/3, w)
					}
					a += w
				}
				if math.Abs(a*r2-c.area[i]) > 1e-6*c.area[i] {
					t.Fatalf("%s: %s %d covers %g on the sphere, the mesh says %g", s.Kind, c.name, i, a*r2, c.area[i])
				}
				total += a
			}
			if math.Abs(total-4*math.Pi) > 1e-12*4*math.Pi {
				t.Errorf("%s: %s polygons cover %.15g, want 4π", s.Kind, c.name, total)
			}
		}
	}
	if _, _, err := Globe(testcheck.Mesh(t, planes[0])); err == nil {
		t.Error("Globe of a plane: no error")
	}
}

// The drawing points are those of the map: a point on the equator at
// 90° east, the north pole, and on the plane the coordinates themselves.
func TestPoints(t *testing.T) {
	for _, c := range []struct {
		x, y, z, r, lon, lat float64
	}{
		{0, 2, 0, 2, 90, 0},
		{0, 0, 3, 3, 0, 90},
		{-1, 0, -1e-30, 1, 180, 0},
		{1, 1, math.Sqrt2, 2, 45, 45},
	} {
		lon, lat := LonLat(c.x, c.y, c.z, c.r)
		if math.Abs(lon-c.lon) > 1e-12 || math.Abs(lat-c.lat) > 1e-12 {
			t.Errorf("LonLat(%g, %g, %g, r=%g) = %g, %g, want %g, %g", c.x, c.y, c.z, c.r, lon, lat, c.lon, c.lat)
		}
	}
	m := testcheck.Mesh(t, planes[1])
	if x, y := CellCentre(m, 5); x != m.CellX[5] || y != m.CellY[5] {
		t.Errorf("plane CellCentre(5) = %g, %g, want %g, %g", x, y, m.CellX[5], m.CellY[5])
	}
	if x, y := EdgePoint(m, 7); x != m.EdgeX[7] || y != m.EdgeY[7] {
		t.Errorf("plane EdgePoint(7) = %g, %g, want %g, %g", x, y, m.EdgeX[7], m.EdgeY[7])
	}
}
