package structure

import (
	"fmt"
	"math"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scheme"
)

func config(kind string, n int, schemeName, hodge string) sim.Config {
	c := sim.DefaultConfig()
	c.Grid.Kind, c.Grid.N, c.Scheme.Name, c.Scheme.Hodge = kind, n, schemeName, hodge
	return c
}

// On the existing grids (orthogonal duals) every condition holds:
// exact sequences (integers), diagonal H exact for uniform flow on the
// plane, antisymmetric W, D̄2 W = −R D2 (Thuburn et al. 2009; the other
// sign misses by 2) and steady geostrophic modes; each TRiSK variant
// conserves what it should (Ringler et al. 2010, §4–5) and misses the
// other invariant by orders of magnitude.
func TestReportOnRegularGrids(t *testing.T) {
	for _, c := range []struct {
		kind        string
		n           int
		scheme      string
		energy, ens bool
	}{
		{"quad", 8, scheme.TRiSKEnergy, true, false},
		{"quad", 8, scheme.TRiSKEnstrophy, false, true},
		{"quad", 8, scheme.AL81, true, true},
		{"hex", 8, scheme.TRiSKEnergy, true, false},
		{"tri", 8, scheme.TRiSKEnstrophy, false, true},
		{"icosahedral", 2, scheme.TRiSKEnergy, true, false},
	} {
		r, err := FromConfig(config(c.kind, c.n, c.scheme, ""))
		if err != nil {
			t.Fatal(err)
		}
		name := c.kind + " " + c.scheme
		if r.IncidenceDefect != 0 || r.HodgeMatrix != "diagonal" || r.HodgeSymmetryDefect != 0 {
			t.Errorf("%s: incidence %d, Hodge %s, symmetry %g; want 0, diagonal, 0", name, r.IncidenceDefect, r.HodgeMatrix, r.HodgeSymmetryDefect)
		}
		if r.CoriolisAntisymmetryDefect > 1e-14 || r.GeostrophicCompatibilityDefect > 1e-14 {
			t.Errorf("%s: W antisymmetry %g, D̄2W + RD2 %g; want round-off", name, r.CoriolisAntisymmetryDefect, r.GeostrophicCompatibilityDefect)
		}
		if r.EnergyConserving != c.energy || r.EnstrophyConserving != c.ens {
			t.Errorf("%s: energy %t (%.3g), enstrophy %t (%.3g); want %t, %t", name, r.EnergyConserving, r.EnergyRateRelative, r.EnstrophyConserving, r.EnstrophyRateRelative, c.energy, c.ens)
		}
		for _, miss := range []struct {
			conserved bool
			rate      float64
		}{{c.energy, r.EnergyRateRelative}, {c.ens, r.EnstrophyRateRelative}} {
			if !miss.conserved && miss.rate < 1e-8 {
				t.Errorf("%s: a non-conserved rate is %.3g, want a clear miss (≥ 1e-8)", name, miss.rate)
			}
		}
		if r.MassRateRelative > 1e-14 {
			t.Errorf("%s: mass rate %.3g, want round-off", name, r.MassRateRelative)
		}
		if c.scheme != scheme.AL81 && !r.SteadyGeostrophicModes {
			t.Errorf("%s: steady geostrophic modes false (residual %.3g)", name, r.GeostrophicResidual)
		}
		if !r.Consistent || r.HodgeMinEigenvalue <= 0 {
			t.Errorf("%s: consistent %t (error %.3g), min eigenvalue %g", name, r.Consistent, r.HodgeConsistencyError, r.HodgeMinEigenvalue)
		}
	}
}

