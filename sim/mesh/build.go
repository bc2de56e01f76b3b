package mesh

import "math"

// planeCells describes a doubly periodic planar mesh as polygons: the
// generators fill it in and build derives every other array from it.
type planeCells struct {
	lx, ly    float64
	cx, cy    []float64 // cell centres
	vx, vy    []float64 // vertex positions
	deg       int       // vertices per cell
	cellVerts []int32   // vertices of cell i, anticlockwise: [deg·i, deg·(i+1))
}

// newPlaneCells returns an empty description sized for nc cells of deg
// vertices and nv vertices, so that the generators' appends never regrow.
func newPlaneCells(lx, ly float64, nc, nv, deg int) *planeCells {
	return &planeCells{lx: lx, ly: ly, deg: deg,
		cx: make([]float64, 0, nc), cy: make([]float64, 0, nc),
		vx: make([]float64, 0, nv), vy: make([]float64, 0, nv),
		cellVerts: make([]int32, 0, deg*nc)}
}

// wrap returns the periodic image of d closest to zero.
func wrap(d, l float64) float64 {
	return d - l*math.Round(d/l)
}

// build turns the polygon description into a Mesh. Vertices of a cell are
// unwrapped to the periodic image nearest the cell centre, which is valid
// while cells are small against the domain (n ≥ 4).
func (p *planeCells) build(kind Kind, n int) *Mesh {
	nv := len(p.vx)
	m := &Mesh{Kind: kind, N: n, Surface: Surface{Lx: p.lx, Ly: p.ly}, Orthogonal: true}
	t := &m.Topology
	vertexEdges := polygonTopology(t, nv, p.deg, p.cellVerts)
	p.cellVerts = nil
	ne := t.NumEdges

	g := &m.Metric
	c := &m.Coords
	c.CellX, c.CellY = p.cx, p.cy
	c.VertexX, c.VertexY = p.vx, p.vy
	m.allocPlaneEdges()
	for e := 0; e < ne; e++ {
		c0, c1 := t.EdgeCells[2*e], t.EdgeCells[2*e+1]
		v0, v1 := t.EdgeVertices[2*e], t.EdgeVertices[2*e+1]
		dx := wrap(p.cx[c1]-p.cx[c0], p.lx)
		dy := wrap(p.cy[c1]-p.cy[c0], p.ly)
		d := math.Hypot(dx, dy)
		g.DualLength[e] = d
		c.NormalX[e], c.NormalY[e] = dx/d, dy/d
		c.EdgeX[e] = math.Mod(p.cx[c0]+dx/2+p.lx, p.lx)
		c.EdgeY[e] = math.Mod(p.cy[c0]+dy/2+p.ly, p.ly)
		g.EdgeLength[e] = math.Hypot(wrap(p.vx[v1]-p.vx[v0], p.lx), wrap(p.vy[v1]-p.vy[v0], p.ly))
	}

	// Cell areas and kites, with positions relative to the cell centre.
	m.cellKites(func(i int, e, v, en int32) float64 {
		px, py := p.rel(i, c.EdgeX[e], c.EdgeY[e])
		vx, vy := p.rel(i, p.vx[v], p.vy[v])
		qx, qy := p.rel(i, c.EdgeX[en], c.EdgeY[en])
		return (px*vy-py*vx)/2 + (vx*qy-vy*qx)/2
	})
	m.finishVertices(vertexEdges, func(v int, e int32) float64 {
		x, y := wrap(c.EdgeX[e]-p.vx[v], p.lx), wrap(c.EdgeY[e]-p.vy[v], p.ly)
		return math.Atan2(y, x)
	})
	return m
}

// allocPlaneEdges allocates the per-edge metric and coordinates of a
// planar mesh: lengths, dual lengths, edge points and normals.
func (m *Mesh) allocPlaneEdges() {
	ne := m.NumEdges
	m.EdgeLength, m.DualLength = make([]float64, ne), make([]float64, ne)
	m.EdgeX, m.EdgeY = make([]float64, ne), make([]float64, ne)
	m.NormalX, m.NormalY = make([]float64, ne), make([]float64, ne)
}

