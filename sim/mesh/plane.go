package mesh

import "math"

// newQuad builds the doubly periodic square C-grid: n × n cells of side
// length/n. Cell (i, j) has index j·n + i and its south-west corner is
// vertex j·n + i.
func newQuad(n int, length float64) *Mesh {
	dx := length / float64(n)
	p := &planeCells{lx: length, ly: length}
	id := func(i, j int) int32 { return int32(((j+n)%n)*n + (i+n)%n) }
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			p.cx = append(p.cx, (float64(i)+0.5)*dx)
			p.cy = append(p.cy, (float64(j)+0.5)*dx)
			p.vx = append(p.vx, float64(i)*dx)
			p.vy = append(p.vy, float64(j)*dx)
			p.cellVerts = append(p.cellVerts, []int32{id(i, j), id(i+1, j), id(i+1, j+1), id(i, j+1)})
		}
	}
	return p.build(Quad, n)
}

// newHex builds the doubly periodic regular hexagonal C-grid: n rows of n
// pointy-top hexagons, centre spacing dx = length/n, rows dx·√3/2 apart and
// shifted by dx/2 on odd rows, so the domain is length × n·dx·√3/2 (n even).
// Each cell owns two vertices: its top one (index 2c) and its upper-right
// one (index 2c+1).
func newHex(n int, length float64) *Mesh {
	dx := length / float64(n)
	r := dx / math.Sqrt(3) // circumradius
	dy := 1.5 * r
	p := &planeCells{lx: length, ly: float64(n) * dy}
	cell := func(i, j int) int { return ((j+n)%n)*n + (i+n)%n }
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			x := (float64(i) + 0.5*float64(j%2) + 0.25) * dx
			y := (float64(j) + 0.5) * dy
			p.cx = append(p.cx, x)
			p.cy = append(p.cy, y)
			p.vx = append(p.vx, x, math.Mod(x+dx/2, p.lx))
			p.vy = append(p.vy, math.Mod(y+r, p.ly), y+r/2)
		}
	}
	for j := 0; j < n; j++ {
		// Neighbours in the row below: lower-left and lower-right.
		ll, lr := -1, 0
		if j%2 == 1 {
			ll, lr = 0, 1
		}
		for i := 0; i < n; i++ {
			up := func(c int) int32 { return int32(2 * c) }
			side := func(c int) int32 { return int32(2*c + 1) }
			p.cellVerts = append(p.cellVerts, []int32{
				side(cell(i, j)),      // 30°
				up(cell(i, j)),        // 90°
				side(cell(i-1, j)),    // 150°
				up(cell(i+ll, j-1)),   // 210°
				side(cell(i+ll, j-1)), // 270°
				up(cell(i+lr, j-1)),   // 330°
			})
		}
	}
	return p.build(Hex, n)
}
