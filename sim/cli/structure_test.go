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
