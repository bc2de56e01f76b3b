package server

import (
	"testing"

	"gyrebench/sim"
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
