package linear

import (
	"testing"

	"gyrebench/sim"
)

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
		got, copied := DispersionCopy(cfg)
		if got.Grid.N != c.wantN || got.Grid.Length != c.wantLen || got.Grid.Height != c.wantHeight || copied != c.copied {
			t.Errorf("%s n=%d: copy %+v (copied %v), want n=%d length %g height %g (copied %v)",
				c.kind, c.n, got.Grid, copied, c.wantN, c.wantLen, c.wantHeight, c.copied)
		}
	}
}

// TestKey: Δt enters the spectrum's key for apvm only, whose PV
// upwinding scales with it.
func TestKey(t *testing.T) {
	a := sim.DefaultConfig()
	b := a
	b.Time.Dt *= 2
	b.Time.Integrator = "rk4"
	if KeyOf(a) != KeyOf(b) {
		t.Error("trisk-energy: a change of Δt or integrator changed the spectrum key")
	}
	a.Scheme.Name, b.Scheme.Name = "apvm", "apvm"
	if KeyOf(a) == KeyOf(b) {
		t.Error("apvm: a change of Δt kept the spectrum key")
	}
	// The Hodge star is part of the operator; "" is the consistent one.
	c, d := sim.DefaultConfig(), sim.DefaultConfig()
	c.Scheme.Hodge, d.Scheme.Hodge = "", "consistent"
	if KeyOf(c) != KeyOf(d) {
		t.Error("scheme.hodge \"\" and \"consistent\" gave different keys")
	}
	d.Scheme.Hodge = "diagonal"
	if KeyOf(c) == KeyOf(d) {
		t.Error("a change of Hodge star kept the spectrum key")
	}
}

func TestSig4(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want string
	}{
		{574.8123, "574.8"}, {10321, "10320"}, {0.0123456, "0.01235"}, {2446.39, "2446"}, {0, "0"}, {-61.234, "-61.23"},
	} {
		if got := Sig4(c.x); got != c.want {
			t.Errorf("Sig4(%g) = %q, want %q", c.x, got, c.want)
		}
	}
}
