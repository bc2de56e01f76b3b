package ncout

import (
	"fmt"
	"io"
	"math"
	"strings"

	"gyrebench/sim/atomicfile"
	"gyrebench/sim/mesh"
)

// Location is where a field lives on the mesh: the UGRID "location"
// attribute. On the C-grid, depth lives on faces (cells), normal velocity
// on edges and vorticity or potential vorticity on nodes (vertices).
type Location string

// Locations.
const (
	Face Location = "face"
	Edge Location = "edge"
	Node Location = "node"
)

// Names of the mesh variables and dimensions written by MeshFile and
// NewSnapshots.
const (
	MeshVar     = "mesh"           // the UGRID mesh topology variable
	FaceAreaVar = "mesh_face_area" // cell areas A_i (m2)
	NodeAreaVar = "mesh_node_area" // dual (vertex) cell areas A_v (m2)
	TimeVar     = "time"           // snapshot time, also the record dimension

	NodeDim         = "nmesh_node"
	EdgeDim         = "nmesh_edge"
	FaceDim         = "nmesh_face"
	MaxFaceNodesDim = "nmesh_face_max_nodes"
	TwoDim          = "Two"

	// FaceAreaMeasure and NodeAreaMeasure are Field.CellMeasures values
	// for fields on faces and on nodes.
	FaceAreaMeasure = "area: " + FaceAreaVar
	NodeAreaMeasure = "area: " + NodeAreaVar

	// TimeUnits are the CF units of the time variable. The reference date
	// is a nominal origin: simulated time 0 is 2000-01-01 00:00:00.
	TimeUnits = "seconds since 2000-01-01 00:00:00"

	// ConnectivityFill is the _FillValue of the connectivity variables,
	// marking unused trailing entries of faces with fewer nodes than the
	// largest face. UGRID 1.0 asks for a value "obviously larger than the
	// number of nodes"; its example's 999999 is smaller than the node
	// count of large meshes, so the largest NC_INT is used.
	ConnectivityFill int32 = math.MaxInt32

	// Conventions is the global Conventions attribute.
	Conventions = "CF-1.8 UGRID-1.0"

	// The edge orientation, as written on the mesh variable and on the
	// edge normal variables.
	EdgeNormalConvention  = "n_e points from edge_face_connectivity[e,0] to edge_face_connectivity[e,1]"
	EdgeTangentConvention = "t_e = k x n_e runs from edge_node_connectivity[e,0] to edge_node_connectivity[e,1]"
)

// Field is a data variable on the mesh, written as NC_DOUBLE with the
// UGRID attributes mesh and location, the CF attributes units,
// standard_name and/or long_name, coordinates and, when set, cell_measures
// and comment.
type Field struct {
	Name         string
	Location     Location
	Units        string // UDUNITS string, "1" for dimensionless; required
	StandardName string // CF standard name; this or LongName is required
	LongName     string
	CellMeasures string // CF cell_measures, e.g. FaceAreaMeasure; optional
	Comment      string // optional
	Data         []float64
}

// Meta holds the global attributes. Empty Title and Source get defaults;
// an empty History is left out. Attrs are written after the standard ones.
type Meta struct {
	Title   string
	Source  string
	History string
	Attrs   []Attr
}

// DualEdgesNonOrthogonal is the mesh variable's dual_edges attribute on a
// grid whose dual edges do not cross the edges at right angles (the
// attribute is absent on the others).
const DualEdgesNonOrthogonal = "not orthogonal to the edges: the edge normal is the unit direction of the dual edge (edge face 0 to edge face 1) at the edge point, not the normal of the edge, and edge velocities are components along it"

// MeshFile builds the UGRID 1.0 / CF 1.8 file of mesh m with fields, one
// value per face, edge or node each. The file holds references to m's
// arrays and to the field data until it is written.
func MeshFile(m *mesh.Mesh, meta Meta, fields []Field) (*File, error) {
	b, err := newMeshBuilder(m, meta, fields, false)
	if err != nil {
		return nil, err
	}
	return b.f, nil
}

