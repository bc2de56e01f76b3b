package figure

import (
	"fmt"
	"strings"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
)

// Title is the figure title of a run: its scenario title, its choices and
// the simulated time, e.g.
//
//	Steady geostrophic zonal flow · hex n=64 · trisk-energy · rk4 Δt=60 s · t = 1.50 d
func Title(c sim.Config, timeS float64) string {
	grid := fmt.Sprintf("%s n=%d", c.Grid.Kind, c.Grid.N)
	if c.Grid.Kind == string(mesh.Icosahedral) {
		grid = fmt.Sprintf("icosahedral level %d", c.Grid.N)
	}
	scheme := c.Scheme.Name
	if d := c.Scheme.Dissipation().String(); d != "" {
		scheme += " + " + d
	}
	parts := []string{grid, scheme, fmt.Sprintf("%s Δt=%g s", c.Time.Integrator, c.Time.Dt), "t = " + SimTime(timeS)}
	if c.Title != "" {
		parts = append([]string{c.Title}, parts...)
	}
	return strings.Join(parts, " · ")
}

// SimTime writes a simulated time in seconds below an hour, hours below
// two days, and days beyond.
func SimTime(t float64) string {
	switch {
	case t < 3600:
		return fmt.Sprintf("%g s", t)
	case t < 2*86400:
		return fmt.Sprintf("%.2f h", t/3600)
	}
	return fmt.Sprintf("%.2f d", t/86400)
}

// PlainUnits writes units with superscript exponents as plain ones, in
// the UDUNITS style ("s⁻¹" → "s-1", "m² s⁻²" → "m2 s-2"): the figure's
// face has no superscript minus.
func PlainUnits(u string) string {
	return strings.NewReplacer("⁻", "-", "⁰", "0", "¹", "1", "²", "2", "³", "3", "⁴", "4", "⁵", "5", "⁶", "6", "⁷", "7", "⁸", "8", "⁹", "9").Replace(u)
}

// StraddlesZero says whether v has values of both signs, so that a field
// that is usually one-signed is drawn on the diverging map.
func StraddlesZero(v []float64) bool {
	neg, pos := false, false
	for _, x := range v {
		neg, pos = neg || x < 0, pos || x > 0
	}
	return neg && pos
}
