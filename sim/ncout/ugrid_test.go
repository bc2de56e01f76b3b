package ncout

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"testing"

	"gyrebench/sim/atomicfile"
	"gyrebench/sim/mesh"
)

func planeMeshes(t *testing.T) []*mesh.Mesh {
	t.Helper()
	var ms []*mesh.Mesh
	for _, k := range []mesh.Kind{mesh.Quad, mesh.Hex, mesh.Tri} {
		m, err := mesh.New(mesh.Spec{Kind: k, N: 6, Length: 1e6})
		if err != nil {
			t.Fatal(err)
		}
		ms = append(ms, m)
	}
	return ms
}

// ramp returns n distinct values, so that a permutation would show.
func ramp(n int, a float64) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = a + 0.1*float64(i) + 1/float64(i+3)
	}
	return v
}

func sampleFields(m *mesh.Mesh) []Field {
	return []Field{
		{Name: "h", Location: Face, Units: "m", StandardName: "sea_floor_depth_below_sea_surface", LongName: "fluid depth", CellMeasures: FaceAreaMeasure, Data: ramp(m.NumCells, 1000)},
		{Name: "u", Location: Edge, Units: "m s-1", LongName: "normal velocity u_e along n_e", Data: ramp(m.NumEdges, -3)},
		{Name: "q", Location: Node, Units: "m-1 s-1", LongName: "potential vorticity", CellMeasures: NodeAreaMeasure, Data: ramp(m.NumVertices, 1e-7)},
	}
}

func writeMeshFile(t *testing.T, m *mesh.Mesh) (string, *File) {
	t.Helper()
	f, err := MeshFile(m, Meta{Title: "test", History: "written by ugrid_test"}, sampleFields(m))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), string(m.Kind)+".nc")
	if err := WriteFile(path, f); err != nil {
		t.Fatal(err)
	}
	back, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	return path, back
}

func ints(t *testing.T, f *File, name string) []int32 {
	t.Helper()
	v := f.Var(name)
	if v == nil {
		t.Fatalf("no variable %q", name)
	}
	d, ok := v.Data.([]int32)
	if !ok {
		t.Fatalf("%s holds %T, want []int32", name, v.Data)
	}
	return d
}

func floats(t *testing.T, f *File, name string) []float64 {
	t.Helper()
	v := f.Var(name)
	if v == nil {
		t.Fatalf("no variable %q", name)
	}
	d, ok := v.Data.([]float64)
	if !ok {
		t.Fatalf("%s holds %T, want []float64", name, v.Data)
	}
	return d
}

func wrap(d, l float64) float64 { return d - l*math.Round(d/l) }

// faceRow returns the nodes (or edges) of face i, without fill values.
func faceRow(conn []int32, i, maxN int) []int32 {
	var row []int32
	for _, x := range conn[i*maxN : (i+1)*maxN] {
		if x != ConnectivityFill {
			row = append(row, x)
		}
	}
	return row
}

