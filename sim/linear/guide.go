package linear

import (
	"fmt"
	"math"
	"strconv"

	"gyrebench/sim"
	"gyrebench/sim/dissip"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scheme"
	"gyrebench/sim/step"
)

// Key is what the spectrum of a config's linearised operator depends on:
// the grid, the physics, the scheme with its Hodge star, APVM factor and
// dissipation, and Δt for apvm alone, whose PV upwinding scales with it.
// Equal keys have equal spectra, so a cache of analyses goes by it.
type Key struct {
	grid    sim.GridConfig
	physics sim.PhysicsConfig
	scheme  string
	hodge   string
	apvm    float64
	dt      float64 // apvm only
	dissip  dissip.Coefficients
}

// KeyOf returns the key of cfg's spectrum.
func KeyOf(cfg sim.Config) Key {
	hodge := cfg.Scheme.Hodge
	if hodge == "" {
		hodge = scheme.HodgeConsistent
	}
	k := Key{grid: cfg.Grid, physics: cfg.Physics, scheme: cfg.Scheme.Name, hodge: hodge, apvm: cfg.Scheme.APVMFactor, dissip: cfg.Scheme.Dissipation()}
	if cfg.Scheme.Name == scheme.APVM {
		k.dt = cfg.Time.Dt
	}
	return k
}

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

// Warning is what a live run says when its Δt, dtMax at the most, is
// past the guide (or its integrator is unstable for every Δt), or "".
func (g Guide) Warning(cfg sim.Config, dtMax float64) string {
	dt, in := cfg.Time.Dt, cfg.Time.Integrator
	switch {
	case g.DtStable == 0:
		return fmt.Sprintf("time.integrator = %q is unstable for every Δt on oscillatory modes (its stability region misses the imaginary axis): expect the run to grow and blow up", in)
	case dt > g.Guide:
		text := fmt.Sprintf("Δt = %s s is above the largest stable Δt predicted for %s on this grid, %s s", strconv.FormatFloat(dt, 'g', -1, 64), in, Sig4(g.Guide))
		if g.Scale < 1-GuideSlack {
			text += fmt.Sprintf(" (%s s about rest at depth %g m, scaled by %.2f for this flow's depth and speed)", Sig4(g.DtStable), cfg.Physics.Depth, g.Scale)
		}
		return text + fmt.Sprintf(": expect the run to blow up. Allowed up to %s s.", Sig4(dtMax))
	}
	return ""
}

// Sig4 writes x rounded to four significant digits without an exponent,
// for times in messages: 574.8, 10320.
func Sig4(x float64) string {
	if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	e := int(math.Floor(math.Log10(math.Abs(x))))
	p := math.Pow(10, float64(e-3))
	return strconv.FormatFloat(math.Round(x/p)*p, 'f', max(0, 3-e), 64)
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

// CourantAtLimit is the gravity-wave Courant number the state would have
// at DtStable, from its Courant number courant at Δt dt.
func (g Guide) CourantAtLimit(courant, dt float64) float64 {
	if !(dt > 0) {
		return math.NaN()
	}
	return courant * g.DtStable / dt
}

// DiagramClasses are the classes of a Diagram, in the order its Class
// indices name them.
func DiagramClasses() []Class { return []Class{InertiaGravity, Geostrophic, Rossby, Spurious} }

// Diagram is the dispersion diagram of a dense analysis: one (|k|, |ω|,
// class) per mode. Modes come in pairs ±ω; only ω ≥ 0 is kept, and every
// zero-frequency (geostrophic) mode once.
type Diagram struct {
	Sphere       bool      `json:"sphere"`
	Cells        int       `json:"cells"`
	Unknowns     int       `json:"unknowns"`
	Dx           float64   `json:"dx"` // cell size on the plane, m; 0 on the sphere
	F            float64   `json:"f"`  // f0 on the plane, 2Ω on the sphere
	G            float64   `json:"g"`
	Depth        float64   `json:"depth"`
	Counts       Counts    `json:"counts"`
	Growing      int       `json:"growing"`
	MaxFrequency float64   `json:"max_frequency"`
	Method       string    `json:"method"`
	Seconds      float64   `json:"seconds"`
	Classes      []string  `json:"classes"`
	K            []float64 `json:"k"`     // |k|, rad m⁻¹ (plane only)
	W            []float64 `json:"w"`     // |ω|, rad s⁻¹
	Class        []int     `json:"class"` // index into Classes
}

// NewDiagram makes the diagram of res, the dense analysis of config c.
func NewDiagram(c sim.Config, res *Result) Diagram {
	d := Diagram{Sphere: res.Sphere, Cells: res.Cells, Unknowns: res.Unknowns, F: c.Physics.F0, G: c.Physics.G, Depth: c.Physics.Depth,
		Counts: res.Counts, Growing: res.Growing, MaxFrequency: res.MaxFrequency, Method: res.Method, Seconds: res.WallSeconds}
	if d.Sphere {
		d.F = 2 * c.Physics.Omega
	} else {
		d.Dx = c.Grid.Length / float64(c.Grid.N)
	}
	classes := DiagramClasses()
	for _, cl := range classes {
		d.Classes = append(d.Classes, string(cl))
	}
	for _, m := range res.Modes {
		if m.Frequency < 0 && m.Class != Geostrophic {
			continue
		}
		ci := 0
		for i, cl := range classes {
			if m.Class == cl {
				ci = i
			}
		}
		if !d.Sphere {
			d.K = append(d.K, math.Hypot(m.Kx, m.Ky))
		}
		d.W = append(d.W, math.Abs(m.Frequency))
		d.Class = append(d.Class, ci)
	}
	return d
}
