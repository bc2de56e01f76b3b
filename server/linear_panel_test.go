package server

import (
	"strings"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
)

func TestSig4(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want string
	}{
		{574.8123, "574.8"}, {10321, "10320"}, {0.0123456, "0.01235"}, {2446.39, "2446"}, {0, "0"}, {-61.234, "-61.23"},
	} {
		if got := sig4(c.x); got != c.want {
			t.Errorf("sig4(%g) = %q, want %q", c.x, got, c.want)
		}
	}
}

// TestDispersionCopy: the copy keeps the cell size on the plane and is a
// coarse level on the sphere; a grid already small is analysed itself.
func TestDispersionCopy(t *testing.T) {
	for _, c := range []struct {
		kind                string
		n                   int
		length, height      float64
		wantN               int
		wantLen, wantHeight float64
		copied              bool
	}{
		{"hex", 64, 2e6, 0, 12, 375000, 0, true},
		{"hex", 64, 2e6, 1.5e6, 12, 375000, 281250, true},
		{"quad", 32, 1e6, 0, 16, 500000, 0, true},
		{"quad", 8, 1e6, 0, 8, 1e6, 0, false},
		{"tri", 12, 1e6, 0, 12, 1e6, 0, false},
		{"icosahedral", 5, 1e6, 0, 2, 1e6, 0, true},
		{"icosahedral", 2, 1e6, 0, 2, 1e6, 0, false},
		{"cubed", 48, 1e6, 0, 6, 1e6, 0, true},
		{"cubed", 4, 1e6, 0, 4, 1e6, 0, false},
	} {
		cfg := sim.DefaultConfig()
		cfg.Grid = sim.GridConfig{Kind: c.kind, N: c.n, Length: c.length, Height: c.height}
		got, copied := dispersionCopy(cfg)
		if got.Grid.N != c.wantN || got.Grid.Length != c.wantLen || got.Grid.Height != c.wantHeight || copied != c.copied {
			t.Errorf("%s n=%d: copy %+v (copied %v), want n=%d length %g height %g (copied %v)",
				c.kind, c.n, got.Grid, copied, c.wantN, c.wantLen, c.wantHeight, c.copied)
		}
	}
}

// TestLinKey: Δt enters the spectrum's key for apvm only, whose PV
// upwinding scales with it.
func TestLinKey(t *testing.T) {
	a := sim.DefaultConfig()
	b := a
	b.Time.Dt *= 2
	b.Time.Integrator = "rk4"
	if keyOf(a) != keyOf(b) {
		t.Error("trisk-energy: a change of Δt or integrator changed the spectrum key")
	}
	a.Scheme.Name, b.Scheme.Name = "apvm", "apvm"
	if keyOf(a) == keyOf(b) {
		t.Error("apvm: a change of Δt kept the spectrum key")
	}
	// The Hodge star is part of the operator; "" is the consistent one.
	c, d := sim.DefaultConfig(), sim.DefaultConfig()
	c.Scheme.Hodge, d.Scheme.Hodge = "", "consistent"
	if keyOf(c) != keyOf(d) {
		t.Error("scheme.hodge \"\" and \"consistent\" gave different keys")
	}
	d.Scheme.Hodge = "diagonal"
	if keyOf(c) == keyOf(d) {
		t.Error("a change of Hodge star kept the spectrum key")
	}
}

func TestGridLimits(t *testing.T) {
	plane, err := mesh.New(mesh.Spec{Kind: mesh.Quad, N: 4, Length: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	sphere, err := mesh.New(mesh.Spec{Kind: mesh.Icosahedral, N: 1, Radius: 1})
	if err != nil {
		t.Fatal(err)
	}
	cube, err := mesh.New(mesh.Spec{Kind: mesh.Cubed, N: 4, Radius: 1})
	if err != nil {
		t.Fatal(err)
	}
	cfg := sim.DefaultConfig()
	for _, c := range []struct {
		name  string
		err   *cmdError
		field string
		says  string
	}{
		{"sphere on a plane run", surfaceSwitch("icosahedral", cfg, plane), "grid.kind", "on the plane"},
		{"plane on a sphere run", surfaceSwitch("tri", cfg, sphere), "grid.kind", "on the sphere"},
		{"level 7", resolutionRange("icosahedral", 7, 6), "grid.n", "2 ≤ n ≤ 6"},
		{"level 1", resolutionRange("icosahedral", 1, 6), "grid.n", "2 ≤ n ≤ 6"},
		{"hex n = 2", resolutionRange("hex", 2, 362), "grid.n", "too small"},
		{"hex n = 400", resolutionRange("hex", 400, 362), "grid.n", "4 ≤ n ≤ 362, even"},
		{"cubed on a plane run", surfaceSwitch("cubed", cfg, plane), "grid.kind", "on the plane"},
		{"quad on a cubed run", surfaceSwitch("quad", cfg, cube), "grid.kind", "icosahedral, cubed"},
		{"cubed n = 3", resolutionRange("cubed", 3, 147), "grid.n", "4 ≤ n ≤ 147 (the cubed sphere has 6n² cells"},
		{"cubed n = 148", resolutionRange("cubed", 148, 147), "grid.n", "cells along a cube edge"},
	} {
		if c.err == nil || c.err.field != c.field || !strings.Contains(c.err.msg, c.says) {
			t.Errorf("%s: %+v, want a refusal of %s saying %q", c.name, c.err, c.field, c.says)
		}
	}
	for _, ok := range []*cmdError{surfaceSwitch("hex", cfg, plane), surfaceSwitch("icosahedral", cfg, sphere), surfaceSwitch("cubed", cfg, sphere), surfaceSwitch("icosahedral", cfg, cube), resolutionRange("icosahedral", 2, 6), resolutionRange("cubed", 4, 147), resolutionRange("quad", 4, 362)} {
		if ok != nil {
			t.Errorf("refused what is allowed: %v", ok)
		}
	}
}

// TestMaxLiveCubedFromLloyd: from a run on a Lloyd-relaxed icosahedral
// grid, the cubed sphere is offered up to the largest n within
// MaxLiveCells (the relaxation does not carry to the cubed sphere).
func TestMaxLiveCubedFromLloyd(t *testing.T) {
	sphere, err := mesh.New(mesh.Spec{Kind: mesh.Icosahedral, N: 2, Radius: 1})
	if err != nil {
		t.Fatal(err)
	}
	cfg := sim.DefaultConfig()
	cfg.Grid = sim.GridConfig{Kind: "icosahedral", N: 2, Optimize: mesh.OptimizeLloyd}
	n := maxLiveN("cubed", cfg, sphere)
	if 6*n*n > MaxLiveCells || 6*(n+1)*(n+1) <= MaxLiveCells {
		t.Errorf("maxLiveN(cubed) from a Lloyd grid = %d: 6n² = %d, 6(n+1)² = %d, limit %d", n, 6*n*n, 6*(n+1)*(n+1), MaxLiveCells)
	}
}
