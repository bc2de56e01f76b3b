package sim

import (
	"math"
	"strings"
	"testing"

	"gyrebench/sim/diag"
	"gyrebench/sim/mesh"
)

// A mid-run switch of icosahedral level, 3 → 4 → 3, keeps the total mass
// to round-off (package remap: conservative depth remap, exact to
// summation round-off) and the run goes on; the flux-form schemes keep
// the mass between switches. The wind of Williamson et al. (1992) cases 2
// and 5 is a solid-body rotation (references.md §1.2, from memory), which
// the velocity remap reproduces exactly, so a switch at t = 0 must give the
// new grid's own initial wind to round-off.
func TestRegridSphereKeepsMass(t *testing.T) {
	for _, c := range []struct {
		name     string
		alpha    float64 // williamson-2 only
		optimize string
		u0       float64 // m/s, for the wind check
	}{
		{"williamson-5", 0, mesh.OptimizeNone, 20},
		{"williamson-2", math.Pi / 4, mesh.OptimizeLloyd, 2 * math.Pi * 6.37122e6 / (12 * 86400)},
	} {
		cfg := sphereConfig(c.name, 3, 900)
		cfg.Grid.Optimize = c.optimize
		if c.name == "williamson-2" {
			cfg.Initial.Params["alpha"] = c.alpha
		}

		// At t = 0: the remapped wind is the level-4 initial wind.
		m := mustModel(t, cfg, 1)
		fine := cfg
		fine.Grid.N = 4
		ref := mustModel(t, fine, 1)
		nm, err := m.Regrid(string(mesh.Icosahedral), 4)
		if err != nil {
			t.Fatalf("%s: regrid 3 → 4: %v", c.name, err)
		}
		t.Cleanup(nm.Close)
		du := 0.0
		for e, u := range nm.Velocity() {
			du = max(du, math.Abs(u-ref.Velocity()[e]))
		}
		if du > 1e-12*c.u0 {
			t.Errorf("%s: remapped solid-body wind differs from the level-4 initial wind by %.3g m/s", c.name, du)
		}
		e := diag.ErrorNorms(nm.Depth(), ref.Depth(), nm.Mesh().CellArea)
		t.Logf("%s: at t = 0, remapped depth against the level-4 initial depth: l1 %.2e, l2 %.2e, l∞ %.2e; wind %.2e m/s", c.name, e.L1, e.L2, e.LInf, du)

		// Mid-run: 3 → 4 → 3 with steps in between.
		runFor(t, m, 6*3600)
		mass := m.Invariants().Mass
		for _, n := range []int{4, 3} {
			nm, err := m.Regrid(string(mesh.Icosahedral), n)
			if err != nil {
				t.Fatalf("%s: regrid to level %d: %v", c.name, n, err)
			}
			t.Cleanup(nm.Close)
			if got := nm.Invariants().Mass; math.Abs(got-mass) > 1e-13*mass {
				t.Errorf("%s: regrid to level %d: mass %.17g → %.17g, relative %.2e", c.name, n, mass, got, (got-mass)/mass)
			}
			if nm.Time() != m.Time() || nm.Steps() != m.Steps() || nm.Initial() != m.Initial() {
				t.Errorf("%s: regrid to level %d: time, steps or reference invariants not carried over", c.name, n)
			}
			if s := nm.Mesh(); s.N != n || s.NumCells != 10<<(2*n)+2 || s.Surface != m.Mesh().Surface {
				t.Errorf("%s: regrid to level %d gives level %d, %d cells, surface %+v", c.name, n, s.N, s.NumCells, s.Surface)
			}
			m = nm
			runFor(t, m, 6*3600)
			if got := m.Invariants().Mass; math.Abs(got-mass) > 1e-13*mass {
				t.Errorf("%s: 6 h after the regrid to level %d: mass %.17g → %.17g", c.name, n, mass, got)
			}
			mass = m.Invariants().Mass
			if ex := m.ExactDepth(); ex != nil {
				e := diag.ErrorNorms(m.Depth(), ex, m.Mesh().CellArea)
				t.Logf("%s: level %d at t = %g h: l2 depth error %.2e", c.name, n, m.Time()/3600, e.L2)
			}
		}
		if d := diag.RelDrift(m.Invariants().Mass, m.Initial().Mass); math.Abs(d) > 1e-13 {
			t.Errorf("%s: mass drift over the run, two switches included: %.2e", c.name, d)
		}
	}
}