// cellKites fills CellKiteArea and CellArea, the sum of a cell's kites,
// from kite(i, e, v, en): the area of the kite of cell i at vertex v,
// between its edges e and en (anticlockwise). Each kite is computed and
// added in the same order whatever the generator.
func (m *Mesh) cellKites(kite func(i int, e, v, en int32) float64) {
	t, g := &m.Topology, &m.Metric
	g.CellArea = make([]float64, t.NumCells)
	g.CellKiteArea = make([]float64, len(t.CellEdges))
	for i := 0; i < t.NumCells; i++ {
		lo, hi := t.EdgesOfCell(i)
		k := hi - lo
		for j := 0; j < k; j++ {
			a := kite(i, t.CellEdges[lo+j], t.CellVertices[lo+j], t.CellEdges[lo+(j+1)%k])
			g.CellKiteArea[lo+j] = a
			g.CellArea[i] += a
		}
	}
}

// polygonTopology fills the edge and cell arrays of t from polygons of deg
// vertices each (cellVerts[deg·i : deg·(i+1)] anticlockwise for cell i, nv
// vertices in all). cellVerts becomes CellVertices in place. It returns
// storage for finishVertices' VertexEdges.
//
// Edges are numbered in order of discovery; the first cell to meet an edge
// is c0. Each side is looked up among the edges already found at its lower
// vertex: a chain through the edge numbers, a few links long. The chains
// (NumVertices heads and NumEdges links) borrow the storage that
// finishVertices fills with the vertex edges later (one value per side,
// 2·NumEdges), so the build leaves little garbage behind.
func polygonTopology(t *Topology, nv, deg int, cellVerts []int32) []int32 {
	nc := len(cellVerts) / deg
	t.NumCells, t.NumVertices = nc, nv
	sides := len(cellVerts)
	vertexEdges := make([]int32, max(sides, nv+sides/2))
	head := vertexEdges[:nv] // last edge found whose lower vertex is v, or −1
	for v := range head {
		head[v] = -1
	}
	next := vertexEdges[nv:nv:len(vertexEdges)] // the edge found before e at the same lower vertex
	t.CellEdgeStart = make([]int32, nc+1)
	t.EdgeCells = make([]int32, 0, sides)
	t.EdgeVertices = make([]int32, 0, sides)
	t.CellEdges = make([]int32, 0, sides)
	t.CellEdgeSign = make([]int8, 0, sides)
	for i := 0; i < nc; i++ {
		vs := cellVerts[i*deg : (i+1)*deg]
		for k := range vs {
			va, vb := vs[k], vs[(k+1)%len(vs)]
			lo, hi := min(va, vb), max(va, vb)
			e := head[lo]
			for e >= 0 && max(t.EdgeVertices[2*e], t.EdgeVertices[2*e+1]) != hi {
				e = next[e]
			}
			sign := int8(-1)
			if e < 0 {
				e = int32(len(t.EdgeCells) / 2)
				next = append(next, head[lo])
				head[lo] = e
				t.EdgeCells = append(t.EdgeCells, int32(i), -1)
				t.EdgeVertices = append(t.EdgeVertices, va, vb)
				sign = 1
			} else {
				t.EdgeCells[2*e+1] = int32(i)
			}
			t.CellEdges = append(t.CellEdges, e)
			t.CellEdgeSign = append(t.CellEdgeSign, sign)
		}
		t.CellEdgeStart[i+1] = int32(len(t.CellEdges))
	}
	// The vertex after side k is the polygon's vertex k+1: rotating each
	// polygon by one turns the description into CellVertices in place.
	for i := 0; i < nc; i++ {
		vs := cellVerts[i*deg : (i+1)*deg]
		v0 := vs[0]
		copy(vs, vs[1:])
		vs[len(vs)-1] = v0
	}
	t.CellVertices = cellVerts
	t.NumEdges = len(t.EdgeCells) / 2
	return vertexEdges[:sides]
}

func (p *planeCells) rel(i int, x, y float64) (float64, float64) {
	return wrap(x-p.cx[i], p.lx), wrap(y-p.cy[i], p.ly)
}

// finishVertices fills the vertex CSR arrays and the vertex areas from the
// edge and cell arrays. angle(v, e) orders the edges around a vertex.
// vertexEdges, when not nil, is the storage for VertexEdges (2·NumEdges
// values, whatever they hold).
func (m *Mesh) finishVertices(vertexEdges []int32, angle func(v int, e int32) float64) {
	m.sortVertexEdges(vertexEdges, angle)
	m.vertexKites()
}

