package diag_test

import (
	"math"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/diag"
	"gyrebench/sim/ops"
	"gyrebench/sim/scheme"
)

// The energy of the diagnostics is the one trisk-energy conserves: with
// the general Hodge star of a jittered grid it is ½ Σ h_e v_e (H v)_e +
// potential, and a short rk4 run keeps it to the integrator's error
// (O(Δt⁴)), while the same states measured with the diagonal formula
// drift by orders of magnitude more; and conversely for the diagonal
// choice.
func TestEnergyFollowsTheHodgeStar(t *testing.T) {
	for _, hodge := range scheme.HodgeNames {
		cfg := sim.DefaultConfig()
		cfg.Grid.Kind, cfg.Grid.N, cfg.Grid.Jitter, cfg.Grid.Seed = "hex", 12, 0.2, 2
		cfg.Scheme.Hodge, cfg.Time.Integrator, cfg.Time.Dt = hodge, "rk4", 20
		cfg.Initial.Case = "gaussian-bump"
		m, err := sim.NewModel(cfg, 1)
		if err != nil {
			t.Fatal(err)
		}
		other := scheme.HodgeDiagonal
		if hodge == scheme.HodgeDiagonal {
			other = scheme.HodgeConsistent
		}
		g, err := sim.HodgeGrid(m.Mesh(), other)
		if err != nil {
			t.Fatal(err)
		}
		wrong := diag.New(g, cfg.Physics.G, m.Coriolis(), m.Bottom())
		right := m.Diagnostics()
		kinetic := func(c *diag.Calculator, gr ops.Grid) float64 { // E minus its potential part
			x := m.State()
			p := 0.0
			for i := 0; i < gr.NumCells; i++ {
				p += gr.CellArea[i] * cfg.Physics.G * 0.5 * x[i] * x[i]
			}
			return c.Compute(x, cfg.Time.Dt).Energy - p
		}
		k0, w0 := kinetic(right, m.Grid()), kinetic(wrong, g)
		e0 := right.Compute(m.State(), cfg.Time.Dt).Energy
		for i := 0; i < 30; i++ {
			if err := m.Step(); err != nil {
				t.Fatal(err)
			}
		}
		e1 := right.Compute(m.State(), cfg.Time.Dt).Energy
		k1, w1 := kinetic(right, m.Grid()), kinetic(wrong, g)
		drift := math.Abs(e1-e0) / math.Abs(k1-k0) // against the exchange of energy in the run
		wdrift := math.Abs((e1-k1+w1)-(e0-k0+w0)) / math.Abs(k1-k0)
		if drift > 1e-6 || wdrift < 1e2*drift {
			t.Errorf("%s: energy change %.3g of the kinetic exchange; measured with the other Hodge star %.3g", hodge, drift, wdrift)
		}
		t.Logf("%s: energy change %.3g of the kinetic exchange; with the other Hodge star %.3g", hodge, drift, wdrift)
		m.Close()
	}
}