// Faces read back from the file are anticlockwise: the signed area of the
// node polygon, unwrapped on the periodic plane, is positive and equals
// mesh_face_area. Edge k of a face joins its nodes k and k+1.
func TestFacesAnticlockwise(t *testing.T) {
	for _, m := range planeMeshes(t) {
		t.Run(string(m.Kind), func(t *testing.T) {
			_, f := writeMeshFile(t, m)
			lx, ly := m.Surface.Lx, m.Surface.Ly
			x, y := floats(t, f, "mesh_node_x"), floats(t, f, "mesh_node_y")
			area := floats(t, f, FaceAreaVar)
			nodes, edges := ints(t, f, "mesh_face_nodes"), ints(t, f, "mesh_face_edges")
			edgeNodes := ints(t, f, "mesh_edge_nodes")
			maxN, _ := f.Dim(MaxFaceNodesDim)
			for i := 0; i < m.NumCells; i++ {
				row := faceRow(nodes, i, maxN.Len)
				erow := faceRow(edges, i, maxN.Len)
				if len(row) < 3 || len(row) != len(erow) {
					t.Fatalf("face %d: %d nodes, %d edges", i, len(row), len(erow))
				}
				// Shoelace formula, positions relative to node 0.
				a := 0.0
				var px, py float64
				for k := 1; k <= len(row); k++ {
					n := row[k%len(row)]
					qx, qy := wrap(x[n]-x[row[0]], lx), wrap(y[n]-y[row[0]], ly)
					a += (px*qy - py*qx) / 2
					px, py = qx, qy
				}
				if !(a > 0) {
					t.Fatalf("face %d: signed area %g; nodes %v are not anticlockwise", i, a, row)
				}
				if math.Abs(a-area[i]) > 1e-9*area[i] {
					t.Errorf("face %d: polygon area %g, mesh_face_area %g", i, a, area[i])
				}
				for k, e := range erow {
					got := []int32{edgeNodes[2*e], edgeNodes[2*e+1]}
					want := []int32{row[k], row[(k+1)%len(row)]}
					sort.Slice(got, func(a, b int) bool { return got[a] < got[b] })
					sort.Slice(want, func(a, b int) bool { return want[a] < want[b] })
					if !reflect.DeepEqual(got, want) {
						t.Fatalf("face %d: edge %d (%d) joins nodes %v; want nodes %d and %d of the face, %v", i, k, e, got, k, k+1, want)
					}
				}
			}
		})
	}
}

// The written edge orientation matches the written convention: n_e points
// from edge face 0 to edge face 1, and k × n_e from edge node 0 to node 1.
func TestEdgeConvention(t *testing.T) {
	for _, m := range planeMeshes(t) {
		t.Run(string(m.Kind), func(t *testing.T) {
			_, f := writeMeshFile(t, m)
			lx, ly := m.Surface.Lx, m.Surface.Ly
			nx, ny := floats(t, f, "mesh_edge_normal_x"), floats(t, f, "mesh_edge_normal_y")
			fx, fy := floats(t, f, "mesh_face_x"), floats(t, f, "mesh_face_y")
			vx, vy := floats(t, f, "mesh_node_x"), floats(t, f, "mesh_node_y")
			ef, en := ints(t, f, "mesh_edge_faces"), ints(t, f, "mesh_edge_nodes")
			for e := 0; e < m.NumEdges; e++ {
				c0, c1 := ef[2*e], ef[2*e+1]
				v0, v1 := en[2*e], en[2*e+1]
				dn := nx[e]*wrap(fx[c1]-fx[c0], lx) + ny[e]*wrap(fy[c1]-fy[c0], ly)
				// t = k × n = (−n_y, n_x).
				dt := -ny[e]*wrap(vx[v1]-vx[v0], lx) + nx[e]*wrap(vy[v1]-vy[v0], ly)
				if !(dn > 0) || !(dt > 0) {
					t.Fatalf("edge %d: n·(face1−face0) = %g, t·(node1−node0) = %g; want both > 0", e, dn, dt)
				}
			}
			mv := f.Var(MeshVar)
			if got, _ := mv.Attr("edge_normal_convention"); got != EdgeNormalConvention {
				t.Errorf("edge_normal_convention = %v", got)
			}
			if got, _ := mv.Attr("edge_tangent_convention"); got != EdgeTangentConvention {
				t.Errorf("edge_tangent_convention = %v", got)
			}
		})
	}
}