// With a non-orthogonal dual both Hodge choices conserve energy (H is
// symmetric positive definite either way: Thuburn & Cotter 2012), and only
// the consistent one is exact for uniform flow; W and R depend on the
// kites alone, so the geostrophic modes stay steady with either.
func TestReportDiagonalVersusConsistent(t *testing.T) {
	for _, kind := range []mesh.Kind{mesh.Quad, mesh.Hex, mesh.Tri} {
		for _, d := range [][2]float64{{0.2, 0}, {0, 0.2}} {
			for _, hodge := range scheme.HodgeNames {
				cfg := config(string(kind), 8, scheme.TRiSKEnergy, hodge)
				cfg.Grid.Distort, cfg.Grid.Jitter, cfg.Grid.Seed = d[0], d[1], 3
				r, err := FromConfig(cfg)
				if err != nil {
					t.Fatal(err)
				}
				name := fmt.Sprintf("%s distort %g jitter %g %s", kind, d[0], d[1], hodge)
				wantMatrix := map[string]string{scheme.HodgeConsistent: "general", scheme.HodgeDiagonal: "diagonal"}[hodge]
				if r.HodgeMatrix != wantMatrix || r.DualNonOrthogonality < 0.01 {
					t.Fatalf("%s: Hodge matrix %s, dual |cos| %g", name, r.HodgeMatrix, r.DualNonOrthogonality)
				}
				if !r.EnergyConserving || r.HodgeSymmetryDefect != 0 || !(r.HodgeMinEigenvalue > 0) {
					t.Errorf("%s: energy conserving %t (%.3g), symmetry %g, min eigenvalue %g", name, r.EnergyConserving, r.EnergyRateRelative, r.HodgeSymmetryDefect, r.HodgeMinEigenvalue)
				}
				if want := hodge == scheme.HodgeConsistent; r.Consistent != want {
					t.Errorf("%s: consistent %t (error %.3g), want %t", name, r.Consistent, r.HodgeConsistencyError, want)
				}
				if hodge == scheme.HodgeDiagonal && r.HodgeConsistencyError < 1e-3 {
					t.Errorf("%s: consistency error %.3g, want a clear miss", name, r.HodgeConsistencyError)
				}
				if !r.SteadyGeostrophicModes {
					t.Errorf("%s: steady geostrophic modes false (residual %.3g)", name, r.GeostrophicResidual)
				}
				t.Logf("%s: deviation %.3f rad, H in [%.4g, %.4g] (%s), consistency %.3g, dE/dt %.3g, geostrophic %.3g",
					name, r.DualNonOrthogonality, r.HodgeMinEigenvalue, r.HodgeMaxEigenvalue, r.HodgeEigenMethod, r.HodgeConsistencyError, r.EnergyRateRelative, r.GeostrophicResidual)
			}
		}
	}
}

// The Lanczos extremes agree with the dense spectrum.
func TestLanczosMatchesDense(t *testing.T) {
	if testing.Short() {
		t.Skip("long and serial; runs in the full suite")
	}
	m, err := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 16, Length: 1e6, Jitter: 0.2, Seed: 2})
	if err != nil {
		t.Fatal(err)
	}
	g, err := sim.HodgeGrid(m, scheme.HodgeConsistent)
	if err != nil {
		t.Fatal(err)
	}
	var dense Report
	if err := dense.eigenvalues(g); err != nil || dense.HodgeEigenMethod != "dense" {
		t.Fatalf("dense: %v, %s", err, dense.HodgeEigenMethod)
	}
	lo, hi, steps, change := lanczosExtremes(g, 300)
	if math.Abs(lo-dense.HodgeMinEigenvalue) > 1e-8*hi || math.Abs(hi-dense.HodgeMaxEigenvalue) > 1e-8*hi {
		t.Errorf("Lanczos [%.12g, %.12g] after %d steps (change %.3g); dense [%.12g, %.12g]", lo, hi, steps, change, dense.HodgeMinEigenvalue, dense.HodgeMaxEigenvalue)
	}
}

// On the equiangular cubed sphere (a non-orthogonal dual) both Hodge
// choices conserve energy and keep steady geostrophic modes (f-sphere);
// only the consistent one converges on solid rotation (Thuburn & Cotter
// 2012 for the framework; the numbers are this construction's).
func TestReportCubedSphere(t *testing.T) {
	for _, hodge := range scheme.HodgeNames {
		cfg := config(string(mesh.Cubed), 8, scheme.TRiSKEnergy, hodge)
		r, err := FromConfig(cfg)
		if err != nil {
			t.Fatal(err)
		}
		if r.IncidenceDefect != 0 || !r.EnergyConserving || !r.SteadyGeostrophicModes || r.EnstrophyConserving {
			t.Errorf("cubed %s: incidence %d, energy %t (%.3g), geostrophic %t (%.3g, compat %.3g), enstrophy %t",
				hodge, r.IncidenceDefect, r.EnergyConserving, r.EnergyRateRelative, r.SteadyGeostrophicModes, r.GeostrophicResidual, r.GeostrophicCompatibilityDefect, r.EnstrophyConserving)
		}
		if want := hodge == scheme.HodgeConsistent; r.Consistent != want {
			t.Errorf("cubed %s: consistent %t (l2 error %.3g), want %t", hodge, r.Consistent, r.HodgeConsistencyErrorL2, want)
		}
		t.Logf("cubed 8 %s: deviation %.3f rad, H in [%.4g, %.4g], consistency max %.3g l2 %.3g, dE/dt %.3g, W %.3g, compat %.3g, geostrophic %.3g",
			hodge, r.DualNonOrthogonality, r.HodgeMinEigenvalue, r.HodgeMaxEigenvalue, r.HodgeConsistencyError, r.HodgeConsistencyErrorL2,
			r.EnergyRateRelative, r.CoriolisAntisymmetryDefect, r.GeostrophicCompatibilityDefect, r.GeostrophicResidual)
	}
}

