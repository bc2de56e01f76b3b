package cases

import (
	"fmt"
	"math"

	"gyrebench/sim/mesh"
)

// twinHills is a spherical demonstration flow of our own: two Gaussian
// depth hills at rest, one in each hemisphere and a quarter turn apart in
// longitude. Each sheds a ring of gravity waves that crosses the globe and
// meets the other's, and leaves behind a geostrophically adjusted
// anticyclone in each hemisphere (clockwise in the north, anticlockwise in
// the south, where f < 0). The mean depth is physics.depth.
func twinHills() *Case {
	return &Case{
		Name:   "twin-hills",
		Doc:    "two depth hills at rest in opposite hemispheres, unbalanced on purpose: gravity-wave rings cross the globe and leave balanced vortices",
		Sphere: true,
		Params: []Param{
			{"amplitude", 200, "hill height, m"},
			{"radius", 0.12, "Gaussian e-folding radius, as an angle in radians"},
			{"latitude", 40, "latitude of the northern hill, degrees (the other is at minus this)"},
		},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			r := prm["radius"]
			if !(r > 0 && r < math.Pi/2) {
				return fmt.Errorf("initial.radius = %g: must be an angle between 0 and π/2 radians", r)
			}
			if p.Depth+prm["amplitude"] <= 0 {
				return fmt.Errorf("initial.amplitude = %g: a hollow deeper than physics.depth = %g leaves no fluid", prm["amplitude"], p.Depth)
			}
			lat := prm["latitude"] * math.Pi / 180
			centres := [2][3]float64{
				{math.Cos(lat), 0, math.Sin(lat)},
				{0, math.Cos(lat), -math.Sin(lat)},
			}
			a := m.Surface.Radius
			for i := range h {
				x, y, z := m.CellX[i]/a, m.CellY[i]/a, m.CellZ[i]/a
				h[i] = p.Depth
				for _, c := range centres {
					// Great-circle angle between the cell centre and the hill.
					d := math.Atan2(norm3(cross3([3]float64{x, y, z}, c)), x*c[0]+y*c[1]+z*c[2])
					h[i] += prm["amplitude"] * math.Exp(-d*d/(2*r*r))
				}
			}
			for e := range u {
				u[e] = 0
			}
			return nil
		},
	}
}

func cross3(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

func norm3(a [3]float64) float64 { return math.Sqrt(a[0]*a[0] + a[1]*a[1] + a[2]*a[2]) }
