package mesh

import "math"

// NaturalHeight returns the domain height of a planar grid family when no
// height is imposed: the side length for quad, n rows of regular hexagons
// (n·dx·√3/2) for hex and tri.
func NaturalHeight(kind Kind, n int, length float64) float64 {
	if kind == Quad {
		return length
	}
	return length * math.Sqrt(3) / 2
}

// planeRows returns the number of rows that fits the height best: for
// hexagons an even number (rows alternate their offset), for squares any.
func planeRows(kind Kind, n int, length, height float64) int {
	dx := length / float64(n)
	if kind == Quad {
		return max(int(math.Round(height/dx)), 4)
	}
	return max(2*int(math.Round(height/(dx*math.Sqrt(3)))), 4)
}

// newQuad builds the doubly periodic quadrilateral C-grid: n columns of
// width length/n and as many rows as fit the height (square cells when the
// height is the natural one). Cell (i, j) has index j·n + i and its
// south-west corner is vertex j·n + i.
func newQuad(n int, length, height float64) *Mesh {
	rows := planeRows(Quad, n, length, height)
	dx, dy := length/float64(n), height/float64(rows)
	p := newPlaneCells(length, height, n*rows, n*rows, 4)
	id := func(i, j int) int32 { return int32(((j+rows)%rows)*n + (i+n)%n) }
	for j := 0; j < rows; j++ {
		for i := 0; i < n; i++ {
			p.cx = append(p.cx, (float64(i)+0.5)*dx)
			p.cy = append(p.cy, (float64(j)+0.5)*dy)
			p.vx = append(p.vx, float64(i)*dx)
			p.vy = append(p.vy, float64(j)*dy)
			p.cellVerts = append(p.cellVerts, id(i, j), id(i+1, j), id(i+1, j+1), id(i, j+1))
		}
	}
	return p.build(Quad, n)
}

// newHex builds the doubly periodic hexagonal C-grid as the Voronoi
// tessellation of a triangular lattice: n pointy-top cells per row, centre
// spacing dx = length/n, an even number of rows shifted by dx/2 on odd
// rows. At the natural height the rows are dx·√3/2 apart and the hexagons
// regular; at another height the lattice is stretched in y by at most
// about 1/n and the cells are the (still orthogonal) Voronoi cells of the
// stretched lattice. Each cell owns two vertices: its top one (index 2c)
// and its upper-right one (index 2c+1), the circumcentres of the lattice
// triangles above it.
func newHex(n int, length, height float64) *Mesh {
	rows := planeRows(Hex, n, length, height)
	dx := length / float64(n)
	dy := height / float64(rows)
	// Circumcentre heights above the cell centre of the triangles
	// (c, upper-left, upper-right) and (c, right, upper-right).
	top := (dx*dx/4 + dy*dy) / (2 * dy)
	side := (dy*dy - dx*dx/4) / (2 * dy)
	p := newPlaneCells(length, height, n*rows, 2*n*rows, 6)
	cell := func(i, j int) int { return ((j+rows)%rows)*n + (i+n)%n }
	for j := 0; j < rows; j++ {
		for i := 0; i < n; i++ {
			x := (float64(i) + 0.5*float64(j%2) + 0.25) * dx
			y := (float64(j) + 0.5) * dy
			p.cx = append(p.cx, x)
			p.cy = append(p.cy, y)
			p.vx = append(p.vx, x, math.Mod(x+dx/2, p.lx))
			p.vy = append(p.vy, math.Mod(y+top, p.ly), y+side)
		}
	}
	for j := 0; j < rows; j++ {
		// Neighbours in the row below: lower-left and lower-right.
		ll, lr := -1, 0
		if j%2 == 1 {
			ll, lr = 0, 1
		}
		for i := 0; i < n; i++ {
			up := func(c int) int32 { return int32(2 * c) }
			right := func(c int) int32 { return int32(2*c + 1) }
			p.cellVerts = append(p.cellVerts,
				right(cell(i, j)),      // 30°
				up(cell(i, j)),         // 90°
				right(cell(i-1, j)),    // 150°
				up(cell(i+ll, j-1)),    // 210°
				right(cell(i+ll, j-1)), // 270°
				up(cell(i+lr, j-1)),    // 330°
			)
		}
	}
	return p.build(Hex, n)
}