// ncdump parses the files and shows the attributes UGRID 1.0 and CF
// require; the values it prints are the ones written.
func TestNcdumpUGRID(t *testing.T) {
	ncdump := ncdumpTool(t, "ncdump")
	for _, m := range planeMeshes(t) {
		t.Run(string(m.Kind), func(t *testing.T) {
			path, _ := writeMeshFile(t, m)
			header := runTool(t, ncdump, "-h", path)
			for _, s := range []string{
				`:Conventions = "CF-1.8 UGRID-1.0" ;`,
				`:title = "test" ;`,
				`:history = "written by ugrid_test" ;`,
				"int mesh ;",
				`mesh:cf_role = "mesh_topology" ;`,
				"mesh:topology_dimension = 2 ;",
				`mesh:node_coordinates = "mesh_node_x mesh_node_y" ;`,
				`mesh:face_coordinates = "mesh_face_x mesh_face_y" ;`,
				`mesh:edge_coordinates = "mesh_edge_x mesh_edge_y" ;`,
				`mesh:face_node_connectivity = "mesh_face_nodes" ;`,
				`mesh:edge_node_connectivity = "mesh_edge_nodes" ;`,
				`mesh:face_edge_connectivity = "mesh_face_edges" ;`,
				`mesh:edge_face_connectivity = "mesh_edge_faces" ;`,
				"int mesh_face_nodes(nmesh_face, nmesh_face_max_nodes) ;",
				`mesh_face_nodes:cf_role = "face_node_connectivity" ;`,
				"mesh_face_nodes:start_index = 0 ;",
				"mesh_face_nodes:_FillValue = 2147483647 ;",
				"int mesh_edge_nodes(nmesh_edge, Two) ;",
				`mesh_edge_faces:cf_role = "edge_face_connectivity" ;`,
				"mesh_edge_faces:_FillValue = 2147483647 ;",
				`mesh_node_x:standard_name = "projection_x_coordinate" ;`,
				`mesh_node_x:units = "m" ;`,
				`mesh_face_area:standard_name = "cell_area" ;`,
				"double h(nmesh_face) ;",
				`h:mesh = "mesh" ;`,
				`h:location = "face" ;`,
				`h:units = "m" ;`,
				`h:standard_name = "sea_floor_depth_below_sea_surface" ;`,
				`h:cell_measures = "area: mesh_face_area" ;`,
				`h:coordinates = "mesh_face_x mesh_face_y" ;`,
				"double u(nmesh_edge) ;",
				`u:location = "edge" ;`,
				`u:long_name = "normal velocity u_e along n_e" ;`,
				"double q(nmesh_node) ;",
				`q:location = "node" ;`,
				`q:cell_measures = "area: mesh_node_area" ;`,
				`mesh_edge_normal_x:comment = "n_e points from edge_face_connectivity[e,0]`,
			} {
				if !strings.Contains(header, s) {
					t.Errorf("ncdump -h lacks %q", s)
				}
			}
			if t.Failed() {
				t.Logf("ncdump -h:\n%s", header)
			}
			dump := runTool(t, ncdump, "-p", "9,17", "-v", "mesh_face_area,h,mesh_edge_nodes", path)
			if got := dumpFloats(t, dump, "mesh_face_area"); !reflect.DeepEqual(got, m.CellArea) {
				t.Errorf("ncdump mesh_face_area = %v; want %v", got, m.CellArea)
			}
			if got, want := dumpFloats(t, dump, "h"), sampleFields(m)[0].Data; !reflect.DeepEqual(got, want) {
				t.Errorf("ncdump h = %v; want %v", got, want)
			}
			if got := dumpInts(t, dump, "mesh_edge_nodes"); !reflect.DeepEqual(got, m.EdgeVertices) {
				t.Errorf("ncdump mesh_edge_nodes = %v; want %v", got, m.EdgeVertices)
			}
		})
	}
}

