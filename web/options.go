package web

import (
	"gyrebench/scenarios"
	"gyrebench/sim/scenario"
	"gyrebench/sim/session"
)

// Labels for people; the wire names are the engine's.
var (
	schemeLabels = map[string]string{
		"trisk-energy":       "TRiSK, energy-conserving",
		"trisk-enstrophy":    "TRiSK, enstrophy-conserving",
		"apvm":               "TRiSK with anticipated PV (APVM)",
		"al81":               "Arakawa–Lamb 1981 (quad only)",
		"sadourny-energy":    "Sadourny 1975, energy-conserving (quad only)",
		"sadourny-enstrophy": "Sadourny 1975, enstrophy-conserving (quad only)",
	}
	integratorLabels = map[string]string{
		"rk3":      "Runge–Kutta, 3rd order",
		"rk4":      "Runge–Kutta, classical 4th order",
		"leapfrog": "leapfrog with Robert–Asselin filter",
		"euler":    "forward Euler",
	}
	gridLabels = map[string]string{
		"quad":        "quadrilateral",
		"hex":         "hexagonal",
		"tri":         "triangular",
		"icosahedral": "icosahedral (sphere)",
		"cubed":       "cubed sphere (equiangular)",
	}
)

func options(names []string, labels map[string]string, selected string) []Option {
	var opts []Option
	for _, n := range names {
		l, ok := labels[n]
		if !ok {
			l = n
		}
		opts = append(opts, Option{Value: n, Label: l, Title: n, Selected: n == selected})
	}
	return opts
}

// SchemeOptions is the scheme menu; each entry carries the line saying
// what the scheme conserves.
func SchemeOptions(selected string) []Option {
	opts := options(session.Schemes(), schemeLabels, selected)
	for i := range opts {
		opts[i].Note = session.Conserves(opts[i].Value)
	}
	return opts
}

// IntegratorOptions is the integrator menu.
func IntegratorOptions(selected string) []Option {
	return options(session.Integrators(), integratorLabels, selected)
}

// GridOptions is the menu of grid kinds.
func GridOptions(selected string) []Option {
	return options(session.GridKinds(), gridLabels, selected)
}

// ScenarioOptions is the menu of built-in scenarios, each with its
// description as the tooltip.
func ScenarioOptions(selected string) []Option {
	var opts []Option
	for _, name := range scenarios.Names() {
		desc := ""
		if src, err := scenarios.Source(name); err == nil {
			if sc, err := scenario.Parse(src, name); err == nil {
				desc = sc.Description
			}
		}
		opts = append(opts, Option{Value: name, Label: name, Title: desc, Selected: name == selected})
	}
	return opts
}