// WriteFile writes f to path atomically (see package atomicfile).
func WriteFile(path string, f *File) error {
	return atomicfile.WriteFile(path, func(w io.Writer) error {
		_, err := f.WriteTo(w)
		return err
	})
}

// Snapshots streams time snapshots of fields on a mesh into a UGRID file
// whose fields have dimensions (time, element) along the unlimited time
// dimension; see Writer for how records reach the file.
type Snapshots struct {
	w      *Writer
	fields []Field
	counts []int
	rec    []any
	time   []float64
}

// NewSnapshots writes the mesh part of a snapshot file to ws, with the
// time variable and the fields declared but no records yet. The fields'
// Data must be nil: values go to Write.
func NewSnapshots(ws io.WriteSeeker, m *mesh.Mesh, meta Meta, fields []Field) (*Snapshots, error) {
	for _, fl := range fields {
		if fl.Data != nil {
			return nil, fmt.Errorf("ncout: field %q: Data must be nil in NewSnapshots; pass the values to Snapshots.Write", fl.Name)
		}
	}
	b, err := newMeshBuilder(m, meta, fields, true)
	if err != nil {
		return nil, err
	}
	w, err := NewWriter(ws, b.f)
	if err != nil {
		return nil, err
	}
	s := &Snapshots{w: w, fields: append([]Field(nil), fields...), rec: make([]any, len(fields)+1), time: make([]float64, 1)}
	for _, fl := range fields {
		s.counts = append(s.counts, b.count(fl.Location))
	}
	return s, nil
}

// Write appends the snapshot at simulated time t (seconds), one slice per
// field in the order given to NewSnapshots. Times must increase strictly,
// as CF requires of a coordinate variable.
func (s *Snapshots) Write(t float64, data ...[]float64) error {
	if math.IsNaN(t) || math.IsInf(t, 0) {
		return fmt.Errorf("ncout: snapshot time = %g: must be a finite number of seconds", t)
	}
	if s.w.NumRecs() > 0 && !(t > s.time[0]) {
		return fmt.Errorf("ncout: snapshot time = %g s: must be later than the previous snapshot (%g s)", t, s.time[0])
	}
	if len(data) != len(s.fields) {
		return fmt.Errorf("ncout: snapshot at %g s: %d fields given; want %d (%s)", t, len(data), len(s.fields), s.names())
	}
	for i, fl := range s.fields {
		if len(data[i]) != s.counts[i] {
			return fmt.Errorf("ncout: field %q: %d values; location %q has %d", fl.Name, len(data[i]), fl.Location, s.counts[i])
		}
		s.rec[i+1] = data[i]
	}
	prev := s.time[0]
	s.time[0] = t
	s.rec[0] = s.time
	if err := s.w.WriteRecord(s.rec...); err != nil {
		s.time[0] = prev
		return err
	}
	return nil
}

func (s *Snapshots) names() string {
	var ns []string
	for _, fl := range s.fields {
		ns = append(ns, fl.Name)
	}
	return strings.Join(ns, ", ")
}

// Len returns the number of snapshots written.
func (s *Snapshots) Len() int { return s.w.NumRecs() }

// Close ends the stream and returns the first write error, if any. It
// does not close the underlying file.
func (s *Snapshots) Close() error { return s.w.Close() }

// meshBuilder assembles the file.
type meshBuilder struct {
	m      *mesh.Mesh
	f      *File
	sphere bool
	coords map[Location]string // value of the coordinates attribute
	time   bool
}

func (b *meshBuilder) count(loc Location) int {
	switch loc {
	case Face:
		return b.m.NumCells
	case Edge:
		return b.m.NumEdges
	case Node:
		return b.m.NumVertices
	}
	return -1
}

func dimOf(loc Location) string {
	switch loc {
	case Face:
		return FaceDim
	case Edge:
		return EdgeDim
	}
	return NodeDim
}

