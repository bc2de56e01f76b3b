package figure

import (
	"strings"
	"testing"

	"gyrebench/sim"
)

// Titles name the dissipation when it is on, and only then.
func TestTitleNamesDissipation(t *testing.T) {
	c := sim.DefaultConfig()
	if s := Title(c, 0); strings.Contains(s, "ν") {
		t.Errorf("title without dissipation mentions it: %q", s)
	}
	c.Scheme.Hyperviscosity = 1e14
	c.Scheme.DivergenceDamping = 2e5
	s := Title(c, 0)
	for _, want := range []string{"trisk-energy + ν₄ = 1e+14 m⁴/s, ν_δ = 2e+05 m²/s"} {
		if !strings.Contains(s, want) {
			t.Errorf("title %q lacks %q", s, want)
		}
	}
}
