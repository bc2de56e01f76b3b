package session

import (
	"strings"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/internal/testcheck"
	"gyrebench/sim/mesh"
)

func TestGridLimits(t *testing.T) {
	plane := testcheck.Mesh(t, mesh.Spec{Kind: mesh.Quad, N: 4, Length: 1e6})
	sphere := testcheck.Mesh(t, mesh.Spec{Kind: mesh.Icosahedral, N: 1, Radius: 1})
	cube := testcheck.Mesh(t, mesh.Spec{Kind: mesh.Cubed, N: 4, Radius: 1})
	cfg := sim.DefaultConfig()
	for _, c := range []struct {
		name  string
		err   *Error
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
		if c.err == nil || c.err.Field != c.field || !strings.Contains(c.err.Message, c.says) {
			t.Errorf("%s: %+v, want a refusal of %s saying %q", c.name, c.err, c.field, c.says)
		}
	}
	for _, ok := range []*Error{surfaceSwitch("hex", cfg, plane), surfaceSwitch("icosahedral", cfg, sphere), surfaceSwitch("cubed", cfg, sphere), surfaceSwitch("icosahedral", cfg, cube), resolutionRange("icosahedral", 2, 6), resolutionRange("cubed", 4, 147), resolutionRange("quad", 4, 362)} {
		if ok != nil {
			t.Errorf("refused what is allowed: %v", ok)
		}
	}
}

// TestMaxLiveCubedFromLloyd: from a run on a Lloyd-relaxed icosahedral
// grid, the cubed sphere is offered up to the largest n within
// MaxLiveCells (the relaxation does not carry to the cubed sphere).
func TestMaxLiveCubedFromLloyd(t *testing.T) {
	sphere := testcheck.Mesh(t, mesh.Spec{Kind: mesh.Icosahedral, N: 2, Radius: 1})
	cfg := sim.DefaultConfig()
	cfg.Grid = sim.GridConfig{Kind: "icosahedral", N: 2, Optimize: mesh.OptimizeLloyd}
	n := MaxLiveN("cubed", cfg, sphere)
	if 6*n*n > MaxLiveCells || 6*(n+1)*(n+1) <= MaxLiveCells {
		t.Errorf("MaxLiveN(cubed) from a Lloyd grid = %d: 6n² = %d, 6(n+1)² = %d, limit %d", n, 6*n*n, 6*(n+1)*(n+1), MaxLiveCells)
	}
}

// The ring keeps the newest states, oldest first, and a rewind forgets
// the states after the one chosen.
func TestRing(t *testing.T) {
	cfg := sim.DefaultConfig()
	cfg.Grid = sim.GridConfig{Kind: "quad", N: 4, Length: 1e6}
	m, err := sim.NewModel(cfg, 1)
	if err != nil {
		t.Fatal(err)
	}
	defer m.Close()
	var g ring
	g.init(4)
	g.push(m)
	g.push(m) // the same state again is not kept twice
	for i := 0; i < 6; i++ {
		if err := m.Step(); err != nil {
			t.Fatal(err)
		}
		g.push(m)
	}
	e := g.entries()
	if len(e) != 4 || e[0].Steps != 3 || e[3].Steps != 6 {
		t.Fatalf("entries %+v, want steps 3..6", e)
	}
	if s := g.at(3); len(s.x) != len(m.State()) || s.x[0] != m.State()[0] {
		t.Errorf("newest entry does not hold the current state")
	}
	g.cursor = 1
	g.dropAfterCursor()
	if e := g.entries(); len(e) != 2 || e[1].Steps != 4 || g.cursor != -1 {
		t.Errorf("after rewinding to entry 1: %+v (cursor %d), want steps 3 and 4", e, g.cursor)
	}
}

// MaxLiveN is the largest resolution within MaxLiveCells.
func TestMaxLiveN(t *testing.T) {
	cfg := sim.DefaultConfig()
	m := testcheck.Mesh(t, cfg.MeshSpec())
	for _, kind := range GridKinds() {
		n := MaxLiveN(kind, cfg, m)
		cells, err := liveSpec(kind, n, cfg, m).Cells()
		if err != nil || cells > MaxLiveCells {
			t.Errorf("%s: n = %d gives %d cells (%v), over the limit %d", kind, n, cells, err, MaxLiveCells)
		}
		for next := n + 1; next <= n+2; next++ {
			if c, err := liveSpec(kind, next, cfg, m).Cells(); err == nil && c <= MaxLiveCells {
				t.Errorf("%s: n = %d has %d cells, within the limit, but MaxLiveN says %d", kind, next, c, n)
			}
		}
	}
}
