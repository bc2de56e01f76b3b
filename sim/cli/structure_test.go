package cli

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func readStructure(t *testing.T, dir string) map[string]any {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "structure.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	if tmp, _ := filepath.Glob(filepath.Join(dir, ".*.tmp")); len(tmp) > 0 {
		t.Errorf("temporary files left: %v", tmp)
	}
	return m
}

// On the square grid every condition holds and trisk-energy conserves
// energy, not potential enstrophy (Ringler et al. 2010, §4–5).
func TestStructureQuad(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	code, stdout, stderr := gyre(t, "structure", "--grid", "quad", "--n", "8", "--out", dir)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "energy conserving yes") {
		t.Errorf("stdout %q does not report energy conservation", stdout)
	}
	m := readStructure(t, dir)
	for _, k := range []string{"incidence_defect", "hodge_symmetry_defect", "hodge_min_eigenvalue", "hodge_max_eigenvalue",
		"hodge_consistency_error", "coriolis_antisymmetry_defect", "geostrophic_compatibility_defect",
		"energy_rate_relative", "enstrophy_rate_relative"} {
		if _, ok := m[k].(float64); !ok {
			t.Errorf("structure.json: %s = %v, want a number", k, m[k])
		}
	}
	want := map[string]bool{"energy_conserving": true, "enstrophy_conserving": false, "steady_geostrophic_modes": true, "consistent": true}
	for k, w := range want {
		if got, ok := m[k].(bool); !ok || got != w {
			t.Errorf("structure.json: %s = %v, want %t", k, m[k], w)
		}
	}
	if m["incidence_defect"] != 0.0 {
		t.Errorf("incidence_defect = %v, want 0", m["incidence_defect"])
	}
}

func TestStructureBadInput(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--grid", "quad", "--n", "8"}, "--out"},
		{[]string{"--grid", "pentagon", "--out", "x"}, "--grid"},
		{[]string{"--grid", "quad", "--n", "8", "--set", "scheme.hodge=mixed", "--out", "x"}, "scheme.hodge"},
		{[]string{"--grid", "hex", "--n", "8", "--set", "scheme.name=al81", "--out", "x"}, "scheme.name"},
	} {
		dir := t.TempDir()
		args := append([]string{"structure"}, c.args...)
		for k, a := range args {
			if a == "x" {
				args[k] = filepath.Join(dir, "out")
			}
		}
		code, _, stderr := gyre(t, args...)
		if code != ExitBadInput || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d naming %s", c.args, code, stderr, ExitBadInput, c.want)
		}
		if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
			t.Errorf("%v: wrote output despite the error", c.args)
		}
	}
}

// A sweep over the Hodge choice on a jittered plane runs both, each
// recipe saying which it used, and both keep mass to round-off.
func TestSweepOverHodge(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "sweep")
	code, _, stderr := gyre(t, "sweep", "bump-adjustment", "--vary", "scheme.hodge=consistent,diagonal",
		"--set", "grid.kind=quad", "--set", "grid.n=8", "--set", "grid.jitter=0.2", "--set", "time.duration=600", "--out", dir)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	b, err := os.ReadFile(filepath.Join(dir, "sweep.csv"))
	if err != nil {
		t.Fatal(err)
	}
	rows := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(rows) != 3 || !strings.Contains(rows[1], ",consistent,") || !strings.Contains(rows[2], ",diagonal,") {
		t.Fatalf("sweep.csv:\n%s", b)
	}
	recipe, err := os.ReadFile(filepath.Join(dir, "point-002", "recipe.toml"))
	if err != nil || !strings.Contains(string(recipe), `hodge = "diagonal"`) {
		t.Errorf("diagonal run's recipe (%v):\n%s", err, recipe)
	}
}

// On a distorted plane the diagonal Hodge star still conserves energy
// but is not consistent; the consistent one is both.
func TestStructureDistortedPlane(t *testing.T) {
	for _, hodge := range []string{"diagonal", "consistent"} {
		dir := filepath.Join(t.TempDir(), "out")
		code, _, stderr := gyre(t, "structure", "--grid", "hex", "--n", "8", "--set", "grid.distort=0.2", "--set", "scheme.hodge="+hodge, "--out", dir)
		if code != ExitOK {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		m := readStructure(t, dir)
		if m["energy_conserving"] != true || m["consistent"] != (hodge == "consistent") || m["steady_geostrophic_modes"] != true {
			t.Errorf("hodge %s: energy_conserving %v, consistent %v, steady_geostrophic_modes %v", hodge, m["energy_conserving"], m["consistent"], m["steady_geostrophic_modes"])
		}
	}
}

// --grid on a scenario written for another grid family drops that family's
// relaxation, as modes and --set do: williamson-2 asks for a Lloyd-relaxed
// icosahedral grid, and the cubed sphere has none.
func TestStructureGridFlagDropsRelaxation(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "st")
	code, _, stderr := gyre(t, "structure", "williamson-2", "--grid", "cubed", "--n", "4", "--out", dir)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "structure.json")); err != nil {
		t.Fatal(err)
	}
}
