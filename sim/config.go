package sim

import (
	"fmt"
	"maps"
	"math"
	"strings"

	"gyrebench/sim/cases"
	"gyrebench/sim/dissip"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scheme"
	"gyrebench/sim/step"
)

// Config is a fully resolved scenario. Its sections and keys are the
// scenario file's (design contract): grid, physics, scheme, time, initial,
// output.
type Config struct {
	Title   string
	Grid    GridConfig
	Physics PhysicsConfig
	Scheme  SchemeConfig
	Time    TimeConfig
	Initial InitialConfig
	Output  OutputConfig
}

// GridConfig chooses the mesh.
type GridConfig struct {
	Kind   string  // quad, hex, tri, icosahedral
	N      int     // cells per side (plane) or refinement level (sphere)
	Length float64 // plane: domain width in x, m
	// Height is the plane's domain height, m; 0 means the family's natural
	// height (the width for quad, √3/2 of it for hex and tri).
	Height float64
	// Optimize is "none" or "lloyd" (centroidal relaxation), icosahedral
	// only; "" means none.
	Optimize string
}

// PhysicsConfig holds the physical constants.
type PhysicsConfig struct {
	G      float64 // m s⁻²
	F0     float64 // s⁻¹, plane
	Beta   float64 // m⁻¹ s⁻¹, plane
	Depth  float64 // mean depth, m
	Radius float64 // sphere, m
	Omega  float64 // sphere, s⁻¹
}

// SchemeConfig chooses the spatial discretisation.
type SchemeConfig struct {
	Name       string
	APVMFactor float64 // c of apvm; 0 = default 1/2
	// Explicit dissipation added to ∂u/∂t after the scheme (package
	// dissip); all zero by default, which changes nothing.
	Viscosity         float64 // ν₂, m² s⁻¹
	Hyperviscosity    float64 // ν₄, m⁴ s⁻¹
	DivergenceDamping float64 // ν_δ, m² s⁻¹
}

// Dissipation returns the dissipation coefficients of the scheme section.
func (s SchemeConfig) Dissipation() dissip.Coefficients {
	return dissip.Coefficients{Viscosity: s.Viscosity, Hyperviscosity: s.Hyperviscosity, DivergenceDamping: s.DivergenceDamping}
}

// TimeConfig chooses the integrator and the time span.
type TimeConfig struct {
	Integrator string
	Dt         float64 // s
	Duration   float64 // s
	Asselin    float64 // leapfrog filter; 0 = default
}

// InitialConfig chooses the initial condition and its parameters.
type InitialConfig struct {
	Case   string
	Params map[string]float64
}

// OutputConfig chooses what is recorded.
type OutputConfig struct {
	Every     float64 // s between series rows (and snapshots)
	Snapshots bool
}

// DefaultConfig returns the defaults every scenario starts from: a hex
// f-plane of 64 × 64 cells over 1000 km, 1000 m deep.
func DefaultConfig() Config {
	return Config{
		Title:   "untitled",
		Grid:    GridConfig{Kind: string(mesh.Hex), N: 64, Length: 1e6},
		Physics: PhysicsConfig{G: 9.80616, F0: 1e-4, Depth: 1000, Radius: 6.37122e6, Omega: 7.292e-5},
		Scheme:  SchemeConfig{Name: scheme.TRiSKEnergy},
		Time:    TimeConfig{Integrator: step.RK3, Dt: 60, Duration: 86400},
		Initial: InitialConfig{Case: "gaussian-bump", Params: map[string]float64{}},
		Output:  OutputConfig{Every: 3600},
	}
}

// Clone returns a copy of c that shares nothing with it: the case
// parameters are the only field held by reference.
func (c Config) Clone() Config {
	c.Initial.Params = maps.Clone(c.Initial.Params)
	return c
}

// MeshSpec returns the mesh the config asks for.
func (c *Config) MeshSpec() mesh.Spec {
	return mesh.Spec{Kind: mesh.Kind(c.Grid.Kind), N: c.Grid.N, Length: c.Grid.Length, Height: c.Grid.Height, Radius: c.Physics.Radius, Optimize: c.Grid.Optimize}
}

func positive(name string, v float64) error {
	if !(v > 0) || math.IsInf(v, 0) {
		return fmt.Errorf("%s = %g: must be a positive finite number", name, v)
	}
	return nil
}

func finite(name string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%s = %g: must be a finite number", name, v)
	}
	return nil
}

// Validate checks every field without building anything large. Its errors
// name the field, the value and what is allowed.
func (c *Config) Validate() error {
	if _, err := c.MeshSpec().Cells(); err != nil {
		return err
	}
	p := c.Physics
	for _, chk := range []error{
		positive("physics.g", p.G), positive("physics.depth", p.Depth),
		finite("physics.f0", p.F0), finite("physics.beta", p.Beta),
		positive("physics.radius", p.Radius), finite("physics.omega", p.Omega),
		positive("time.dt", c.Time.Dt), positive("time.duration", c.Time.Duration),
		positive("output.every", c.Output.Every), finite("scheme.apvm_factor", c.Scheme.APVMFactor),
	} {
		if chk != nil {
			return chk
		}
	}
	if !contains(scheme.Names, c.Scheme.Name) {
		return fmt.Errorf("scheme.name = %q: unknown; allowed: %s", c.Scheme.Name, strings.Join(scheme.Names, ", "))
	}
	if scheme.SquareOnly(c.Scheme.Name) && c.Grid.Kind != string(mesh.Quad) {
		return fmt.Errorf("scheme.name = %q is available on grid.kind = \"quad\" only; on %q use one of: %s",
			c.Scheme.Name, c.Grid.Kind, strings.Join(scheme.Anywhere(), ", "))
	}
	if err := c.Scheme.Dissipation().Validate(); err != nil {
		return err
	}
	if c.Scheme.APVMFactor < 0 {
		return fmt.Errorf("scheme.apvm_factor = %g: must be ≥ 0", c.Scheme.APVMFactor)
	}
	if _, err := step.New(c.Time.Integrator, 0, step.Options{Asselin: c.Time.Asselin}); err != nil {
		return err
	}
	if c.Time.Duration/c.Time.Dt > 1e9 {
		return fmt.Errorf("time.duration / time.dt = %g steps: at most 1e9 steps are allowed", c.Time.Duration/c.Time.Dt)
	}
	cs, err := cases.Lookup(c.Initial.Case)
	if err != nil {
		return err
	}
	if cs.Sphere != (c.Grid.Kind == string(mesh.Icosahedral)) {
		surf := "plane (quad, hex, tri)"
		if cs.Sphere {
			surf = "sphere (icosahedral)"
		}
		return fmt.Errorf("initial.case = %q runs on the %s; grid.kind = %q does not", c.Initial.Case, surf, c.Grid.Kind)
	}
	if _, err := cs.Resolve(c.Initial.Params); err != nil {
		return err
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
