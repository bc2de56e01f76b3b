package linear

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"gyrebench/sim"
	"gyrebench/sim/step"
)

// Empirical stability check (VerifyDt).
const (
	// VerifySteps is the length of a check run. At 1.1 times the limit the
	// fastest mode grows per step by |R(1.1·i·bound)|: 1.109 for rk3,
	// 1.91 for rk4 and 1.49 for filtered leapfrog (ν = 0.05), so 500 steps
	// amplify it by more than 10²², far past BlowUpFactor; below the limit
	// nothing grows.
	VerifySteps = 500
	// BlowUpFactor: a run "blew up" when the energy norm of its
	// perturbation (EnergyWeights) grows by more than this factor, when a
	// value becomes non-finite, or when a depth becomes non-positive.
	BlowUpFactor = 1e3
	// VerifyAmplitude: the perturbation of rest is VerifyAmplitude·H in
	// depth and VerifyAmplitude·√(gH) in velocity, random per unknown, so
	// that the run is linear: the quadratic terms are 10⁻⁶ of the linear
	// ones until the growth has passed BlowUpFactor.
	VerifyAmplitude = 1e-6
)

// Trial is one empirical stability run.
type Trial struct {
	Integrator string  `json:"integrator"`
	Factor     float64 `json:"factor"` // Dt / predicted limit
	Dt         float64 `json:"dt_s"`
	Steps      int     `json:"steps"`  // steps taken (fewer when it blew up)
	Growth     float64 `json:"growth"` // final (or first bad) perturbation energy norm / initial
	BlewUp     bool    `json:"blew_up"`
	Reason     string  `json:"reason,omitempty"`
}

// VerifyDt runs the nonlinear scheme of cfg with the named integrator and
// time step dt for VerifySteps steps from rest plus a small random
// perturbation (seeded, so reproducible), and reports whether it blew up.
func VerifyDt(ctx context.Context, cfg sim.Config, integrator string, dt float64) (Trial, error) {
	tr := Trial{Integrator: integrator, Dt: dt}
	if !(dt > 0) || math.IsInf(dt, 0) {
		return tr, fmt.Errorf("time.dt = %g: must be a positive finite number", dt)
	}
	cfg.Time.Dt = dt
	op, err := NewOperator(cfg)
	if err != nil {
		return tr, err
	}
	defer op.Close()
	n := op.Len()
	in, err := step.New(integrator, n, step.Options{Asselin: cfg.Time.Asselin})
	if err != nil {
		return tr, err
	}
	rng := rand.New(rand.NewPCG(0x7665, 0x7269))
	x := op.Rest()
	c := math.Sqrt(cfg.Physics.G * cfg.Physics.Depth)
	for k := range x {
		if k < op.nc {
			x[k] += VerifyAmplitude * cfg.Physics.Depth * rng.NormFloat64()
		} else {
			x[k] = VerifyAmplitude * c * rng.NormFloat64()
		}
	}
	e0 := op.perturbationEnergy(x)
	tend := op.Tendency
	for s := 1; s <= VerifySteps; s++ {
		if s%50 == 0 {
			if err := ctx.Err(); err != nil {
				return tr, err
			}
		}
		in.Step(tend, x, dt)
		tr.Steps = s
		bad := ""
		for k, v := range x {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				bad = "non-finite value"
				break
			}
			if k < op.nc && v <= 0 {
				bad = "non-positive depth"
				break
			}
		}
		tr.Growth = math.Sqrt(op.perturbationEnergy(x) / e0)
		if bad == "" && tr.Growth > BlowUpFactor {
			bad = fmt.Sprintf("perturbation grew by more than %g", BlowUpFactor)
		}
		if bad != "" {
			tr.BlewUp, tr.Reason = true, bad
			return tr, nil
		}
	}
	return tr, nil
}

// perturbationEnergy returns ½ Σ w (x − x₀)², the energy of the
// perturbation in the norm of EnergyWeights.
func (op *Operator) perturbationEnergy(x []float64) float64 {
	s := 0.0
	for k, v := range x {
		d := (v - op.rest[k]) * op.wsqrt[k]
		s += d * d
	}
	return s / 2
}

// MaxFrequency returns max|λ| of the linearised operator of cfg: exact
// dense eigenvalues for small grids, Lanczos (or Arnoldi for an operator
// that is not antisymmetric in the energy norm) otherwise. It is O(n) in
// memory and O(n) per iteration.
func MaxFrequency(ctx context.Context, cfg sim.Config) (float64, error) {
	res, err := Analyse(ctx, cfg, Options{ExtremeOnly: true})
	if err != nil {
		return 0, err
	}
	return res.SpectralRadius, nil
}

// StableDt returns the largest stable Δt of the named integrator for cfg:
// the extreme analysis's limit (Analyse with ExtremeOnly), which is
// bound / max|λ| with the imaginary-axis bound of step.ImaginaryAxisLimit
// (for leapfrog the Robert–Asselin filter of cfg.Time.Asselin is taken
// into account) and, with explicit dissipation, also the damping rate's
// own bound on the negative real axis (limits). It returns 0 for euler,
// which is unstable for every Δt. Nothing is cached.
func StableDt(ctx context.Context, cfg sim.Config, integrator string) (float64, error) {
	if _, err := validated(cfg); err != nil {
		return 0, err
	}
	if _, err := step.New(integrator, 0, step.Options{Asselin: cfg.Time.Asselin}); err != nil {
		return 0, err
	}
	res, err := Analyse(ctx, cfg, Options{ExtremeOnly: true})
	if err != nil {
		return 0, err
	}
	for _, l := range res.Limits {
		if l.Integrator == integrator {
			return l.MaxDt, nil
		}
	}
	return 0, nil
}