// On the cubed sphere the consistent H converges on solid rotation (l2
// order above 1; measured 1.5 from n = 8 to 32), the diagonal one does
// not (its l2 error grows slowly towards 0.18).
func TestCubedSphereConsistencyConverges(t *testing.T) {
	var prev [2]float64
	for _, n := range []int{8, 16, 32} {
		m, err := mesh.New(mesh.Spec{Kind: mesh.Cubed, N: n, Radius: 6.37122e6})
		if err != nil {
			t.Fatal(err)
		}
		var cur [2]float64
		for j, hodge := range scheme.HodgeNames {
			g, err := sim.HodgeGrid(m, hodge)
			if err != nil {
				t.Fatal(err)
			}
			mx, l2, _ := consistencyError(m, g)
			cur[j] = l2
			if n > 8 {
				order := math.Log2(prev[j] / l2)
				t.Logf("cubed n=%d %s: l2 %.3g (order %.2f), max %.3g", n, hodge, l2, order, mx)
				if j == 0 && order < 1 {
					t.Errorf("cubed n=%d consistent: l2 order %.2f, want ≥ 1", n, order)
				}
				if j == 1 && order > 0 {
					t.Errorf("cubed n=%d diagonal: l2 order %.2f, expected no convergence", n, order)
				}
			}
		}
		prev = cur
	}
}

// W reproduces the perpendicular circulation of a uniform flow exactly on
// the regular planes and to second order on smoothly distorted ones
// (measured order ≈ 2; required ≥ 1.5), with the kite-area R.
func TestCoriolisConsistency(t *testing.T) {
	for _, k := range []mesh.Kind{mesh.Quad, mesh.Hex, mesh.Tri} {
		m, err := mesh.New(mesh.Spec{Kind: k, N: 16, Length: 1e6})
		if err != nil {
			t.Fatal(err)
		}
		g, _ := sim.HodgeGrid(m, "")
		if mx, _ := coriolisConsistency(m, g); mx > 1e-13 {
			t.Errorf("%s regular: W consistency error %.3g, want round-off", k, mx)
		}
		var prev float64
		for _, n := range []int{16, 32} {
			m, err := mesh.New(mesh.Spec{Kind: k, N: n, Length: 1e6, Distort: 0.2})
			if err != nil {
				t.Fatal(err)
			}
			g, _ := sim.HodgeGrid(m, "")
			_, l2 := coriolisConsistency(m, g)
			if n > 16 {
				if o := math.Log2(prev / l2); o < 1.5 {
					t.Errorf("%s distorted n=%d: W l2 error %.3g, order %.2f, want ≥ 1.5", k, n, l2, o)
				}
			}
			prev = l2
		}
	}
}

// Of follows a running model's Hodge choice, as a panel would after a
// switch.
func TestOfFollowsSetHodge(t *testing.T) {
	cfg := config("quad", 8, scheme.TRiSKEnergy, "")
	cfg.Grid.Jitter, cfg.Initial.Case = 0.2, "gaussian-bump"
	m, err := sim.NewModel(cfg, 1)
	if err != nil {
		t.Fatal(err)
	}
	defer m.Close()
	for _, hodge := range []string{scheme.HodgeDiagonal, scheme.HodgeConsistent} {
		if err := m.SetHodge(hodge); err != nil {
			t.Fatal(err)
		}
		r, err := Of(m)
		if err != nil {
			t.Fatal(err)
		}
		if r.Hodge != hodge || r.Consistent != (hodge == scheme.HodgeConsistent) || !r.EnergyConserving {
			t.Errorf("after SetHodge(%s): hodge %s, consistent %t, energy conserving %t", hodge, r.Hodge, r.Consistent, r.EnergyConserving)
		}
	}
}
