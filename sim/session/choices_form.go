package session

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"gyrebench/sim"
)

// Choices are a run's choices as typed in a form; an empty one keeps the
// config's.
type Choices struct {
	Scheme, Integrator, Dt, Grid, N, Hodge string
	// The explicit dissipation coefficients (scheme.viscosity,
	// scheme.hyperviscosity, scheme.divergence_damping).
	Viscosity, Hyperviscosity, DivergenceDamping string
}

// Apply sets the choices on cfg and checks the result as a live run
// would take it; its errors name the field and what is allowed.
func (c Choices) Apply(cfg *sim.Config) error {
	if c.Scheme != "" {
		cfg.Scheme.Name = c.Scheme
	}
	if c.Integrator != "" {
		cfg.Time.Integrator = c.Integrator
	}
	if c.Dt != "" {
		dt, err := strconv.ParseFloat(strings.TrimSpace(c.Dt), 64)
		if err != nil || !(dt > 0) || math.IsInf(dt, 0) {
			return fmt.Errorf("time.dt = %q: must be a positive number of seconds", c.Dt)
		}
		cfg.Time.Dt = dt
	}
	if c.Grid != "" && c.Grid != cfg.Grid.Kind {
		if !contains(GridKinds(), c.Grid) {
			return fmt.Errorf("grid.kind = %q: not a grid the workbench offers; allowed: %s", c.Grid, strings.Join(GridKinds(), ", "))
		}
		cfg.Grid.SetKind(c.Grid)
		cfg.Grid.Height = 0
	}
	if c.Hodge != "" {
		if !contains(HodgeStars(), c.Hodge) {
			return fmt.Errorf("scheme.hodge = %q: unknown Hodge star; allowed: %s", c.Hodge, strings.Join(HodgeStars(), ", "))
		}
		cfg.Scheme.Hodge = c.Hodge
	}
	if c.N != "" {
		n, err := strconv.Atoi(strings.TrimSpace(c.N))
		if err != nil {
			return fmt.Errorf("grid.n = %q: must be a whole number", c.N)
		}
		cfg.Grid.N = n
	}
	for _, d := range []struct {
		key, unit, text string
		dst             *float64
	}{
		{"scheme.viscosity", "m² s⁻¹", c.Viscosity, &cfg.Scheme.Viscosity},
		{"scheme.hyperviscosity", "m⁴ s⁻¹", c.Hyperviscosity, &cfg.Scheme.Hyperviscosity},
		{"scheme.divergence_damping", "m² s⁻¹", c.DivergenceDamping, &cfg.Scheme.DivergenceDamping},
	} {
		if d.text == "" {
			continue
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(d.text), 64)
		if err != nil || !(v >= 0) || math.IsInf(v, 0) {
			return fmt.Errorf("%s = %q: must be a finite number ≥ 0 (%s); 0 turns it off", d.key, d.text, d.unit)
		}
		*d.dst = v
	}
	if err := cfg.Validate(); err != nil {
		return err
	}
	return CheckLiveConfig(*cfg)
}
