package server

import "math"

// dissipationInfo is the config message's dissipation part: the
// coefficients and what package dissip says about them on this grid.
type dissipationInfo struct {
	Viscosity         float64 `json:"viscosity"`
	Hyperviscosity    float64 `json:"hyperviscosity"`
	DivergenceDamping float64 `json:"divergence_damping"`
	SpacingM          num     `json:"spacing_m"`
	Kappa2Max         num     `json:"kappa2_max"`
	EFoldingS         num     `json:"e_folding_s"` // null without dissipation
	Hint              string  `json:"hint"`
}

func (v *view) dissipationInfo() dissipationInfo {
	m := v.s.Model()
	c := m.Dissipation()
	s := m.GridScale()
	tau := s.EFoldingTime(c)
	if math.IsInf(tau, 1) {
		tau = math.NaN()
	}
	return dissipationInfo{Viscosity: c.Viscosity, Hyperviscosity: c.Hyperviscosity, DivergenceDamping: c.DivergenceDamping,
		SpacingM: num(s.Spacing), Kappa2Max: num(s.Kappa2Max), EFoldingS: num(tau), Hint: s.Hint(c)}
}