// cubeSphere builds a sphere mesh by hand: the cube's six faces projected
// on the sphere, with just the arrays MeshFile reads.
func cubeSphere(r float64) *mesh.Mesh {
	m := &mesh.Mesh{Kind: mesh.Icosahedral, Surface: mesh.Surface{Sphere: true, Radius: r}}
	s := r / math.Sqrt(3)
	for i := 0; i < 8; i++ {
		m.VertexX = append(m.VertexX, s*float64(2*(i&1)-1))
		m.VertexY = append(m.VertexY, s*float64(2*(i>>1&1)-1))
		m.VertexZ = append(m.VertexZ, s*float64(2*(i>>2&1)-1))
	}
	type pair struct{ a, b int32 }
	edgeOf := map[pair]int32{}
	m.CellEdgeStart = []int32{0}
	for axis := 0; axis < 3; axis++ {
		for _, sign := range []float64{1, -1} {
			var n [3]float64
			n[axis] = sign
			// e1, e2 = n × e1: a right-handed frame about the outward normal.
			e1 := [3]float64{}
			e1[(axis+1)%3] = 1
			e2 := [3]float64{n[1]*e1[2] - n[2]*e1[1], n[2]*e1[0] - n[0]*e1[2], n[0]*e1[1] - n[1]*e1[0]}
			var vs []int32
			for v := 0; v < 8; v++ {
				p := [3]float64{m.VertexX[v], m.VertexY[v], m.VertexZ[v]}
				if p[axis]*sign > 0 {
					vs = append(vs, int32(v))
				}
			}
			ang := func(v int32) float64 {
				p := [3]float64{m.VertexX[v], m.VertexY[v], m.VertexZ[v]}
				return math.Atan2(p[0]*e2[0]+p[1]*e2[1]+p[2]*e2[2], p[0]*e1[0]+p[1]*e1[1]+p[2]*e1[2])
			}
			sort.Slice(vs, func(a, b int) bool { return ang(vs[a]) < ang(vs[b]) })
			c := int32(m.NumCells)
			m.NumCells++
			m.CellX = append(m.CellX, r*n[0])
			m.CellY = append(m.CellY, r*n[1])
			m.CellZ = append(m.CellZ, r*n[2])
			m.CellArea = append(m.CellArea, 4*math.Pi*r*r/6)
			for k := range vs {
				va, vb := vs[k], vs[(k+1)%len(vs)]
				key := pair{min(va, vb), max(va, vb)}
				e, ok := edgeOf[key]
				if !ok {
					e = int32(len(m.EdgeCells) / 2)
					edgeOf[key] = e
					m.EdgeCells = append(m.EdgeCells, c, -1)
					m.EdgeVertices = append(m.EdgeVertices, va, vb)
				} else {
					m.EdgeCells[2*e+1] = c
				}
				m.CellEdges = append(m.CellEdges, e)
				m.CellVertices = append(m.CellVertices, vb)
			}
			m.CellEdgeStart = append(m.CellEdgeStart, int32(len(m.CellEdges)))
		}
	}
	m.NumVertices = 8
	m.NumEdges = len(m.EdgeCells) / 2
	for e := 0; e < m.NumEdges; e++ {
		v0, v1 := m.EdgeVertices[2*e], m.EdgeVertices[2*e+1]
		c0, c1 := m.EdgeCells[2*e], m.EdgeCells[2*e+1]
		mx, my, mz := m.VertexX[v0]+m.VertexX[v1], m.VertexY[v0]+m.VertexY[v1], m.VertexZ[v0]+m.VertexZ[v1]
		l := math.Sqrt(mx*mx+my*my+mz*mz) / r
		m.EdgeX = append(m.EdgeX, mx/l)
		m.EdgeY = append(m.EdgeY, my/l)
		m.EdgeZ = append(m.EdgeZ, mz/l)
		dx, dy, dz := m.CellX[c1]-m.CellX[c0], m.CellY[c1]-m.CellY[c0], m.CellZ[c1]-m.CellZ[c0]
		d := math.Sqrt(dx*dx + dy*dy + dz*dz)
		m.NormalX = append(m.NormalX, dx/d)
		m.NormalY = append(m.NormalY, dy/d)
		m.NormalZ = append(m.NormalZ, dz/d)
	}
	for v := 0; v < 8; v++ {
		m.VertexArea = append(m.VertexArea, 4*math.Pi*r*r/8)
	}
	return m
}