// sortVertexEdges fills the vertex CSR arrays (VertexEdgeStart,
// VertexEdges, VertexEdgeSign, VertexCells) from the edge arrays.
func (m *Mesh) sortVertexEdges(vertexEdges []int32, angle func(v int, e int32) float64) {
	t := &m.Topology
	nv := t.NumVertices
	start := make([]int32, nv+1)
	for e := 0; e < t.NumEdges; e++ {
		start[t.EdgeVertices[2*e]+1]++
		start[t.EdgeVertices[2*e+1]+1]++
	}
	for v := 0; v < nv; v++ {
		start[v+1] += start[v]
	}
	if vertexEdges == nil {
		vertexEdges = make([]int32, start[nv])
	}
	t.VertexEdges = vertexEdges[:start[nv]]
	// start[v] serves as v's insertion point, which leaves it at the
	// start of v+1; shifting by one puts the starts back.
	for e := 0; e < t.NumEdges; e++ {
		for s := 0; s < 2; s++ {
			v := t.EdgeVertices[2*e+s]
			t.VertexEdges[start[v]] = int32(e)
			start[v]++
		}
	}
	copy(start[1:], start[:nv])
	start[0] = 0
	t.VertexEdgeStart = start
	t.VertexEdgeSign = make([]int8, len(t.VertexEdges))
	t.VertexCells = make([]int32, len(t.VertexEdges))
	var ang []float64
	for v := 0; v < nv; v++ {
		lo, hi := t.EdgesOfVertex(v)
		es := t.VertexEdges[lo:hi]
		// Insertion sort by angle: a vertex has a handful of edges, and a
		// sort.Slice closure per vertex would be most of the build's garbage.
		ang = ang[:0]
		for _, e := range es {
			ang = append(ang, angle(v, e))
		}
		for a := 1; a < len(es); a++ {
			for b := a; b > 0 && ang[b] < ang[b-1]; b-- {
				ang[b], ang[b-1] = ang[b-1], ang[b]
				es[b], es[b-1] = es[b-1], es[b]
			}
		}
		for k := lo; k < hi; k++ {
			e := t.VertexEdges[k]
			// n_e is anticlockwise about v1; walking anticlockwise past edge
			// e moves along n_e when the sign is +1, into c1.
			if t.EdgeVertices[2*e+1] == int32(v) {
				t.VertexEdgeSign[k] = 1
				t.VertexCells[k] = t.EdgeCells[2*e+1]
			} else {
				t.VertexEdgeSign[k] = -1
				t.VertexCells[k] = t.EdgeCells[2*e]
			}
		}
	}
}

// vertexKites fills VertexKiteArea and VertexArea from the cell kites.
func (m *Mesh) vertexKites() {
	t := &m.Topology
	g := &m.Metric
	// Kite area of (cell, vertex), looked up from the cell side.
	kite := func(i, v int32) float64 {
		lo, hi := t.EdgesOfCell(int(i))
		for k := lo; k < hi; k++ {
			if t.CellVertices[k] == v {
				return g.CellKiteArea[k]
			}
		}
		panic("mesh: vertex not on cell")
	}
	g.VertexKiteArea = make([]float64, len(t.VertexEdges))
	g.VertexArea = make([]float64, t.NumVertices)
	for v := 0; v < t.NumVertices; v++ {
		lo, hi := t.EdgesOfVertex(v)
		for k := lo; k < hi; k++ {
			g.VertexKiteArea[k] = kite(t.VertexCells[k], int32(v))
			g.VertexArea[v] += g.VertexKiteArea[k]
		}
	}
}

// Pairs is the TRiSK weight matrix in CSR form: for edge e,
// Edges[Start[e]:Start[e+1]] are the edges e' of its two cells (e itself
// excluded) and Weight the matching W_{e,e'}.
type Pairs struct {
	Start  []int32 // NumEdges+1
	Edges  []int32
	Weight []float64
}