// RegridOptimize switches between the bisected and the Lloyd-relaxed grid
// of one level and back, keeping the mass to round-off.
func TestRegridOptimizeKeepsMass(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Grid = GridConfig{Kind: "icosahedral", N: 3}
	cfg.Initial = InitialConfig{Case: "williamson-5"}
	cfg.Time = TimeConfig{Integrator: "rk3", Dt: 900, Duration: 86400}
	m := mustModel(t, cfg, 1)
	mass := m.Invariants().Mass
	for _, opt := range []string{"lloyd", "none"} {
		nm, err := m.RegridOptimize("icosahedral", 3, opt)
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(nm.Close)
		if nm.Config().Grid.Optimize != opt {
			t.Errorf("grid.optimize = %q after switching to %q", nm.Config().Grid.Optimize, opt)
		}
		if got := nm.Invariants().Mass; math.Abs(got-mass) > 1e-13*mass {
			t.Errorf("to %s: mass %.17g → %.17g", opt, mass, got)
		}
		m = nm
		runFor(t, m, 3600)
		mass = m.Invariants().Mass
	}
	if _, err := m.RegridOptimize("hex", 16, "lloyd"); err == nil || !strings.Contains(err.Error(), "grid.optimize") {
		t.Errorf("lloyd on the plane: %v, want an error naming grid.optimize", err)
	}
}

// A mid-run switch from the icosahedral grid to the cubed sphere and back
// (icosahedral level 3 → cubed n = 12 → level 3, similar cell counts) keeps
// the total mass to round-off: the conservative remap needs convex cells
// with exact areas, not Voronoi cells. The Lloyd relaxation of the
// icosahedral run does not carry over to the cubed sphere.
func TestRegridIcosahedralCubedKeepsMass(t *testing.T) {
	cfg := sphereConfig("williamson-5", 3, 900)
	cfg.Grid.Optimize = mesh.OptimizeLloyd
	m := mustModel(t, cfg, 1)
	runFor(t, m, 6*3600)
	mass := m.Invariants().Mass
	for _, to := range []struct {
		kind     mesh.Kind
		n, nc    int
		optimize string
	}{{mesh.Cubed, 12, 864, ""}, {mesh.Icosahedral, 3, 642, ""}} {
		nm, err := m.Regrid(string(to.kind), to.n)
		if err != nil {
			t.Fatalf("regrid to %s n = %d: %v", to.kind, to.n, err)
		}
		t.Cleanup(nm.Close)
		if got := nm.Invariants().Mass; math.Abs(got-mass) > 1e-13*mass {
			t.Errorf("regrid to %s n = %d: mass %.17g → %.17g, relative %.2e", to.kind, to.n, mass, got, (got-mass)/mass)
		}
		if s := nm.Mesh(); s.Kind != to.kind || s.NumCells != to.nc || nm.Config().Grid.Optimize != to.optimize {
			t.Errorf("regrid to %s n = %d gives %s with %d cells, optimize %q", to.kind, to.n, s.Kind, s.NumCells, nm.Config().Grid.Optimize)
		}
		m = nm
		runFor(t, m, 6*3600)
		if got := m.Invariants().Mass; math.Abs(got-mass) > 1e-13*mass {
			t.Errorf("6 h after the regrid to %s: mass %.17g → %.17g", to.kind, mass, got)
		}
		mass = m.Invariants().Mass
	}
}