func newMeshBuilder(m *mesh.Mesh, meta Meta, fields []Field, time bool) (*meshBuilder, error) {
	if m == nil {
		return nil, fmt.Errorf("ncout: mesh is nil")
	}
	if err := checkMesh(m); err != nil {
		return nil, fmt.Errorf("ncout: %w", err)
	}
	b := &meshBuilder{m: m, f: &File{Format: CDF2}, sphere: m.Surface.Sphere, time: time}
	f := b.f
	title, source := meta.Title, meta.Source
	if title == "" {
		title = "gyrebench shallow-water output"
	}
	if source == "" {
		source = "gyrebench"
	}
	f.SetAttr("Conventions", Conventions)
	f.SetAttr("title", title)
	f.SetAttr("source", source)
	if meta.History != "" {
		f.SetAttr("history", meta.History)
	}
	for _, a := range meta.Attrs {
		if _, dup := f.Attr(a.Name); dup {
			return nil, fmt.Errorf("ncout: global attribute %q in Meta.Attrs: set twice (Conventions is fixed; title, source and history have their own Meta fields)", a.Name)
		}
		f.SetAttr(a.Name, a.Value)
	}

	maxN := m.MaxCellEdges()
	if time {
		f.AddDim(TimeVar, Unlimited)
	}
	f.AddDim(NodeDim, m.NumVertices)
	f.AddDim(EdgeDim, m.NumEdges)
	f.AddDim(FaceDim, m.NumCells)
	f.AddDim(MaxFaceNodesDim, maxN)
	f.AddDim(TwoDim, 2)

	// Coordinates.
	xn, yn, xs, ys := "x", "y", "projection_x_coordinate", "projection_y_coordinate"
	xl, yl, xu, yu := "x coordinate", "y coordinate", "m", "m"
	if b.sphere {
		xn, yn, xs, ys = "lon", "lat", "longitude", "latitude"
		xl, yl, xu, yu = "longitude", "latitude", "degrees_east", "degrees_north"
	}
	b.coords = make(map[Location]string)
	for _, loc := range []Location{Node, Face, Edge} {
		b.coords[loc] = "mesh_" + string(loc) + "_" + xn + " " + "mesh_" + string(loc) + "_" + yn
	}

	// The mesh topology variable first, as in the UGRID examples. Its one
	// value carries no meaning; 0 is written rather than a fill value.
	mv := f.AddVar(MeshVar, Int, nil, []int32{0})
	mv.SetAttr("cf_role", "mesh_topology").
		SetAttr("long_name", "topology of the 2-D C-grid: faces are cells, nodes are cell vertices").
		SetAttr("topology_dimension", int32(2)).
		SetAttr("node_coordinates", b.coords[Node]).
		SetAttr("face_coordinates", b.coords[Face]).
		SetAttr("edge_coordinates", b.coords[Edge]).
		SetAttr("face_node_connectivity", "mesh_face_nodes").
		SetAttr("edge_node_connectivity", "mesh_edge_nodes").
		SetAttr("face_edge_connectivity", "mesh_face_edges").
		SetAttr("edge_face_connectivity", "mesh_edge_faces").
		SetAttr("edge_normal_convention", EdgeNormalConvention).
		SetAttr("edge_tangent_convention", EdgeTangentConvention).
		SetAttr("grid_kind", string(m.Kind)).
		SetAttr("grid_n", int32(m.N))
	if !m.Orthogonal {
		mv.SetAttr("dual_edges", DualEdgesNonOrthogonal)
	}
	if b.sphere {
		mv.SetAttr("surface", "sphere").
			SetAttr("radius", m.Surface.Radius).
			SetAttr("comment", "Nodes and edges of each face are listed anticlockwise seen from outside the sphere; edge k of a face joins its nodes k and k+1 (mod the face's node count).")
	} else {
		mv.SetAttr("surface", "doubly periodic plane").
			SetAttr("period_x", m.Surface.Lx).
			SetAttr("period_y", m.Surface.Ly).
			SetAttr("comment", "Nodes and edges of each face are listed anticlockwise seen from above; edge k of a face joins its nodes k and k+1 (mod the face's node count). Coordinates lie in [0, period_x) x [0, period_y): unwrap differences to the nearest periodic image.")
	}

	for _, c := range []struct {
		loc     Location
		what    string
		x, y, z []float64
	}{
		{Node, "mesh nodes (cell vertices)", m.VertexX, m.VertexY, m.VertexZ},
		{Face, "mesh faces (cell centres)", m.CellX, m.CellY, m.CellZ},
		{Edge, "mesh edges (where the dual edge crosses the edge)", m.EdgeX, m.EdgeY, m.EdgeZ},
	} {
		px, py := c.x, c.y
		if b.sphere {
			px, py = lonLat(c.x, c.y, c.z)
		}
		base := "mesh_" + string(c.loc) + "_"
		dim := []string{dimOf(c.loc)}
		f.AddVar(base+xn, Double, dim, px).
			SetAttr("standard_name", xs).
			SetAttr("long_name", xl+" of "+c.what).
			SetAttr("units", xu)
		f.AddVar(base+yn, Double, dim, py).
			SetAttr("standard_name", ys).
			SetAttr("long_name", yl+" of "+c.what).
			SetAttr("units", yu)
	}

	// Topology.
	t := &m.Topology
	faceNodes := make([]int32, m.NumCells*maxN)
	faceEdges := make([]int32, m.NumCells*maxN)
	for i := 0; i < m.NumCells; i++ {
		lo, hi := t.EdgesOfCell(i)
		n := hi - lo
		row := i * maxN
		for k := 0; k < maxN; k++ {
			if k >= n {
				faceNodes[row+k], faceEdges[row+k] = ConnectivityFill, ConnectivityFill
				continue
			}
			// CellVertices[lo+k] follows edge k; node k precedes it.
			faceNodes[row+k] = t.CellVertices[lo+(k+n-1)%n]
			faceEdges[row+k] = t.CellEdges[lo+k]
		}
	}
	conn := func(name, role, long string, dims []string, data []int32, fill bool) {
		v := f.AddVar(name, Int, dims, data).
			SetAttr("cf_role", role).
			SetAttr("long_name", long).
			SetAttr("start_index", int32(0))
		if fill {
			v.SetAttr("_FillValue", ConnectivityFill)
		}
	}
	conn("mesh_face_nodes", "face_node_connectivity", "nodes of each face, anticlockwise", []string{FaceDim, MaxFaceNodesDim}, faceNodes, true)
	conn("mesh_edge_nodes", "edge_node_connectivity", "nodes of each edge: t_e runs from node 0 to node 1", []string{EdgeDim, TwoDim}, t.EdgeVertices, false)
	conn("mesh_face_edges", "face_edge_connectivity", "edges of each face, anticlockwise; edge k joins nodes k and k+1", []string{FaceDim, MaxFaceNodesDim}, faceEdges, true)
	conn("mesh_edge_faces", "edge_face_connectivity", "faces of each edge: n_e points from face 0 to face 1", []string{EdgeDim, TwoDim}, t.EdgeCells, true)

	// Metric and edge normals.
	for _, a := range []struct {
		name, dim string
		loc       Location
		long      string
		area      []float64
	}{
		{FaceAreaVar, FaceDim, Face, "area of each face (primal cell)", m.CellArea},
		{NodeAreaVar, NodeDim, Node, "area of the dual cell around each node (vertex)", m.VertexArea},
	} {
		f.AddVar(a.name, Double, []string{a.dim}, a.area).
			SetAttr("standard_name", "cell_area").
			SetAttr("long_name", a.long).
			SetAttr("units", "m2").
			SetAttr("mesh", MeshVar).
			SetAttr("location", string(a.loc)).
			SetAttr("coordinates", b.coords[a.loc])
	}
	comps := []struct {
		c string
		d []float64
	}{{"x", m.NormalX}, {"y", m.NormalY}}
	frame := "plane"
	if b.sphere {
		comps = append(comps, struct {
			c string
			d []float64
		}{"z", m.NormalZ})
		frame = "Cartesian (Earth-centred)"
	}
	for _, c := range comps {
		f.AddVar("mesh_edge_normal_"+c.c, Double, []string{EdgeDim}, c.d).
			SetAttr("long_name", c.c+" component of the unit edge normal n_e, "+frame+" frame").
			SetAttr("units", "1").
			SetAttr("mesh", MeshVar).
			SetAttr("location", string(Edge)).
			SetAttr("coordinates", b.coords[Edge]).
			SetAttr("comment", EdgeNormalConvention+"; "+EdgeTangentConvention)
	}

	if time {
		f.AddVar(TimeVar, Double, []string{TimeVar}, nil).
			SetAttr("standard_name", "time").
			SetAttr("long_name", "simulated time").
			SetAttr("units", TimeUnits).
			SetAttr("axis", "T")
	}
	if err := b.addFields(fields); err != nil {
		return nil, err
	}
	// Everything the caller could get wrong has been checked; a layout
	// error here would name the offending variable.
	if _, err := f.layout(); err != nil {
		return nil, err
	}
	return b, nil
}

