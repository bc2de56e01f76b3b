package sim_test

import (
	"math"
	"testing"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/diag"
	"gyrebench/sim/dissip"
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
	"gyrebench/sim/scenario"
	"gyrebench/sim/scheme"
	"gyrebench/sim/step"
)

// builtin returns a built-in scenario, coarsened for a quick test.
func builtin(t *testing.T, name string, n int) sim.Config {
	t.Helper()
	src, err := scenarios.Source(name)
	if err != nil {
		t.Fatal(err)
	}
	sc, err := scenario.Parse(src, name)
	if err != nil {
		t.Fatal(err)
	}
	c := sc.Config
	c.Grid.N = n
	return c
}

func newModel(t *testing.T, c sim.Config) *sim.Model {
	t.Helper()
	m, err := sim.NewModel(c, 2)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(m.Close)
	return m
}

// With every coefficient zero the tendency the integrator sees is the
// scheme's own, bit for bit.
func TestZeroDissipationTendencyIsTheScheme(t *testing.T) {
	c := builtin(t, "shear-rollup", 16)
	m := newModel(t, c)
	msh := m.Mesh()
	g := ops.Grid{Topology: &msh.Topology, Metric: &msh.Metric}
	pool := par.New(1)
	defer pool.Close()
	s, err := scheme.New(c.Scheme.Name, g, scheme.Physics{G: c.Physics.G, FVertex: m.Coriolis(), Bottom: m.Bottom()}, pool, scheme.Options{})
	if err != nil {
		t.Fatal(err)
	}
	s.SetDt(c.Time.Dt)
	want := make([]float64, len(m.State()))
	got := make([]float64, len(m.State()))
	s.Tendency(want, m.State())
	m.Tendency(got)
	for k := range want {
		if math.Float64bits(got[k]) != math.Float64bits(want[k]) {
			t.Fatalf("element %d: model tendency %v, scheme tendency %v", k, got[k], want[k])
		}
	}
}

// With dissipation on, rk3 leaves its fused stage path (which has no place
// for the extra term) and must give, bit for bit, the plain rk3 step of
// the scheme's tendency plus D(u) on ∂u/∂t only; mass stays exact.
func TestDissipationStepIsUnfusedRK3(t *testing.T) {
	for _, coef := range []dissip.Coefficients{{Viscosity: 2e4}, {Hyperviscosity: 1e14}, {DivergenceDamping: 1e5}, {Viscosity: 1e3, Hyperviscosity: 1e13, DivergenceDamping: 1e4}} {
		c := builtin(t, "shear-rollup", 16)
		c.Scheme.Viscosity, c.Scheme.Hyperviscosity, c.Scheme.DivergenceDamping = coef.Viscosity, coef.Hyperviscosity, coef.DivergenceDamping
		m := newModel(t, c)
		msh := m.Mesh()
		nc := msh.NumCells
		g := ops.Grid{Topology: &msh.Topology, Metric: &msh.Metric}
		pool := par.New(1)
		s, err := scheme.New(c.Scheme.Name, g, scheme.Physics{G: c.Physics.G, FVertex: m.Coriolis()}, pool, scheme.Options{})
		if err != nil {
			t.Fatal(err)
		}
		d, err := dissip.New(g, g.DiagonalHodge(), coef, nil)
		if err != nil {
			t.Fatal(err)
		}
		x := append([]float64(nil), m.State()...)
		rk3, _ := step.New(step.RK3, len(x), step.Options{})
		tend := func(dst, x []float64) {
			s.Tendency(dst, x)
			d.Add(dst[nc:], x[nc:])
		}
		mass0 := m.Invariants().Mass
		for range 5 {
			rk3.Step(tend, x, c.Time.Dt)
			if err := m.Step(); err != nil {
				t.Fatal(err)
			}
		}
		pool.Close()
		for k := range x {
			if math.Float64bits(x[k]) != math.Float64bits(m.State()[k]) {
				t.Fatalf("%+v: element %d: model %v, plain rk3 %v", coef, k, m.State()[k], x[k])
			}
		}
		if drift := diag.RelDrift(m.Invariants().Mass, mass0); math.Abs(drift) > 1e-14 {
			t.Errorf("%+v: mass drift %g after 5 steps, want ≤ 1e-14", coef, drift)
		}
	}
}

// With trisk-energy and ν₂ or ν₄ > 0, the scheme's term of dE/dt is
// round-off and the dissipation's is negative at every output time, on
// the dipole and the shear layer; mass stays exact.
func TestEnergyBudgetSplit(t *testing.T) {
	if testing.Short() {
		t.Skip("long and serial; runs in the full suite")
	}
	for _, tc := range []struct {
		scenario string
		n        int
		viscous  bool
	}{
		{"dipole", 32, false}, {"dipole", 32, true}, {"shear-rollup", 32, false}, {"shear-rollup", 32, true},
	} {
		c := builtin(t, tc.scenario, tc.n)
		c.Scheme.Name = scheme.TRiSKEnergy
		probe := newModel(t, c)
		gs := probe.GridScale()
		if tc.viscous {
			c.Scheme.Viscosity = gs.ViscosityFor(6 * 3600)
		} else {
			c.Scheme.Hyperviscosity = gs.HyperviscosityFor(6 * 3600)
		}
		m := newModel(t, c)
		mass0 := m.Invariants().Mass
		var ledger dissip.Ledger
		for out := 0; out <= 8; out++ {
			r := m.Rates()
			inv := m.Invariants()
			row := ledger.Record(m.Time(), inv.Energy, inv.PotentialEnstrophy, r)
			if math.Abs(r.EnergyScheme) > 1e-13*r.EnergyScale {
				t.Errorf("%s viscous=%v t=%g: scheme dE/dt = %g, Σ|terms| = %g: not round-off", tc.scenario, tc.viscous, m.Time(), r.EnergyScheme, r.EnergyScale)
			}
			if !(r.EnergyDissipation < 0) {
				t.Errorf("%s viscous=%v t=%g: dissipation dE/dt = %g, want < 0", tc.scenario, tc.viscous, m.Time(), r.EnergyDissipation)
			}
			if out == 8 {
				t.Logf("%s %s: t=%gs dE/dt scheme %.3g (Σ|·| %.3g), dissipation %.3g, residual %.3g; dZ/dt scheme %.3g, dissipation %.3g, residual %.3g",
					tc.scenario, c.Scheme.Dissipation(), m.Time(), row.EnergyScheme, r.EnergyScale, row.EnergyDissipation, row.EnergyResidual,
					row.EnstrophyScheme, row.EnstrophyDissipation, row.EnstrophyResidual)
			}
			for k := range int(3600 / c.Time.Dt) {
				if err := m.Step(); err != nil {
					t.Fatal(err)
				}
				if k%4 == 3 {
					ledger.Sample(m.Time(), m.Rates())
				}
			}
		}
		if drift := diag.RelDrift(m.Invariants().Mass, mass0); math.Abs(drift) > 1e-13 {
			t.Errorf("%s: mass drift %g, want round-off", tc.scenario, drift)
		}
	}
}
