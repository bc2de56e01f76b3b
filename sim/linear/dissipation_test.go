package linear

import (
	"context"
	"math"
	"sort"
	"testing"

	"gyrebench/sim"
)

func dissipativeQuad(n int, f0 float64) sim.Config {
	cfg := sim.DefaultConfig()
	cfg.Grid = sim.GridConfig{Kind: "quad", N: n, Length: 1e6}
	cfg.Physics.F0 = f0
	return cfg
}

// With f = 0 on the quad grid the rotational modes (δ = 0, h' = 0) obey
// ∂u/∂t = D(u) alone, and D's symbol is −ν₂κ² − ν₄κ⁴ with
// κ² = (4/d²)[sin²(kd/2) + sin²(ld/2)] (the C-grid Laplacian's symbol), one
// mode per wavevector of the n × n lattice, plus the uniform depth and
// the two uniform flows at zero. The real eigenvalues of the analysis must
// be exactly these, to 1e-10 relative.
func TestDissipationDampingRates(t *testing.T) {
	const n = 8
	d := 1e6 / n
	for _, tc := range []struct {
		name   string
		nu2    float64
		nu4    float64
		symbol func(k2 float64) float64
	}{
		{"viscosity", 1e5, 0, func(k2 float64) float64 { return -1e5 * k2 }},
		{"hyperviscosity", 0, 1e15, func(k2 float64) float64 { return -1e15 * k2 * k2 }},
	} {
		cfg := dissipativeQuad(n, 0)
		cfg.Scheme.Viscosity, cfg.Scheme.Hyperviscosity = tc.nu2, tc.nu4
		res, err := Analyse(context.Background(), cfg, Options{})
		if err != nil {
			t.Fatal(err)
		}
		var got []float64
		for _, m := range res.Modes {
			if math.Abs(m.Frequency) <= 1e-9*res.MaxFrequency {
				got = append(got, m.GrowthRate)
			}
		}
		want := []float64{0, 0}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				si, sj := math.Sin(math.Pi*float64(i)/n), math.Sin(math.Pi*float64(j)/n)
				want = append(want, tc.symbol(4/(d*d)*(si*si+sj*sj)))
			}
		}
		if len(got) != len(want) {
			t.Fatalf("%s: %d modes of zero frequency, want %d (n² + 2)", tc.name, len(got), len(want))
		}
		sort.Float64s(got)
		sort.Float64s(want)
		worst := 0.0
		scale := math.Abs(want[0])
		for k := range got {
			var rel float64
			if want[k] == 0 {
				rel = math.Abs(got[k]) / scale
			} else {
				rel = math.Abs(got[k]-want[k]) / math.Abs(want[k])
			}
			worst = max(worst, rel)
		}
		t.Logf("%s: %d rotational damping rates, nonzero from %.4g to %.4g s⁻¹, worst relative error %.2g (method %s)", tc.name, len(got), want[len(want)-4], want[0], worst, res.Method)
		if worst > 1e-10 {
			t.Errorf("%s: damping rates differ from −ν₂κ² − ν₄κ⁴ by %.3g relative, want ≤ 1e-10", tc.name, worst)
		}
	}
}

// A strongly dissipative run: the hyperviscous damping of the grid scale,
// not the gravity waves, sets the limit (on the negative real axis), and
// Δt 5 % below the predicted limit survives while 5 % above blows up.
func TestDissipationStableDt(t *testing.T) {
	cfg := dissipativeQuad(8, 1e-4)
	cfg.Scheme.Hyperviscosity = 1e17
	res, err := Analyse(context.Background(), cfg, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range res.Limits {
		if l.Integrator != "rk3" && l.Integrator != "rk4" {
			continue
		}
		t.Logf("%s: limit %.4g s (%s, λ = %.4g%+.4gi s⁻¹); imaginary axis alone %.4g s", l.Integrator, l.MaxDt, l.Binding, l.Eigenvalue[0], l.Eigenvalue[1], l.AxisDt)
		if l.Binding != "negative real axis" || !(l.MaxDt < l.AxisDt/2) {
			t.Errorf("%s: binding %q, limit %g s against the waves' %g s; want the real axis to bind well below", l.Integrator, l.Binding, l.MaxDt, l.AxisDt)
		}
		for _, f := range []float64{0.95, 1.05} {
			tr, err := VerifyDt(context.Background(), cfg, l.Integrator, f*l.MaxDt)
			if err != nil {
				t.Fatal(err)
			}
			if tr.BlewUp != (f > 1) {
				t.Errorf("%s at %.2f × the limit (Δt = %.4g s): blew up = %v (growth %.3g, %s)", l.Integrator, f, tr.Dt, tr.BlewUp, tr.Growth, tr.Reason)
			}
		}
	}
	// Without dissipation the same grid is limited by the waves alone.
	cfg.Scheme.Hyperviscosity = 0
	res, err = Analyse(context.Background(), cfg, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range res.Limits {
		if l.Integrator == "rk3" && (l.Binding != "imaginary axis" || l.MaxDt != l.AxisDt) {
			t.Errorf("inviscid rk3: binding %q, limit %g s, imaginary-axis limit %g s", l.Binding, l.MaxDt, l.AxisDt)
		}
	}
}