func (b *meshBuilder) addFields(fields []Field) error {
	f := b.f
	builtin := make(map[string]bool, len(f.Vars))
	for _, v := range f.Vars {
		builtin[v.Name] = true
	}
	for _, fl := range fields {
		if err := checkName(fl.Name); err != nil {
			return fmt.Errorf("ncout: field %q: %w", fl.Name, err)
		}
		if builtin[fl.Name] {
			return fmt.Errorf("ncout: field %q: the name is taken by a mesh variable; choose another", fl.Name)
		}
		if f.Var(fl.Name) != nil {
			return fmt.Errorf("ncout: field %q: given twice", fl.Name)
		}
		n := b.count(fl.Location)
		if n < 0 {
			return fmt.Errorf("ncout: field %q: location = %q; allowed: face, edge, node", fl.Name, fl.Location)
		}
		if !b.time && len(fl.Data) != n {
			return fmt.Errorf("ncout: field %q: %d values; location %q has %d", fl.Name, len(fl.Data), fl.Location, n)
		}
		if fl.Units == "" {
			return fmt.Errorf("ncout: field %q: units is empty; want a UDUNITS string such as \"m\" (\"1\" if dimensionless)", fl.Name)
		}
		if fl.StandardName == "" && fl.LongName == "" {
			return fmt.Errorf("ncout: field %q: neither standard_name nor long_name is set; set at least one", fl.Name)
		}
		dims := []string{dimOf(fl.Location)}
		var data any = fl.Data
		if b.time {
			dims = []string{TimeVar, dimOf(fl.Location)}
			data = nil
		}
		v := f.AddVar(fl.Name, Double, dims, data)
		if fl.StandardName != "" {
			v.SetAttr("standard_name", fl.StandardName)
		}
		if fl.LongName != "" {
			v.SetAttr("long_name", fl.LongName)
		}
		v.SetAttr("units", fl.Units).
			SetAttr("mesh", MeshVar).
			SetAttr("location", string(fl.Location)).
			SetAttr("coordinates", b.coords[fl.Location])
		if fl.Comment != "" {
			v.SetAttr("comment", fl.Comment)
		}
	}
	// cell_measures last, so that it may name any variable of the file.
	for _, fl := range fields {
		if fl.CellMeasures == "" {
			continue
		}
		if err := b.checkMeasures(fl); err != nil {
			return err
		}
		f.Var(fl.Name).SetAttr("cell_measures", fl.CellMeasures)
	}
	return nil
}

