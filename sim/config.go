package sim

import (
	"fmt"
	"maps"
	"math"
	"slices"
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
	Kind   string  // quad, hex, tri, icosahedral, cubed
	N      int     // cells per side (plane), refinement level (icosahedral) or cells per cube edge (cubed)
	Length float64 // plane: domain width in x, m
	// Height is the plane's domain height, m; 0 means the family's natural
	// height (the width for quad, √3/2 of it for hex and tri).
	Height float64
	// Optimize is "none" or "lloyd" (centroidal relaxation), icosahedral
	// only; "" means none.
	Optimize string
	// Distort sets the smooth vertex displacement of the planar grids
	// (0 ≤ distort < 0.3, see mesh.Spec.Distort); Jitter the
	// radius of a random one as a fraction of the edge length, drawn with
	// Seed (≥ 0, default 1). Distort and Jitter are 0 on the sphere.
	Distort float64
	Jitter  float64
	Seed    int
}

// SetKind changes the grid family. The Lloyd relaxation belongs to the
// icosahedral grid: a change to another family drops it (as a mid-run
// switch does), so that a scenario written for the icosahedral grid runs
// on the cubed sphere with --set grid.kind=cubed or in a sweep over
// grid.kind. A relaxation asked for explicitly on another family is still
// refused by Validate.
func (g *GridConfig) SetKind(kind string) {
	g.Kind = kind
	if mesh.Kind(kind) != mesh.Icosahedral && g.Optimize == mesh.OptimizeLloyd {
		g.Optimize = ""
	}
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
	// Hodge is the edge Hodge star: scheme.HodgeConsistent (the default;
	// "" means it too) or scheme.HodgeDiagonal. Both are diag(l/d) on
	// grids whose dual is orthogonal.
	Hodge string
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
		Grid:    GridConfig{Kind: string(mesh.Hex), N: 64, Length: 1e6, Seed: 1},
		Physics: PhysicsConfig{G: 9.80616, F0: 1e-4, Depth: 1000, Radius: 6.37122e6, Omega: 7.292e-5},
		Scheme:  SchemeConfig{Name: scheme.TRiSKEnergy, Hodge: scheme.HodgeConsistent},
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
	return mesh.Spec{Kind: mesh.Kind(c.Grid.Kind), N: c.Grid.N, Length: c.Grid.Length, Height: c.Grid.Height, Radius: c.Physics.Radius, Optimize: c.Grid.Optimize,
		Distort: c.Grid.Distort, Jitter: c.Grid.Jitter, Seed: uint64(max(c.Grid.Seed, 0))}
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
	if c.Grid.Seed < 0 {
		return fmt.Errorf("grid.seed = %d: must be a non-negative integer", c.Grid.Seed)
	}
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
	if !slices.Contains(scheme.Names, c.Scheme.Name) {
		return fmt.Errorf("scheme.name = %q: unknown; allowed: %s", c.Scheme.Name, strings.Join(scheme.Names, ", "))
	}
	if scheme.SquareOnly(c.Scheme.Name) && c.Grid.Kind == string(mesh.Quad) && (c.Grid.Distort != 0 || c.Grid.Jitter != 0) {
		return fmt.Errorf("scheme.name = %q is written for the regular quad grid; with grid.distort = %g, grid.jitter = %g use one of: %s",
			c.Scheme.Name, c.Grid.Distort, c.Grid.Jitter, strings.Join(scheme.Anywhere(), ", "))
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
	if err := validHodge(c.Scheme.Hodge); err != nil {
		return err
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
	if cs.Sphere != mesh.Kind(c.Grid.Kind).OnSphere() {
		surf := "plane (quad, hex, tri)"
		if cs.Sphere {
			surf = "sphere (icosahedral, cubed)"
		}
		return fmt.Errorf("initial.case = %q runs on the %s; grid.kind = %q does not", c.Initial.Case, surf, c.Grid.Kind)
	}
	if _, err := cs.Resolve(c.Initial.Params); err != nil {
		return err
	}
	return nil
}
