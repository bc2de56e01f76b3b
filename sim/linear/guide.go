package linear

import (
	"math"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/step"
)

// GuideSlack: the guide departs from the prediction only when it is
// lower by more than this fraction, so that one number is shown.
const GuideSlack = 0.05

// Guide is what the linear analysis predicts of a live run's Δt.
type Guide struct {
	// Limits is the largest stable Δt of each integrator, bound / max|λ|
	// (step.ImaginaryAxisLimit), or the analysis's own where it has one
	// (with the dissipation's real parts); 0: no Δt is stable.
	Limits   map[string]float64
	DtStable float64 // Limits of cfg's integrator
	// Guide is DtStable scaled by Scale = √(gH) / (√(g h_max) + |u|_max):
	// the fastest waves of a flow deeper than the analysed rest state, or
	// moving, are faster than those of that rest state (the
	// Doppler-shifted gravity-wave speed, common practice). Never above
	// DtStable.
	Guide     float64
	Scale     float64
	WaveSpeed float64 // √(g h_max) + |u|_max, m/s
}

// NewGuide makes the guide of config cfg from the spectral radius rho
// (max|λ|, s⁻¹) and the analysis's limits, for a state whose largest
// depth is hMax and largest speed maxSpeed.
func NewGuide(cfg sim.Config, rho float64, limits map[string]float64, hMax, maxSpeed float64) Guide {
	g := Guide{Limits: map[string]float64{}, Scale: 1}
	for _, name := range step.Names {
		g.Limits[name] = step.ImaginaryAxisLimit(name, step.Options{Asselin: cfg.Time.Asselin}) / rho
		if l, ok := limits[name]; ok {
			g.Limits[name] = l
		}
	}
	g.DtStable = g.Limits[cfg.Time.Integrator]
	g.WaveSpeed = math.Sqrt(cfg.Physics.G*math.Max(hMax, 0)) + maxSpeed
	if c := math.Sqrt(cfg.Physics.G * cfg.Physics.Depth); g.WaveSpeed > c && !math.IsInf(g.WaveSpeed, 0) {
		g.Scale = c / g.WaveSpeed
	}
	if g.Scale > 1-GuideSlack {
		g.Scale = 1
	}
	g.Guide = g.DtStable * g.Scale
	return g
}

// dispersionN is the largest resolution of each family analysed densely
// for a dispersion diagram: each is 576–768 unknowns, about half a second
// (Analyse's cost note); the cubed sphere's 216 cells are 648.
func dispersionN(kind mesh.Kind) int {
	switch kind {
	case mesh.Quad:
		return 16
	case mesh.Hex, mesh.Tri:
		return 12
	case mesh.Icosahedral:
		return 2
	case mesh.Cubed:
		return 6
	}
	return 0
}

// DispersionCopy is the config whose dense analysis gives the dispersion
// diagram of cfg: its grid family at a resolution of at most the dense
// bound, with cfg's cell size on the plane (so that its wavenumbers reach
// the grid scale), a coarse level on the sphere. copied says whether it is
// smaller than cfg's grid.
func DispersionCopy(cfg sim.Config) (c sim.Config, copied bool) {
	c = cfg
	n := dispersionN(mesh.Kind(cfg.Grid.Kind))
	if n == 0 || cfg.Grid.N <= n {
		return c, false
	}
	c.Grid.N = n
	if !mesh.Kind(cfg.Grid.Kind).OnSphere() {
		s := float64(n) / float64(cfg.Grid.N)
		c.Grid.Length *= s
		c.Grid.Height *= s // 0, the natural height, stays 0
	}
	return c, true
}