// checkMeasures checks a CF cell_measures value: "measure: variable"
// pairs with measure area or volume and a variable of the file on the
// field's own location.
func (b *meshBuilder) checkMeasures(fl Field) error {
	words := strings.Fields(fl.CellMeasures)
	if len(words) == 0 || len(words)%2 != 0 {
		return fmt.Errorf("ncout: field %q: cell_measures = %q; want \"area: VARIABLE\" pairs, e.g. %q", fl.Name, fl.CellMeasures, FaceAreaMeasure)
	}
	for i := 0; i < len(words); i += 2 {
		m, name := words[i], words[i+1]
		if m != "area:" && m != "volume:" {
			return fmt.Errorf("ncout: field %q: cell_measures = %q: measure %q; allowed: area, volume", fl.Name, fl.CellMeasures, strings.TrimSuffix(m, ":"))
		}
		v := b.f.Var(name)
		if v == nil {
			return fmt.Errorf("ncout: field %q: cell_measures = %q: no variable %q in the file", fl.Name, fl.CellMeasures, name)
		}
		if loc, _ := v.Attr("location"); loc != string(fl.Location) {
			return fmt.Errorf("ncout: field %q: cell_measures = %q: %q is on location %q, the field on %q", fl.Name, fl.CellMeasures, name, loc, fl.Location)
		}
	}
	return nil
}