// On the sphere, coordinates are longitude and latitude in degrees that
// give back the Cartesian positions, faces are anticlockwise seen from
// outside, and the normal has a z component: on a cube built by hand and
// on the cubed sphere of 3 cells along a cube edge (4-node faces, a cell
// centre at each pole), whose face areas add up to the sphere's.
func TestSphereCoordinates(t *testing.T) {
	const r = 6.37122e6
	m := cubeSphere(r)
	if m.NumEdges != 12 || m.NumCells != 6 {
		t.Fatalf("cube: %d cells, %d edges", m.NumCells, m.NumEdges)
	}
	cubed, err := mesh.New(mesh.Spec{Kind: mesh.Cubed, N: 3, Radius: r})
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range []*mesh.Mesh{m, cubed} {
		t.Run(fmt.Sprintf("%s-%d", m.Kind, m.NumCells), func(t *testing.T) { checkSphereCoordinates(t, m, r) })
	}
	// The cubed sphere says that its dual is not orthogonal; the regular
	// planes say nothing.
	for _, c := range []struct {
		m    *mesh.Mesh
		want any
	}{{cubed, DualEdgesNonOrthogonal}, {planeMeshes(t)[1], nil}} {
		_, f := writeMeshFile(t, c.m)
		if got, _ := f.Var(MeshVar).Attr("dual_edges"); got != c.want {
			t.Errorf("%s: dual_edges = %v, want %v", c.m.Kind, got, c.want)
		}
	}
}

func checkSphereCoordinates(t *testing.T, m *mesh.Mesh, r float64) {
	f, err := MeshFile(m, Meta{}, []Field{{Name: "h", Location: Face, Units: "m", LongName: "depth", CellMeasures: FaceAreaMeasure, Data: ramp(m.NumCells, 1)}})
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "cube.nc")
	if err := WriteFile(path, f); err != nil {
		t.Fatal(err)
	}
	f, err = Open(path)
	if err != nil {
		t.Fatal(err)
	}
	xyz := func(loc string, x, y, z []float64) [][3]float64 {
		lon, lat := floats(t, f, "mesh_"+loc+"_lon"), floats(t, f, "mesh_"+loc+"_lat")
		var ps [][3]float64
		for i := range lon {
			lo, la := lon[i]*math.Pi/180, lat[i]*math.Pi/180
			p := [3]float64{r * math.Cos(la) * math.Cos(lo), r * math.Cos(la) * math.Sin(lo), r * math.Sin(la)}
			if math.Abs(p[0]-x[i])+math.Abs(p[1]-y[i])+math.Abs(p[2]-z[i]) > 1e-6 {
				t.Errorf("%s %d: lon %g lat %g gives %v; want (%g, %g, %g)", loc, i, lon[i], lat[i], p, x[i], y[i], z[i])
			}
			if lon[i] < -180 || lon[i] > 180 || lat[i] < -90 || lat[i] > 90 {
				t.Errorf("%s %d: lon %g, lat %g out of range", loc, i, lon[i], lat[i])
			}
			ps = append(ps, p)
		}
		return ps
	}
	nodes := xyz("node", m.VertexX, m.VertexY, m.VertexZ)
	faces := xyz("face", m.CellX, m.CellY, m.CellZ)
	xyz("edge", m.EdgeX, m.EdgeY, m.EdgeZ)
	conn := ints(t, f, "mesh_face_nodes")
	maxN, _ := f.Dim(MaxFaceNodesDim)
	for i := 0; i < m.NumCells; i++ {
		row := faceRow(conn, i, maxN.Len)
		// Newell's normal of the polygon, against the outward direction.
		var n [3]float64
		for k := range row {
			p, q := nodes[row[k]], nodes[row[(k+1)%len(row)]]
			n[0] += (p[1] - q[1]) * (p[2] + q[2])
			n[1] += (p[2] - q[2]) * (p[0] + q[0])
			n[2] += (p[0] - q[0]) * (p[1] + q[1])
		}
		if c := faces[i]; n[0]*c[0]+n[1]*c[1]+n[2]*c[2] <= 0 {
			t.Errorf("face %d: nodes %v are clockwise seen from outside", i, row)
		}
	}
	if maxN.Len != 4 {
		t.Errorf("%s = %d, want 4 for quadrilateral faces", MaxFaceNodesDim, maxN.Len)
	}
	sum := 0.0
	for _, a := range floats(t, f, FaceAreaVar) {
		sum += a
	}
	if want := 4 * math.Pi * r * r; math.Abs(sum-want) > 1e-12*want {
		t.Errorf("Σ %s = %.15g, want 4πr² = %.15g", FaceAreaVar, sum, want)
	}
	if got := floats(t, f, "mesh_edge_normal_z"); !reflect.DeepEqual(got, m.NormalZ) {
		t.Errorf("mesh_edge_normal_z = %v; want %v", got, m.NormalZ)
	}
	for _, c := range []struct{ v, a, want string }{
		{"mesh_node_lon", "units", "degrees_east"},
		{"mesh_node_lat", "units", "degrees_north"},
		{"mesh_face_lon", "standard_name", "longitude"},
		{"mesh_edge_lat", "standard_name", "latitude"},
		{MeshVar, "node_coordinates", "mesh_node_lon mesh_node_lat"},
		{"h", "coordinates", "mesh_face_lon mesh_face_lat"},
	} {
		if got, _ := f.Var(c.v).Attr(c.a); got != c.want {
			t.Errorf("%s:%s = %v; want %q", c.v, c.a, got, c.want)
		}
	}
}

