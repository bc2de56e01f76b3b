package cli

import (
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gyrebench/sim/internal/testcheck"
	"gyrebench/sim/linear"
)

func readModes(t *testing.T, dir string) ([][]string, linear.Summary) {
	t.Helper()
	rows := testcheck.ReadCSV(t, filepath.Join(dir, "modes.csv"))
	var s linear.Summary
	testcheck.ReadJSON(t, filepath.Join(dir, "summary.json"), &s)
	if tmp, _ := filepath.Glob(filepath.Join(dir, ".*.tmp")); len(tmp) > 0 {
		t.Errorf("temporary files left: %v", tmp)
	}
	return rows, s
}

func TestModesQuadWithVerify(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	rows, s, stdout := modesOK(t, dir, "--grid", "quad", "--n", "8", "--out", dir, "--verify-dt")
	if got := strings.Join(rows[0], ","); got != "growth_rate_per_s,frequency_per_s,class,kx,ky,omega_continuous,omega_discrete_theory" {
		t.Fatalf("header %q", got)
	}
	// One row per eigenvalue: 64 cells + 128 edges.
	if len(rows)-1 != 192 || s.Unknowns != 192 {
		t.Fatalf("%d rows, %d unknowns; want 192", len(rows)-1, s.Unknowns)
	}
	for _, r := range rows[1:] {
		w, err1 := strconv.ParseFloat(r[1], 64)
		th, err2 := strconv.ParseFloat(r[6], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("row %v: frequency and the quad C-grid relation must be numbers", r)
		}
		if math.Abs(w-th) > 1e-9*s.MaxFrequency {
			t.Errorf("row %v: frequency off the C-grid relation", r)
		}
	}
	if s.Counts.Geostrophic != 64 || s.Counts.InertiaGravity != 128 || s.Growing != 0 {
		t.Errorf("summary counts %+v, %d growing", s.Counts, s.Growing)
	}
	if len(s.Limits) != 4 || s.Limits[3].Integrator != "euler" || s.Limits[3].MaxDt != 0 {
		t.Errorf("limits %+v", s.Limits)
	}
	// --verify-dt: rk3, rk4 and leapfrog at 0.9 and 1.1 of their limits.
	if len(s.Verify) != 6 {
		t.Fatalf("%d verification runs, want 6", len(s.Verify))
	}
	for _, v := range s.Verify {
		if v.BlewUp != (v.Factor > 1) {
			t.Errorf("%s at %.1f × the limit: blew up %v", v.Integrator, v.Factor, v.BlewUp)
		}
	}
	if !strings.Contains(stdout, "blew up") || !strings.Contains(stdout, "rk4") {
		t.Errorf("stdout lacks the verification report:\n%s", stdout)
	}
}

func TestModesScenarioWithOverrides(t *testing.T) {
	dir := t.TempDir()
	// bump-adjustment is hex n = 64; --n makes it small, --set turns off
	// rotation, which adds the two uniform flows to the steady modes.
	rows, s, _ := modesOK(t, dir, "bump-adjustment", "--n", "8", "--set", "physics.f0=0", "--out", dir)
	if s.Grid != "hex" || s.F0 != 0 || s.Counts.Geostrophic+s.Counts.Spurious != s.Vertices+2 {
		t.Errorf("grid %s, f0 %g, counts %+v (vertices %d)", s.Grid, s.F0, s.Counts, s.Vertices)
	}
	// Hex has no closed-form discrete relation: that column is empty.
	for _, r := range rows[1:] {
		if r[6] != "" {
			t.Fatalf("row %v: omega_discrete_theory should be empty on hex", r)
		}
	}
}

func TestModesExtremeOnLargeGrid(t *testing.T) {
	dir := t.TempDir()
	rows, s, _ := modesOK(t, dir, "--grid", "hex", "--n", "32", "--extreme", "--out", dir)
	if s.Method != "lanczos" || len(rows) != 3 || s.Unknowns != 4096 || s.Limits[0].MaxDt <= 0 {
		t.Errorf("method %s, %d rows, %d unknowns, limits %+v", s.Method, len(rows)-1, s.Unknowns, s.Limits)
	}
}

func TestModesBadInput(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want []string
	}{
		{[]string{"--grid", "pentagon", "--n", "8"}, []string{"--grid", "pentagon", "allowed"}},
		{[]string{"--grid", "hex", "--n", "64"}, []string{"--n", "--extreme", "16384"}},
		{[]string{"--grid", "hex", "--n", "5"}, []string{"--n", "grid.n = 5", "even"}},
		{[]string{"--n", "eight"}, []string{"--n", "integer"}},
		{[]string{"--grid", "quad", "--n", "8", "--set", "physics.colour=1"}, []string{"physics.colour", "unknown"}},
		{[]string{"no-such-scenario", "--n", "8"}, []string{"no-such-scenario"}},
	} {
		dir := filepath.Join(t.TempDir(), "out")
		code, _, stderr := gyre(t, append([]string{"modes", "--out", dir}, tc.args...)...)
		if code != ExitBadInput {
			t.Errorf("%v: exit %d, want %d", tc.args, code, ExitBadInput)
		}
		for _, w := range tc.want {
			if !strings.Contains(stderr, w) {
				t.Errorf("%v: message %q lacks %q", tc.args, stderr, w)
			}
		}
		if _, err := os.Stat(dir); !os.IsNotExist(err) {
			t.Errorf("%v: the output folder was created", tc.args)
		}
	}
	code, _, stderr := gyre(t, "modes", "--grid", "quad", "--n", "8")
	if code != ExitBadInput || !strings.Contains(stderr, "--out") {
		t.Errorf("without --out: exit %d, %q", code, stderr)
	}
}

// modesOK runs gyrebench modes with args, fails the test unless it exits
// with ExitOK, and returns what it wrote to dir and its stdout.
func modesOK(t *testing.T, dir string, args ...string) ([][]string, linear.Summary, string) {
	t.Helper()
	code, stdout, stderr := gyre(t, append([]string{"modes"}, args...)...)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	rows, s := readModes(t, dir)
	return rows, s, stdout
}