// lonLat converts Cartesian positions to longitude and latitude in
// degrees.
func lonLat(x, y, z []float64) (lon, lat []float64) {
	lon = make([]float64, len(x))
	lat = make([]float64, len(x))
	for i := range x {
		lon[i] = math.Atan2(y[i], x[i]) * 180 / math.Pi
		lat[i] = math.Atan2(z[i], math.Hypot(x[i], y[i])) * 180 / math.Pi
	}
	return lon, lat
}

// checkMesh checks the array lengths and indices that MeshFile relies on,
// so that a malformed mesh is an error, not a panic.
func checkMesh(m *mesh.Mesh) error {
	nc, ne, nv := m.NumCells, m.NumEdges, m.NumVertices
	if nc <= 0 || ne <= 0 || nv <= 0 {
		return fmt.Errorf("mesh: %d cells, %d edges, %d vertices; want positive counts", nc, ne, nv)
	}
	lengths := []struct {
		name string
		got  int
		want int
	}{
		{"EdgeCells", len(m.EdgeCells), 2 * ne},
		{"EdgeVertices", len(m.EdgeVertices), 2 * ne},
		{"CellEdgeStart", len(m.CellEdgeStart), nc + 1},
		{"CellVertices", len(m.CellVertices), len(m.CellEdges)},
		{"CellArea", len(m.CellArea), nc},
		{"VertexArea", len(m.VertexArea), nv},
		{"CellX", len(m.CellX), nc}, {"CellY", len(m.CellY), nc},
		{"VertexX", len(m.VertexX), nv}, {"VertexY", len(m.VertexY), nv},
		{"EdgeX", len(m.EdgeX), ne}, {"EdgeY", len(m.EdgeY), ne},
		{"NormalX", len(m.NormalX), ne}, {"NormalY", len(m.NormalY), ne},
	}
	if m.Surface.Sphere {
		lengths = append(lengths, []struct {
			name string
			got  int
			want int
		}{{"CellZ", len(m.CellZ), nc}, {"VertexZ", len(m.VertexZ), nv}, {"EdgeZ", len(m.EdgeZ), ne}, {"NormalZ", len(m.NormalZ), ne}}...)
	}
	for _, l := range lengths {
		if l.got != l.want {
			return fmt.Errorf("mesh: len(%s) = %d; want %d", l.name, l.got, l.want)
		}
	}
	s := m.CellEdgeStart
	if s[0] != 0 || int(s[nc]) != len(m.CellEdges) {
		return fmt.Errorf("mesh: CellEdgeStart runs from %d to %d; want 0 to len(CellEdges) = %d", s[0], s[nc], len(m.CellEdges))
	}
	for i := 0; i < nc; i++ {
		if s[i+1]-s[i] < 3 {
			return fmt.Errorf("mesh: cell %d has %d edges; want at least 3", i, s[i+1]-s[i])
		}
	}
	for _, ix := range []struct {
		name string
		a    []int32
		n    int
	}{
		{"EdgeCells", m.EdgeCells, nc},
		{"EdgeVertices", m.EdgeVertices, nv},
		{"CellEdges", m.CellEdges, ne},
		{"CellVertices", m.CellVertices, nv},
	} {
		for k, v := range ix.a {
			if v < 0 || int(v) >= ix.n {
				return fmt.Errorf("mesh: %s[%d] = %d; want 0 to %d", ix.name, k, v, ix.n-1)
			}
		}
	}
	return nil
}