// Bad fields and meshes are errors that name the field, the value and
// what is allowed.
func TestMeshFileErrors(t *testing.T) {
	m, err := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 6, Length: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	good := func() []Field { return sampleFields(m) }
	for _, tc := range []struct {
		name   string
		mesh   *mesh.Mesh
		fields func() []Field
		want   []string
	}{
		{"unknown location", m, func() []Field { f := good(); f[0].Location = "cell"; return f }, []string{`"h"`, `"cell"`, "face, edge, node"}},
		{"length", m, func() []Field { f := good(); f[1].Data = f[1].Data[:5]; return f }, []string{`"u"`, "5 values", `"edge"`, "108"}},
		{"no units", m, func() []Field { f := good(); f[0].Units = ""; return f }, []string{`"h"`, "units", `"1"`}},
		{"no names", m, func() []Field { f := good(); f[1].LongName = ""; return f }, []string{`"u"`, "standard_name", "long_name"}},
		{"mesh name", m, func() []Field { f := good(); f[0].Name = FaceAreaVar; return f }, []string{`"mesh_face_area"`, "taken"}},
		{"time name", m, func() []Field { f := good(); f[0].Name = "mesh"; return f }, []string{`"mesh"`, "taken"}},
		{"twice", m, func() []Field { f := good(); return append(f, f[0]) }, []string{`"h"`, "twice"}},
		{"bad name", m, func() []Field { f := good(); f[0].Name = "h/2"; return f }, []string{`"h/2"`, "'/'"}},
		{"measure var", m, func() []Field { f := good(); f[0].CellMeasures = "area: nothing"; return f }, []string{`"h"`, `"nothing"`}},
		{"measure location", m, func() []Field { f := good(); f[0].CellMeasures = NodeAreaMeasure; return f }, []string{`"h"`, `"mesh_node_area"`, `"node"`}},
		{"measure kind", m, func() []Field { f := good(); f[0].CellMeasures = "length: mesh_face_area"; return f }, []string{`"h"`, `"length"`, "area, volume"}},
		{"measure syntax", m, func() []Field { f := good(); f[0].CellMeasures = "mesh_face_area"; return f }, []string{`"h"`, "area: VARIABLE"}},
		{"nil mesh", nil, good, []string{"mesh is nil"}},
		{"short mesh", func() *mesh.Mesh { c := *m; c.CellArea = c.CellArea[:3]; return &c }(), good, []string{"CellArea", "3", "36"}},
		{"bad index", func() *mesh.Mesh {
			c := *m
			c.CellVertices = append([]int32{999}, c.CellVertices[1:]...)
			return &c
		}(), good, []string{"CellVertices[0] = 999", "71"}},
		{"sphere without z", func() *mesh.Mesh { c := *m; c.Surface.Sphere = true; return &c }(), good, []string{"CellZ", "0", "36"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := MeshFile(tc.mesh, Meta{}, tc.fields())
			if err == nil {
				t.Fatal("no error")
			}
			for _, s := range tc.want {
				if !strings.Contains(err.Error(), s) {
					t.Errorf("error %q does not mention %s", err, s)
				}
			}
		})
	}
	if _, err := MeshFile(m, Meta{Attrs: []Attr{{"title", "x"}}}, good()); err == nil || !strings.Contains(err.Error(), `"title"`) {
		t.Errorf("Meta.Attrs redefining title: error %v", err)
	}
}