// TRiSKPairs computes the TRiSK weights from the kite areas
// (Thuburn et al. 2009, J. Comput. Phys. 228, eq. 33 and §4; Ringler et al.
// 2010, J. Comput. Phys. 229, eq. 24): for edges e = e_j and e' = e_{j+k} of
// cell i, counted anticlockwise,
//
//	w^i_{e,e'} = 1/2 − Σ_{m=0}^{k−1} R_{i,v_{j+m}},
//
// with R_{i,v} the kite area over the cell area, and
// W_{e,e'} = Σ_i n_{e,i} n_{e',i} w^i_{e,e'} over the cells shared by both.
// The within-cell w is antisymmetric because Σ_v R_{i,v} = 1, hence so is W.
// The mesh does not keep them (ten per edge on hexagons): the schemes
// evaluate the same sums cell by cell (package ops); this explicit form is
// for tests and analysis.
func (m *Mesh) TRiSKPairs() Pairs {
	t := &m.Topology
	g := &m.Metric
	var pr Pairs
	pr.Start = make([]int32, t.NumEdges+1)
	total := 0
	for e := 0; e < t.NumEdges; e++ {
		for s := 0; s < 2; s++ {
			lo, hi := t.EdgesOfCell(int(t.EdgeCells[2*e+s]))
			total += hi - lo - 1
		}
	}
	pr.Edges = make([]int32, 0, total)
	pr.Weight = make([]float64, 0, total)
	for e := 0; e < t.NumEdges; e++ {
		start := len(pr.Edges)
		for s := 0; s < 2; s++ {
			i := int(t.EdgeCells[2*e+s])
			lo, hi := t.EdgesOfCell(i)
			n := hi - lo
			j := 0
			for t.CellEdges[lo+j] != int32(e) || t.CellEdgeSign[lo+j] != int8(1-2*s) {
				j++
			}
			ne := float64(t.CellEdgeSign[lo+j])
			sum := 0.0
			for k := 1; k < n; k++ {
				sum += g.CellKiteArea[lo+(j+k-1)%n] / g.CellArea[i]
				ep := t.CellEdges[lo+(j+k)%n]
				w := ne * float64(t.CellEdgeSign[lo+(j+k)%n]) * (0.5 - sum)
				merged := false
				for q := start; q < len(pr.Edges); q++ {
					if pr.Edges[q] == ep {
						pr.Weight[q] += w
						merged = true
					}
				}
				if !merged {
					pr.Edges = append(pr.Edges, ep)
					pr.Weight = append(pr.Weight, w)
				}
			}
		}
		pr.Start[e+1] = int32(len(pr.Edges))
	}
	return pr
}

// Dual returns the dual mesh: cells and vertices swap, edges keep their
// index, the new normal is the old tangent. The dual of the hexagonal mesh
// is the triangular mesh. The new normal lies along the new dual edge only
// on an orthogonal mesh, which is what Dual is for.
func (m *Mesh) Dual(kind Kind) *Mesh {
	t, g, c := &m.Topology, &m.Metric, &m.Coords
	d := &Mesh{Kind: kind, N: m.N, Surface: m.Surface, Orthogonal: m.Orthogonal}
	dt, dg, dc := &d.Topology, &d.Metric, &d.Coords
	dt.NumCells, dt.NumEdges, dt.NumVertices = t.NumVertices, t.NumEdges, t.NumCells
	dt.EdgeCells = make([]int32, 2*t.NumEdges)
	dt.EdgeVertices = make([]int32, 2*t.NumEdges)
	for e := 0; e < t.NumEdges; e++ {
		dt.EdgeCells[2*e], dt.EdgeCells[2*e+1] = t.EdgeVertices[2*e], t.EdgeVertices[2*e+1]
		dt.EdgeVertices[2*e], dt.EdgeVertices[2*e+1] = t.EdgeCells[2*e+1], t.EdgeCells[2*e]
	}
	dt.CellEdgeStart, dt.CellEdges, dt.CellVertices = t.VertexEdgeStart, t.VertexEdges, t.VertexCells
	dt.CellEdgeSign = make([]int8, len(t.VertexEdgeSign))
	for k, s := range t.VertexEdgeSign {
		dt.CellEdgeSign[k] = -s
	}
	dt.VertexEdgeStart, dt.VertexEdges, dt.VertexCells = t.CellEdgeStart, t.CellEdges, t.CellVertices
	dt.VertexEdgeSign = t.CellEdgeSign

	dg.CellArea, dg.VertexArea = g.VertexArea, g.CellArea
	dg.EdgeLength, dg.DualLength = g.DualLength, g.EdgeLength
	dg.CellKiteArea, dg.VertexKiteArea = g.VertexKiteArea, g.CellKiteArea

	dc.CellX, dc.CellY, dc.CellZ = c.VertexX, c.VertexY, c.VertexZ
	dc.VertexX, dc.VertexY, dc.VertexZ = c.CellX, c.CellY, c.CellZ
	dc.EdgeX, dc.EdgeY, dc.EdgeZ = c.EdgeX, c.EdgeY, c.EdgeZ
	// n_new = t_old = k × n_old.
	dc.NormalX = make([]float64, t.NumEdges)
	dc.NormalY = make([]float64, t.NumEdges)
	for e := range dc.NormalX {
		dc.NormalX[e], dc.NormalY[e] = -c.NormalY[e], c.NormalX[e]
	}
	return d
}
