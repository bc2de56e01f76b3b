package sim

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gyrebench/sim/diag"
	"gyrebench/sim/internal/testcheck"
)

func mustModel(t testing.TB, cfg Config, workers int) *Model {
	t.Helper()
	m, err := NewModel(cfg, workers)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(m.Close)
	return m
}

func runFor(t testing.TB, m *Model, seconds float64) {
	t.Helper()
	n := int(math.Round(seconds / m.Config().Time.Dt))
	for i := 0; i < n; i++ {
		if err := m.Step(); err != nil {
			t.Fatal(err)
		}
	}
}

// Energy error of trisk-energy over a fixed time against Δt. The
// semi-discrete system conserves energy exactly, so all of the error is the
// integrator's: for rk3 the energy change of a skew system is O(Δt³) per
// unit time (|R(iz)|² − 1 = −z⁴/12 + … from the rk3 stability polynomial,
// summed over t/Δt steps; TestEnergyChangePerStep in sim/step), so halving
// Δt must divide the error by about 8.
func TestEnergyErrorOrderInDt(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Grid = GridConfig{Kind: "quad", N: 16, Length: 1e6}
	cfg.Initial.Case = "gaussian-bump"
	cfg.Initial.Params = map[string]float64{"amplitude": 50, "width": 0.1}
	var errs []float64
	dts := []float64{200, 100, 50}
	for _, dt := range dts {
		cfg.Time.Dt = dt
		m := mustModel(t, cfg, 1)
		runFor(t, m, 8000)
		errs = append(errs, math.Abs(diag.RelDrift(m.Invariants().Energy, m.Initial().Energy)))
	}
	for k := 0; k+1 < len(errs); k++ {
		p := math.Log2(errs[k] / errs[k+1])
		t.Logf("rk3 energy error Δt=%g: %.3e, Δt=%g: %.3e, slope %.2f", dts[k], errs[k], dts[k+1], errs[k+1], p)
		if math.Abs(p-3) > 0.3 {
			t.Errorf("rk3 energy error slope %.2f between Δt = %g and %g, want 3 ± 0.3", p, dts[k], dts[k+1])
		}
	}
}

// The steady geostrophic flow is an exact nonlinear solution; the discrete
// depth error after one day measures the spatial discretisation. On these
// uniform grids TRiSK is second order (Ringler et al. 2010, J. Comput.
// Phys. 229, §7, from memory) in l2 and in l∞ alike; the test demands at
// least 1.8 in both between successive resolutions. Measured, l2 / l∞:
// quad 16 → 32 2.27 / 2.58, 32 → 64 2.04 / 1.89; hex 16 → 32 2.21 / 2.47,
// 32 → 64 2.76 / 2.81.
func TestSteadyGeostrophicConvergence(t *testing.T) {
	if testing.Short() {
		t.Skip("long; runs in the full suite")
	}
	for _, kind := range []string{"quad", "hex"} {
		var l2, linf []float64
		ns := []int{16, 32, 64}
		for _, n := range ns {
			cfg := DefaultConfig()
			cfg.Grid = GridConfig{Kind: kind, N: n, Length: 1e6}
			cfg.Initial.Case = "geostrophic-steady"
			cfg.Time.Integrator = "rk4"
			cfg.Time.Dt = 3840 / float64(n) // same Courant number
			m := mustModel(t, cfg, 1)
			runFor(t, m, 86400)
			e := diag.ErrorNorms(m.Depth(), m.ExactDepth(), m.Mesh().CellArea)
			l2, linf = append(l2, e.L2), append(linf, e.LInf)
		}
		for k := 0; k+1 < len(l2); k++ {
			p2, pInf := math.Log2(l2[k]/l2[k+1]), math.Log2(linf[k]/linf[k+1])
			t.Logf("%s n=%d → %d: l2 %.3e → %.3e, order %.2f; l∞ %.3e → %.3e, order %.2f", kind, ns[k], ns[k+1], l2[k], l2[k+1], p2, linf[k], linf[k+1], pInf)
			if p2 < 1.8 || pInf < 1.8 {
				t.Errorf("%s: observed orders l2 %.2f, l∞ %.2f between n = %d and %d, want both ≥ 1.8", kind, p2, pInf, ns[k], ns[k+1])
			}
		}
	}
}

