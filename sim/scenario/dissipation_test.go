package scenario

import (
	"testing"

	"gyrebench/scenarios"
)

// The dissipation keys are read, set with --set and written back to the
// recipe exactly; zero coefficients are left out of the recipe.
func TestDissipationKeysRoundTrip(t *testing.T) {
	src, _ := scenarios.Source("shear-rollup")
	s, err := Parse(append(src, []byte("")...), "shear-rollup")
	if err != nil {
		t.Fatal(err)
	}
	c := s.Config
	if c.Scheme.Viscosity != 0 || c.Scheme.Hyperviscosity != 0 || c.Scheme.DivergenceDamping != 0 {
		t.Fatalf("defaults are not zero: %+v", c.Scheme)
	}
	for _, a := range []string{"scheme.viscosity=0.1", "scheme.hyperviscosity=3.3e13", "scheme.divergence_damping=1e5"} {
		if err := Set(&c, a); err != nil {
			t.Fatalf("--set %s: %v", a, err)
		}
	}
	again, err := Parse(Format(c, ""), "recipe")
	if err != nil {
		t.Fatal(err)
	}
	if again.Config.Scheme != c.Scheme {
		t.Errorf("round trip: %+v → %+v", c.Scheme, again.Config.Scheme)
	}
	if err := again.Config.Validate(); err != nil {
		t.Errorf("valid coefficients refused: %v", err)
	}
}
