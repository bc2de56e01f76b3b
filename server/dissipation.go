package server

import (
	"bytes"
	"encoding/json"
	"math"

	"gyrebench/sim/dissip"
)

// dissipationValue is the value of a set-dissipation command: any of the
// three coefficients, each a number or a string holding one (as typed in
// a text field); a coefficient left out keeps its current value.
type dissipationValue struct {
	Viscosity         json.RawMessage `json:"viscosity"`
	Hyperviscosity    json.RawMessage `json:"hyperviscosity"`
	DivergenceDamping json.RawMessage `json:"divergence_damping"`
}

// setDissipation changes the explicit dissipation mid-run, with a marker
// on the plot like a scheme or Δt change.
func (r *Run) setDissipation(raw json.RawMessage) error {
	var v dissipationValue
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&v); err != nil {
		return refuse("dissipation", shown(raw), "dissipation = %s: want {\"viscosity\": m² s⁻¹, \"hyperviscosity\": m⁴ s⁻¹, \"divergence_damping\": m² s⁻¹}, each a number ≥ 0 and any of them left out to keep it", shown(raw))
	}
	c := r.m.Dissipation()
	for _, f := range []struct {
		key string
		raw json.RawMessage
		dst *float64
	}{
		{"scheme.viscosity", v.Viscosity, &c.Viscosity},
		{"scheme.hyperviscosity", v.Hyperviscosity, &c.Hyperviscosity},
		{"scheme.divergence_damping", v.DivergenceDamping, &c.DivergenceDamping},
	} {
		if len(f.raw) == 0 {
			continue
		}
		x, ce := parseNumber(f.raw, f.key, "a finite number ≥ 0")
		if ce != nil {
			return ce
		}
		*f.dst = x
	}
	if err := c.Validate(); err != nil {
		return refuseErr("dissipation", shown(raw), err)
	}
	if c == r.m.Dissipation() {
		return nil
	}
	label := "dissipation: off"
	if s := c.String(); s != "" {
		label = "dissipation: " + s
	}
	return r.change("dissipation", label, func() error {
		if err := r.m.SetDissipation(c); err != nil {
			return refuseErr("dissipation", shown(raw), err)
		}
		return nil
	})
}

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

func (r *Run) dissipationInfo() dissipationInfo {
	c := r.m.Dissipation()
	s := r.m.GridScale()
	tau := s.EFoldingTime(c)
	if math.IsInf(tau, 1) {
		tau = math.NaN()
	}
	return dissipationInfo{Viscosity: c.Viscosity, Hyperviscosity: c.Hyperviscosity, DivergenceDamping: c.DivergenceDamping,
		SpacingM: num(s.Spacing), Kappa2Max: num(s.Kappa2Max), EFoldingS: num(tau), Hint: s.Hint(c)}
}

// budgetRates fills a point's budget from the run's ledger (package
// dissip): interval means since the previous point.
func (r *Run) budgetRates(p *point, e, z float64) {
	b := r.budget.Record(r.m.Time(), e, z, r.m.Rates())
	p.EnergyRateScheme, p.EnergyRateDissipation, p.EnergyRateResidual = num(b.EnergyScheme), num(b.EnergyDissipation), num(b.EnergyResidual)
	p.EnstrophyRateScheme, p.EnstrophyRateDissipation, p.EnstrophyRateResidual = num(b.EnstrophyScheme), num(b.EnstrophyDissipation), num(b.EnstrophyResidual)
}

// eventDissipation is the command value of a recorded set-dissipation.
func eventDissipation(c dissip.Coefficients) json.RawMessage {
	return mustJSON(struct {
		Viscosity         float64 `json:"viscosity"`
		Hyperviscosity    float64 `json:"hyperviscosity"`
		DivergenceDamping float64 `json:"divergence_damping"`
	}{c.Viscosity, c.Hyperviscosity, c.DivergenceDamping})
}