// Snapshots stream records along an unlimited time dimension; the file is
// published atomically and read back by ncdump and Open.
func TestSnapshots(t *testing.T) {
	m, err := mesh.New(mesh.Spec{Kind: mesh.Quad, N: 4, Length: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	fields := sampleFields(m)
	for i := range fields {
		fields[i].Data = nil
	}
	path := filepath.Join(t.TempDir(), "snapshots.nc")
	af, err := atomicfile.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer af.Abort()
	s, err := NewSnapshots(af, m, Meta{Title: "snapshots"}, fields)
	if err != nil {
		t.Fatal(err)
	}
	times := []float64{0, 3600, 7200}
	var wantH []float64
	for k, tm := range times {
		h, u, q := ramp(m.NumCells, float64(k)), ramp(m.NumEdges, 10*float64(k)), ramp(m.NumVertices, -float64(k))
		wantH = append(wantH, h...)
		if err := s.Write(tm, h, u, q); err != nil {
			t.Fatal(err)
		}
	}
	for _, bad := range []struct {
		t    float64
		data [][]float64
		want string
	}{
		{7200, [][]float64{ramp(m.NumCells, 0), ramp(m.NumEdges, 0), ramp(m.NumVertices, 0)}, "later than"},
		{math.NaN(), [][]float64{ramp(m.NumCells, 0), ramp(m.NumEdges, 0), ramp(m.NumVertices, 0)}, "finite"},
		{9000, [][]float64{ramp(m.NumCells, 0), ramp(m.NumEdges, 0)}, "h, u, q"},
		{9000, [][]float64{ramp(m.NumCells, 0), ramp(m.NumEdges, 0), ramp(3, 0)}, `"q"`},
	} {
		if err := s.Write(bad.t, bad.data...); err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("Write(%g, %d fields): error %v; want one mentioning %s", bad.t, len(bad.data), err, bad.want)
		}
	}
	if s.Len() != 3 {
		t.Errorf("Len = %d after refused writes; want 3", s.Len())
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	if err := af.Commit(); err != nil {
		t.Fatal(err)
	}
	f, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	if f.NumRecs != 3 || !reflect.DeepEqual(f.Var(TimeVar).Data, times) || !reflect.DeepEqual(f.Var("h").Data, wantH) {
		t.Errorf("read back %d records, time %v", f.NumRecs, f.Var(TimeVar).Data)
	}
	if got := f.Var("u").Dims; !reflect.DeepEqual(got, []string{TimeVar, EdgeDim}) {
		t.Errorf("u dims %v", got)
	}
	if _, err := NewSnapshots(af, m, Meta{}, sampleFields(m)); err == nil || !strings.Contains(err.Error(), `"h"`) {
		t.Errorf("NewSnapshots with data: error %v", err)
	}
	entries, _ := os.ReadDir(filepath.Dir(path))
	if len(entries) != 1 {
		t.Errorf("directory holds %d entries, want only the snapshot file", len(entries))
	}
	ncdump := ncdumpTool(t, "ncdump")
	dump := runTool(t, ncdump, "-v", "time", path)
	for _, s := range []string{
		"time = UNLIMITED ; // (3 currently)",
		"double h(time, nmesh_face) ;",
		`time:units = "seconds since 2000-01-01 00:00:00" ;`,
		`time:long_name = "simulated time" ;`,
		`h:location = "face" ;`,
		`mesh:cf_role = "mesh_topology" ;`,
	} {
		if !strings.Contains(dump, s) {
			t.Errorf("ncdump lacks %q", s)
		}
	}
	if got := dumpFloats(t, dump, "time"); !reflect.DeepEqual(got, times) {
		t.Errorf("ncdump time = %v", got)
	}
}