// A Gaussian bump on a non-rotating quad grid radiates a gravity-wave ring
// whose peak moves at c = √(gH) (shallow-water wave speed, a fact of the
// trade). The peak position along the row through the centre is found at
// two times with a parabolic fit.
func TestGravityWaveSpeed(t *testing.T) {
	if testing.Short() {
		t.Skip("long; runs in the full suite")
	}
	cfg := DefaultConfig()
	n := 256
	cfg.Grid = GridConfig{Kind: "quad", N: n, Length: 2e6}
	cfg.Physics.F0 = 0
	cfg.Initial.Case = "gaussian-bump"
	cfg.Initial.Params = map[string]float64{"amplitude": 1, "width": 0.01}
	cfg.Time.Dt = 20
	m := mustModel(t, cfg, 2)
	dx := cfg.Grid.Length / float64(n)
	peak := func() float64 {
		h := m.Depth()
		row := n / 2 // cells of row n/2 have y = (n/2 + 1/2) dx; the centre is at y = n dx / 2
		best, bi := -1.0, 0
		for i := n / 2; i < n; i++ {
			// average the two rows either side of the centre line
			v := h[row*n+i] + h[(row-1)*n+i]
			if v > best {
				best, bi = v, i
			}
		}
		y0 := h[row*n+bi-1] + h[(row-1)*n+bi-1]
		y2 := h[row*n+bi+1] + h[(row-1)*n+bi+1]
		off := 0.5 * (y0 - y2) / (y0 - 2*best + y2)
		return (float64(bi) + 0.5 + off) * dx
	}
	runFor(t, m, 2000)
	r1 := peak()
	runFor(t, m, 3000)
	r2 := peak()
	c := math.Sqrt(cfg.Physics.G * cfg.Physics.Depth)
	speed := (r2 - r1) / 3000
	t.Logf("ring peak at %.0f m and %.0f m: speed %.2f m/s, √(gH) = %.2f m/s", r1, r2, speed, c)
	if math.Abs(speed-c) > 0.03*c {
		t.Errorf("gravity-wave speed %.2f m/s, want √(gH) = %.2f m/s within 3 %%", speed, c)
	}
}

func TestMassConservedAndBlowUpKeepsLastGoodState(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Grid = GridConfig{Kind: "hex", N: 16, Length: 1e6}
	cfg.Time.Integrator = "euler"
	cfg.Time.Dt = 600 // far past any stable step for forward Euler
	cfg.Initial.Params = map[string]float64{"amplitude": 100, "width": 0.1}
	m := mustModel(t, cfg, 1)
	var bu *BlowUpError
	for i := 0; i < 10000; i++ {
		before := append([]float64(nil), m.State()...)
		err := m.Step()
		if err == nil {
			if d := math.Abs(diag.RelDrift(m.Invariants().Mass, m.Initial().Mass)); d > 1e-13 {
				t.Fatalf("step %d: mass drift %g", i, d)
			}
			continue
		}
		if !errors.As(err, &bu) {
			t.Fatalf("step error %v is not a *BlowUpError", err)
		}
		for k, v := range m.State() {
			if math.Float64bits(v) != math.Float64bits(before[k]) {
				t.Fatalf("after the blow-up the state differs from the last good one at %d", k)
			}
		}
		break
	}
	if bu == nil {
		t.Fatal("forward Euler at Δt = 600 s did not blow up")
	}
	if bu.Cell < 0 && bu.Edge < 0 || !strings.Contains(bu.Error(), "step") {
		t.Errorf("blow-up report %q does not say where", bu.Error())
	}
}

func TestBitIdenticalWorkers(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Grid = GridConfig{Kind: "tri", N: 16, Length: 1e6}
	cfg.Initial.Case = "turbulence"
	var ref []float64
	for _, w := range []int{1, 2, 4} {
		m := mustModel(t, cfg, w)
		runFor(t, m, 3600)
		if ref == nil {
			ref = append([]float64(nil), m.State()...)
			continue
		}
		for k, v := range m.State() {
			if math.Float64bits(v) != math.Float64bits(ref[k]) {
				t.Fatalf("workers=%d differs at %d", w, k)
			}
		}
	}
}

