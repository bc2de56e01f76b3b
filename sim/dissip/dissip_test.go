package dissip

import (
	"math"
	"strings"
	"testing"

	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
)

func TestValidateNamesKeyValueAndRule(t *testing.T) {
	for _, tc := range []struct {
		c   Coefficients
		key string
	}{
		{Coefficients{Viscosity: -1}, "scheme.viscosity = -1"},
		{Coefficients{Hyperviscosity: math.Inf(1)}, "scheme.hyperviscosity = +Inf"},
		{Coefficients{DivergenceDamping: math.NaN()}, "scheme.divergence_damping = NaN"},
	} {
		err := tc.c.Validate()
		if err == nil || !strings.Contains(err.Error(), tc.key) || !strings.Contains(err.Error(), "≥ 0") {
			t.Errorf("%+v: error %v, want one naming %q and ≥ 0", tc.c, err, tc.key)
		}
	}
	if err := (Coefficients{Viscosity: 1, Hyperviscosity: 2, DivergenceDamping: 3}).Validate(); err != nil {
		t.Error(err)
	}
}

// On the uniform quad grid the largest eigenvalue of −∇² is the symbol's
// maximum (4/d²)(1 + 1) = 8/d², at k = l = π/d.
func TestGridScaleQuad(t *testing.T) {
	m, err := mesh.New(mesh.Spec{Kind: mesh.Quad, N: 16, Length: 1.6e6})
	if err != nil {
		t.Fatal(err)
	}
	g := ops.Grid{Topology: &m.Topology, Metric: &m.Metric}
	s := MeasureGridScale(g, g.DiagonalHodge(), nil)
	d := 1e5
	if want := 8 / (d * d); math.Abs(s.Kappa2Max-want) > 1e-2*want || s.Kappa2Max > want*(1+1e-12) {
		t.Errorf("κ²_max = %g, want 8/d² = %g from below to 1 %%", s.Kappa2Max, want)
	}
	c := Coefficients{Hyperviscosity: s.HyperviscosityFor(3600)}
	if tau := s.EFoldingTime(c); math.Abs(tau-3600) > 1e-9*3600 {
		t.Errorf("e-folding time of HyperviscosityFor(3600 s) = %g s", tau)
	}
	if h := s.Hint(c); !strings.Contains(h, "60 min") || !strings.Contains(h, "ν₄ = C·d⁴/τ") {
		t.Errorf("hint %q names neither the time nor the scaling", h)
	}
}

// The ledger's integrals telescope: E(t_n) − E(t_0) = ∫scheme + ∫dissipation + ∫residual.
func TestLedgerTelescopes(t *testing.T) {
	var l Ledger
	e := []float64{10, 9, 8.5, 7}
	for k, ek := range e {
		if k > 0 {
			l.Sample(float64(k)*60-20, Rates{EnergyScheme: 5, EnergyDissipation: -3})
		}
		l.Record(float64(k)*60, ek, 2*ek, Rates{EnergyScheme: 1e-3 * float64(k), EnergyDissipation: -1.0 / 60, EnstrophyDissipation: -2.0 / 60})
	}
	// ∫ of the constant −1/60 between samples and −3 at the samples at
	// t = 40, 100, 160: the trapezoid over [0,40,60] gives 40(−1/60 − 3)/2 +
	// 20(−3 − 1/60)/2 per interval.
	if want := 3 * (20*(-1.0/60-3) + 10*(-3-1.0/60)); math.Abs(l.Integrated.EnergyDissipation-want) > 1e-12 {
		t.Errorf("∫ dissipation = %g, want %g", l.Integrated.EnergyDissipation, want)
	}
	in := l.Integrated
	if got := in.EnergyScheme + in.EnergyDissipation + in.EnergyResidual; math.Abs(got-(e[3]-e[0])) > 1e-12 {
		t.Errorf("energy integrals sum to %g, change %g", got, e[3]-e[0])
	}
	if got := in.EnstrophyScheme + in.EnstrophyDissipation + in.EnstrophyResidual; math.Abs(got-2*(e[3]-e[0])) > 1e-12 {
		t.Errorf("enstrophy integrals sum to %g, change %g", got, 2*(e[3]-e[0]))
	}
}

// Add allocates nothing, and its result does not depend on how the loops
// are split (each element is computed in one place).
func TestAddAllocatesNothingAndIgnoresSplit(t *testing.T) {
	m, err := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 16, Length: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	g := ops.Grid{Topology: &m.Topology, Metric: &m.Metric}
	c := Coefficients{Viscosity: 1e3, Hyperviscosity: 1e13, DivergenceDamping: 1e4}
	chunks := func(n int, body func(lo, hi int)) {
		for lo := 0; lo < n; lo += 7 {
			body(lo, min(lo+7, n))
		}
	}
	whole, err := New(g, g.DiagonalHodge(), c, nil)
	if err != nil {
		t.Fatal(err)
	}
	split, err := New(g, g.DiagonalHodge(), c, chunks)
	if err != nil {
		t.Fatal(err)
	}
	u := make([]float64, m.NumEdges)
	for e := range u {
		u[e] = math.Sin(float64(e) * 0.37)
	}
	a, b := make([]float64, len(u)), make([]float64, len(u))
	whole.Add(a, u)
	split.Add(b, u)
	for e := range a {
		if math.Float64bits(a[e]) != math.Float64bits(b[e]) {
			t.Fatalf("edge %d: %v in one piece, %v in chunks of 7", e, a[e], b[e])
		}
	}
	if n := testing.AllocsPerRun(10, func() { whole.Add(a, u) }); n != 0 {
		t.Errorf("Add allocates %v times per call", n)
	}
}
