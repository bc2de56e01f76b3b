package remap_test

import (
	"fmt"
	"math"

	"gyrebench/sim/mesh"
	"gyrebench/sim/remap"
)

// mass returns Σ_i A_i h_i, the integral of the cell field h over mesh m
// (the volume of fluid when h is the depth).
func mass(m *mesh.Mesh, h []float64) float64 {
	s := 0.0
	for i, v := range h {
		s += m.CellArea[i] * v
	}
	return s
}

// Switch a run from a hexagonal to a finer triangular mesh of the same
// domain: depth and bottom height are remapped conservatively, the normal
// velocities by a least-squares reconstruction.
func Example() {
	src, _ := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 32, Length: 1e6})
	dst, _ := mesh.New(mesh.Spec{Kind: mesh.Tri, N: 48, Length: 1e6})
	r, err := remap.New(src, dst)
	if err != nil {
		fmt.Println(err)
		return
	}

	// State [h | u] on the hex mesh: a depth bump in a uniform 10 m/s flow
	// towards the north-east; a Gaussian seamount as bottom height.
	x := make([]float64, src.NumCells+src.NumEdges)
	bottom := make([]float64, src.NumCells)
	for i := 0; i < src.NumCells; i++ {
		dx, dy := src.CellX[i]-5e5, src.CellY[i]-4e5
		x[i] = 1000 + 50*math.Exp(-(dx*dx+dy*dy)/1e10)
		bottom[i] = 200 * math.Exp(-(dx*dx+dy*dy)/4e10)
	}
	for e := 0; e < src.NumEdges; e++ {
		x[src.NumCells+e] = 10 * (src.NormalX[e] + src.NormalY[e]) / math.Sqrt2
	}

	y := make([]float64, dst.NumCells+dst.NumEdges)
	r.Apply(y, x)
	newBottom := make([]float64, dst.NumCells)
	r.Cells(newBottom, bottom)

	m0, m1 := mass(src, x[:src.NumCells]), mass(dst, y[:dst.NumCells])
	fmt.Println("mass kept to 1e-13:", math.Abs(m1-m0) <= 1e-13*m0)
	fmt.Println("bottom volume kept to 1e-13:", math.Abs(mass(dst, newBottom)-mass(src, bottom)) <= 1e-13*mass(src, bottom))
	worst := 0.0
	for e := 0; e < dst.NumEdges; e++ {
		want := 10 * (dst.NormalX[e] + dst.NormalY[e]) / math.Sqrt2
		worst = max(worst, math.Abs(y[dst.NumCells+e]-want))
	}
	fmt.Println("uniform flow kept to 1e-12 m/s:", worst <= 1e-12)

	// Quad meshes are square, hex meshes are not: no remap between them.
	quad, _ := mesh.New(mesh.Spec{Kind: mesh.Quad, N: 32, Length: 1e6})
	_, err = remap.New(src, quad)
	fmt.Println(err)
	// Output:
	// mass kept to 1e-13: true
	// bottom volume kept to 1e-13: true
	// uniform flow kept to 1e-12 m/s: true
	// remap: the source hex n=32 covers 1000000 × 866025.4038 m but the destination quad n=32 covers 1000000 × 1000000 m; a remap needs the same periodic domain (at their natural heights quad meshes are Lx × Lx, hex and tri meshes Lx × Lx·√3/2)
}