func TestBadConfig(t *testing.T) {
	cases := []struct {
		name  string
		edit  func(c *Config)
		field string
	}{
		{"dt zero", func(c *Config) { c.Time.Dt = 0 }, "time.dt"},
		{"dt negative", func(c *Config) { c.Time.Dt = -5 }, "time.dt"},
		{"depth", func(c *Config) { c.Physics.Depth = 0 }, "physics.depth"},
		{"n small", func(c *Config) { c.Grid.N = 2 }, "grid.n"},
		{"n huge", func(c *Config) { c.Grid.N = 100000 }, "grid.n"},
		{"scheme", func(c *Config) { c.Scheme.Name = "magic" }, "scheme.name"},
		{"al81 on hex", func(c *Config) { c.Scheme.Name = "al81" }, "scheme.name"},
		{"integrator", func(c *Config) { c.Time.Integrator = "ab3" }, "time.integrator"},
		{"case", func(c *Config) { c.Initial.Case = "nope" }, "initial.case"},
		{"case param", func(c *Config) { c.Initial.Params = map[string]float64{"colour": 1} }, "initial.colour"},
		{"grid kind", func(c *Config) { c.Grid.Kind = "pentagon" }, "grid.kind"},
		{"nan f0", func(c *Config) { c.Physics.F0 = math.NaN() }, "physics.f0"},
	}
	for _, tc := range cases {
		cfg := DefaultConfig()
		tc.edit(&cfg)
		_, err := NewModel(cfg, 1)
		testcheck.ErrorSays(t, tc.name, err, tc.field)
	}
}

// A mid-run change of grid family or resolution keeps the total mass to
// round-off and lets the run go on.
func TestRegridKeepsMass(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Grid = GridConfig{Kind: "hex", N: 16, Length: 1e6}
	cfg.Initial.Case = "vortex-pair"
	m := mustModel(t, cfg, 1)
	runFor(t, m, 3600)
	mass := m.Invariants().Mass
	for _, to := range []struct {
		kind string
		n    int
	}{{"quad", 20}, {"tri", 12}, {"hex", 24}, {"quad", 16}} {
		nm, err := m.Regrid(to.kind, to.n)
		if err != nil {
			t.Fatalf("regrid to %s %d: %v", to.kind, to.n, err)
		}
		t.Cleanup(nm.Close)
		if got := nm.Invariants().Mass; math.Abs(got-mass) > 1e-13*mass {
			t.Errorf("regrid to %s n=%d: mass %.17g → %.17g", to.kind, to.n, mass, got)
		}
		if nm.Time() != m.Time() || nm.Initial() != m.Initial() {
			t.Errorf("regrid to %s: time or reference invariants not carried over", to.kind)
		}
		if nm.Mesh().Surface != m.Mesh().Surface {
			t.Errorf("regrid to %s: domain changed from %+v to %+v", to.kind, m.Mesh().Surface, nm.Mesh().Surface)
		}
		m = nm
		runFor(t, m, 1800)
		mass = m.Invariants().Mass
	}
	if _, err := m.Regrid("quad", 2); err == nil || !strings.Contains(err.Error(), "grid.n") {
		t.Errorf("regrid to n=2: %v", err)
	}
}

// Bottom topography: a lake at rest over a seamount stays at rest (the
// free surface h + b is flat and the pressure gradient vanishes exactly,
// since the scheme's gradient sees g(h + b)), also after a change of grid,
// because depth and bottom are remapped by the same linear conservative map.
func TestLakeAtRestOverSeamount(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Grid = GridConfig{Kind: "hex", N: 16, Length: 1e6}
	cfg.Initial = InitialConfig{Case: "seamount", Params: map[string]float64{"amplitude": 0}}
	m := mustModel(t, cfg, 1)
	check := func(m *Model, when string) {
		t.Helper()
		h, b := m.Depth(), m.Bottom()
		if b == nil {
			t.Fatalf("%s: the seamount case set no bottom", when)
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range h {
			lo, hi = min(lo, h[i]+b[i]), max(hi, h[i]+b[i])
		}
		if hi-lo > 1e-9 {
			t.Errorf("%s: free surface spans %g m, want flat", when, hi-lo)
		}
		if inv := m.Invariants(); inv.MaxSpeed > 1e-12 {
			t.Errorf("%s: max speed %g m/s, want rest", when, inv.MaxSpeed)
		}
	}
	runFor(t, m, 3600)
	check(m, "after an hour")
	nm, err := m.Regrid("tri", 12)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nm.Close)
	check(nm, "after the switch to tri")
	runFor(t, nm, 3600)
	check(nm, "an hour after the switch")
}
