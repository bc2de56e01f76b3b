package linear_test

import (
	"context"
	"fmt"

	"gyrebench/sim"
	"gyrebench/sim/linear"
)

// The largest stable time steps on the quad f-plane of 8 × 8 cells of
// 125 km, 1000 m deep: max|ω| = 2√(2gH)/d (the zone corner of the C-grid
// relation, f·cos·cos = 0 there) = 2.2407·10⁻³ s⁻¹, so rk3 allows
// √3/max|ω| = 773.0 s.
func ExampleStableDt() {
	cfg := sim.DefaultConfig()
	cfg.Grid.Kind, cfg.Grid.N = "quad", 8
	for _, in := range []string{"rk3", "rk4", "leapfrog", "euler"} {
		dt, err := linear.StableDt(context.Background(), cfg, in)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%-8s %6.1f s\n", in, dt)
	}
	// Output:
	// rk3       773.0 s
	// rk4      1262.3 s
	// leapfrog  424.5 s
	// euler       0.0 s
}

// The normal modes of the hexagonal f-plane of 8 × 8 cells: one smooth and
// one spurious balanced mode per cell (Thuburn 2008's extra branch) and
// two inertia–gravity modes per cell.
func ExampleAnalyse() {
	cfg := sim.DefaultConfig()
	cfg.Grid.Kind, cfg.Grid.N = "hex", 8
	res, err := linear.Analyse(context.Background(), cfg, linear.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	c := res.Counts
	fmt.Printf("%d unknowns: %d inertia_gravity, %d geostrophic, %d spurious, %d growing\n",
		res.Unknowns, c.InertiaGravity, c.Geostrophic, c.Spurious, res.Growing)
	// Output:
	// 256 unknowns: 128 inertia_gravity, 64 geostrophic, 64 spurious, 0 growing
}
