package sim

import (
	"math"
	"testing"

	"gyrebench/sim/diag"
)

// Williamson et al. (1992, J. Comput. Phys. 102, 211–224) cases 5 (flow
// over a mountain) and 6 (Rossby–Haurwitz wave 4) run their 15 days at
// level 5 without blowing up, with mass conserved to round-off. TRiSK's
// energy-conserving PV flux keeps the energy drift orders of magnitude
// below that of the enstrophy-conserving one, and the reverse holds for
// potential enstrophy (Ringler et al. 2010, J. Comput. Phys. 229, §5–7).
// rk4 keeps the time-stepping part of the drifts small.
func TestWilliamson5And6FifteenDays(t *testing.T) {
	if testing.Short() {
		t.Skip("long; runs in the full suite")
	}
	for _, c := range []struct {
		name string
		dt   float64
	}{{"williamson-5", 450}, {"williamson-6", 400}} {
		drift := map[string][2]float64{}
		for _, s := range []string{"trisk-energy", "trisk-enstrophy"} {
			cfg := DefaultConfig()
			cfg.Grid = GridConfig{Kind: "icosahedral", N: 5, Optimize: "lloyd"}
			cfg.Initial = InitialConfig{Case: c.name}
			cfg.Scheme.Name = s
			cfg.Time = TimeConfig{Integrator: "rk4", Dt: c.dt, Duration: 15 * 86400}
			m := mustModel(t, cfg, 2)
			runFor(t, m, cfg.Time.Duration)
			inv, ini := m.Invariants(), m.Initial()
			if d := math.Abs(diag.RelDrift(inv.Mass, ini.Mass)); d > 1e-13 {
				t.Errorf("%s %s: mass drift %.2e after 15 days", c.name, s, d)
			}
			drift[s] = [2]float64{math.Abs(diag.RelDrift(inv.Energy, ini.Energy)), math.Abs(diag.RelDrift(inv.PotentialEnstrophy, ini.PotentialEnstrophy))}
			t.Logf("%s %s, 15 days at level 5: |energy drift| %.3g, |enstrophy drift| %.3g", c.name, s, drift[s][0], drift[s][1])
		}
		e, z := drift["trisk-energy"], drift["trisk-enstrophy"]
		if !(100*e[0] < z[0]) {
			t.Errorf("%s: energy drift %.3g (trisk-energy) is not 100× below %.3g (trisk-enstrophy)", c.name, e[0], z[0])
		}
		if !(100*z[1] < e[1]) {
			t.Errorf("%s: enstrophy drift %.3g (trisk-enstrophy) is not 100× below %.3g (trisk-energy)", c.name, z[1], e[1])
		}
	}
}
