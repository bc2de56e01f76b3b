package cli

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// A run with --set scheme.hyperviscosity records the coefficient in
// summary.json and recipe.toml, writes the budget columns, and its
// budget integrals add up to the measured energy change.
func TestRunWithHyperviscosity(t *testing.T) {
	dir := t.TempDir()
	code, _, stderr := gyre(t, "run", "shear-rollup", small, "--set", "time.duration=14400", "--set", "scheme.hyperviscosity=1e14", "--out", dir)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	sum := readSummary(t, dir)
	if sum.Hyperviscosity != 1e14 || sum.Viscosity != 0 || sum.DivergenceDamping != 0 {
		t.Errorf("summary coefficients ν₂ %g, ν₄ %g, ν_δ %g; want 0, 1e14, 0", sum.Viscosity, sum.Hyperviscosity, sum.DivergenceDamping)
	}
	recipe, _ := os.ReadFile(filepath.Join(dir, "recipe.toml"))
	if !strings.Contains(string(recipe), "hyperviscosity = 1e+14") {
		t.Errorf("recipe.toml lacks the hyperviscosity:\n%s", recipe)
	}
	csv, _ := os.ReadFile(filepath.Join(dir, "series.csv"))
	lines := strings.Split(strings.TrimSpace(string(csv)), "\n")
	if !strings.HasSuffix(lines[0], "energy_rate_scheme,energy_rate_dissipation,energy_rate_residual,enstrophy_rate_scheme,enstrophy_rate_dissipation,enstrophy_rate_residual") {
		t.Fatalf("series.csv header lacks the budget columns: %s", lines[0])
	}
	head := strings.Split(lines[0], ",")
	col := func(row []string, name string) float64 {
		for k, h := range head {
			if h == name {
				v, err := strconv.ParseFloat(row[k], 64)
				if err != nil {
					t.Fatalf("%s = %q: %v", name, row[k], err)
				}
				return v
			}
		}
		t.Fatalf("no column %s", name)
		return 0
	}
	for _, l := range lines[1:] {
		row := strings.Split(l, ",")
		if d := col(row, "energy_rate_dissipation"); !(d < 0) {
			t.Errorf("t = %s: energy_rate_dissipation %g, want < 0", row[0], d)
		}
	}
	b := sum.Budget
	change := sum.Energy - sum.Energy/(1+sum.EnergyRelDrift)
	if got := b.EnergyScheme + b.EnergyDissipation + b.EnergyResidual; abs(got-change) > 1e-9*abs(change) {
		t.Errorf("budget integrals sum to %g, the energy changed by %g", got, change)
	}
	if !(b.EnergyDissipation < 0) || abs(b.EnergyScheme) > 1e-10*abs(b.EnergyDissipation) {
		t.Errorf("energy integrals: scheme %g (want round-off), dissipation %g (want < 0)", b.EnergyScheme, b.EnergyDissipation)
	}
}

func abs(x float64) float64 { return max(x, -x) }

// Bad coefficients exit 1 naming the key, the value and what is allowed.
func TestBadDissipationCoefficients(t *testing.T) {
	for _, set := range []string{"scheme.viscosity=-1", "scheme.hyperviscosity=inf", "scheme.divergence_damping=nan"} {
		code, _, stderr := gyre(t, "run", "shear-rollup", small, "--set", set, "--out", t.TempDir())
		key := strings.SplitN(set, "=", 2)[0]
		if code != ExitBadInput || !strings.Contains(stderr, key) || !strings.Contains(stderr, "finite") {
			t.Errorf("--set %s: exit %d, stderr %q; want exit %d naming %s and what is allowed", set, code, stderr, ExitBadInput, key)
		}
	}
	// A scenario file can hold inf and nan, which the config check refuses.
	for _, v := range []string{"inf", "nan", "-3.0"} {
		file := filepath.Join(t.TempDir(), "s.toml")
		if err := os.WriteFile(file, []byte("[scheme]\nhyperviscosity = "+v+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		code, _, stderr := gyre(t, "run", file, "--out", t.TempDir())
		if code != ExitBadInput || !strings.Contains(stderr, "scheme.hyperviscosity = ") || !strings.Contains(stderr, "≥ 0") {
			t.Errorf("hyperviscosity = %s in a file: exit %d, stderr %q; want exit %d naming the key, the value and ≥ 0", v, code, stderr, ExitBadInput)
		}
	}
}

// A sweep varies the hyperviscosity like any other key.
func TestSweepVariesHyperviscosity(t *testing.T) {
	dir := t.TempDir()
	code, _, stderr := gyre(t, "sweep", "shear-rollup", small, "--vary", "scheme.hyperviscosity=0,1e14", "--set", "time.duration=3600", "--out", dir)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var seen []float64
	err := filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
		if err == nil && info.Name() == "summary.json" {
			seen = append(seen, readSummary(t, filepath.Dir(p)).Hyperviscosity)
		}
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(seen) != 2 || seen[0]+seen[1] != 1e14 || seen[0]*seen[1] != 0 {
		t.Errorf("sweep runs have hyperviscosities %v, want 0 and 1e14", seen)
	}
}
