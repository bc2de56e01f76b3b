package remap_test

import (
	"fmt"
	"math"

	"gyrebench/sim/mesh"
	"gyrebench/sim/remap"
)

// Switch a run on the sphere from icosahedral level 4 to level 5: the
// depth keeps its mass, and a solid-body wind (Williamson case 2, here
// 20 m/s about the z axis) comes through exactly.
func Example_sphere() {
	const a = 6.37122e6
	src, _ := mesh.New(mesh.Spec{Kind: mesh.Icosahedral, N: 4, Radius: a, Optimize: mesh.OptimizeNone})
	dst, _ := mesh.New(mesh.Spec{Kind: mesh.Icosahedral, N: 5, Radius: a, Optimize: mesh.OptimizeNone})
	r, err := remap.New(src, dst)
	if err != nil {
		fmt.Println(err)
		return
	}

	// u = (20 m/s / a) ẑ × x, projected on each edge normal.
	wind := func(m *mesh.Mesh, e int) float64 {
		return 20 / a * (m.EdgeX[e]*m.NormalY[e] - m.EdgeY[e]*m.NormalX[e])
	}
	x := make([]float64, src.NumCells+src.NumEdges)
	for i := 0; i < src.NumCells; i++ {
		x[i] = 5000 + 500*src.CellZ[i]/a // deeper in the north
	}
	for e := 0; e < src.NumEdges; e++ {
		x[src.NumCells+e] = wind(src, e)
	}
	y := make([]float64, dst.NumCells+dst.NumEdges)
	r.Apply(y, x)

	m0, m1 := mass(src, x[:src.NumCells]), mass(dst, y[:dst.NumCells])
	fmt.Println("mass kept to 1e-13:", math.Abs(m1-m0) <= 1e-13*m0)
	worst := 0.0
	for e := 0; e < dst.NumEdges; e++ {
		worst = max(worst, math.Abs(y[dst.NumCells+e]-wind(dst, e)))
	}
	fmt.Println("solid-body wind kept to 1e-12 m/s:", worst <= 1e-12)

	// Another radius is another sphere.
	small, _ := mesh.New(mesh.Spec{Kind: mesh.Icosahedral, N: 5, Radius: 1e6})
	_, err = remap.New(src, small)
	fmt.Println(err)
	// Output:
	// mass kept to 1e-13: true
	// solid-body wind kept to 1e-12 m/s: true
	// remap: the source icosahedral n=4 is a sphere of radius 6371220 m but the destination icosahedral n=5 one of radius 1000000 m; a remap needs the same sphere (physics.radius)
}
