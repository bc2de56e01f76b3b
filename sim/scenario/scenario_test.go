package scenario

import (
	"strings"
	"testing"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/internal/testcheck"
)

func TestBuiltinsParseAndValidate(t *testing.T) {
	names := scenarios.Names()
	if len(names) < 6 {
		t.Fatalf("%d built-in scenarios, want at least 6", len(names))
	}
	for _, n := range names {
		src, err := scenarios.Source(n)
		if err != nil {
			t.Fatal(err)
		}
		s, err := Parse(src, n+".toml")
		if err != nil {
			t.Fatalf("%s: %v", n, err)
		}
		if s.Description == "" || strings.Contains(s.Description, "\n") {
			t.Errorf("%s: description %q must be one line", n, s.Description)
		}
		if err := s.Config.Validate(); err != nil {
			t.Errorf("%s: %v", n, err)
		}
	}
}

// Format then Parse must give back the same config, bit for bit in every
// float, so that a recipe reproduces its run.
func TestFormatRoundTrip(t *testing.T) {
	for _, n := range scenarios.Names() {
		src, _ := scenarios.Source(n)
		s, err := Parse(src, n)
		if err != nil {
			t.Fatal(err)
		}
		c := s.Config
		c.Time.Dt = 0.1 + 0.2 // not exactly representable in short decimal
		c.Physics.F0 = 1.0 / 3.0
		again, err := Parse(Format(c, s.Description), "recipe")
		if err != nil {
			t.Fatalf("%s: recipe does not parse: %v\n%s", n, err, Format(c, s.Description))
		}
		got := again.Config
		if got.Time.Dt != c.Time.Dt || got.Physics.F0 != c.Physics.F0 || got.Grid != c.Grid || got.Scheme != c.Scheme || got.Title != c.Title {
			t.Errorf("%s: round trip changed the config:\n%+v\n%+v", n, c, got)
		}
		cs := c.Initial
		for k, v := range cs.Params {
			if got.Initial.Params[k] != v {
				t.Errorf("%s: initial.%s %v → %v", n, k, v, got.Initial.Params[k])
			}
		}
	}
}

func TestParseErrorsNameKeyAndLine(t *testing.T) {
	cases := []struct {
		name, src, want string
	}{
		{"unknown key", "[grid]\nkind = \"hex\"\ncolour = 3\n", ":3: grid.colour"},
		{"unknown section", "title = \"x\"\n[wind]\nspeed = 3\n", ":2: wind"},
		{"wrong type", "[grid]\nn = \"many\"\n", ":2:"},
		{"wrong type float", "[time]\ndt = \"fast\"\n", "time.dt"},
		{"syntax", "[grid\nn = 3\n", ":1:"},
		{"unknown case param", "[initial]\ncase = \"gaussian-bump\"\nheight = 3\n", ":3: initial.height"},
		{"bad case", "[initial]\ncase = \"sunny\"\n", ":2: initial.case"},
		{"case not string", "[initial]\ncase = 3\n", "initial.case"},
	}
	for _, c := range cases {
		_, err := Parse([]byte(c.src), "f.toml")
		testcheck.ErrorSays(t, c.name, err, c.want)
	}
}

func TestSet(t *testing.T) {
	c := sim.DefaultConfig()
	for _, a := range []string{"grid.n=32", "time.dt=30.5", "scheme.name=apvm", "initial.amplitude=7", "output.snapshots=true", "grid.kind=quad"} {
		if err := Set(&c, a); err != nil {
			t.Fatalf("Set(%q): %v", a, err)
		}
	}
	if c.Grid.N != 32 || c.Time.Dt != 30.5 || c.Scheme.Name != "apvm" || c.Initial.Params["amplitude"] != 7 || !c.Output.Snapshots || c.Grid.Kind != "quad" {
		t.Errorf("overrides not applied: %+v", c)
	}
	before := c
	for _, bad := range []struct{ a, want string }{
		{"grid.n=3.5", "grid.n"},
		{"time.dt=fast", "time.dt"},
		{"wind.speed=3", "wind.speed"},
		{"initial.height=2", "initial.height"},
		{"nonsense", "key=value"},
		{"output.snapshots=maybe", "output.snapshots"},
	} {
		err := Set(&c, bad.a)
		if err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("Set(%q) = %v, want an error naming %s", bad.a, err, bad.want)
		}
	}
	if c.Grid != before.Grid || c.Time != before.Time {
		t.Errorf("a failed Set changed the config")
	}
}

// The grid distortion keys are set, formatted and parsed back, and the
// validation refuses them out of range and on the sphere with a message
// naming the key and the value; the cubed sphere takes the sphere's cases
// only, n ≥ 2 and no optimisation.
func TestGridDistortionKeys(t *testing.T) {
	c := sim.DefaultConfig()
	for _, a := range []string{"grid.kind=quad", "grid.n=16", "grid.distort=0.125", "grid.jitter=0.1", "grid.seed=12345"} {
		if err := Set(&c, a); err != nil {
			t.Fatalf("Set(%q): %v", a, err)
		}
	}
	if c.Grid.Distort != 0.125 || c.Grid.Jitter != 0.1 || c.Grid.Seed != 12345 {
		t.Fatalf("overrides not applied: %+v", c.Grid)
	}
	if err := c.Validate(); err != nil {
		t.Fatalf("valid distortion refused: %v", err)
	}
	again, err := Parse(Format(c, ""), "recipe")
	if err != nil {
		t.Fatal(err)
	}
	if again.Config.Grid != c.Grid {
		t.Errorf("round trip changed the grid: %+v → %+v", c.Grid, again.Config.Grid)
	}
	for _, tc := range []struct {
		sets []string
		want string
	}{
		{[]string{"grid.distort=0.3"}, "grid.distort = 0.3"},
		{[]string{"grid.distort=-0.01"}, "grid.distort = -0.01"},
		{[]string{"grid.jitter=0.3"}, "grid.jitter = 0.3"},
		{[]string{"grid.jitter=0.1", "grid.seed=-2"}, "grid.seed = -2"},
		{[]string{"grid.kind=cubed", "grid.n=8", "initial.case=williamson-2", "grid.distort=0.1"}, "grid.distort = 0.1"},
		{[]string{"grid.kind=icosahedral", "grid.n=3", "initial.case=williamson-2", "grid.jitter=0.1"}, "grid.jitter = 0.1"},
		{[]string{"grid.kind=cubed", "grid.n=8"}, `grid.kind = "cubed" does not`},
		{[]string{"grid.kind=cubed", "grid.n=1", "initial.case=williamson-2"}, "grid.n = 1"},
		{[]string{"grid.kind=cubed", "grid.n=8", "initial.case=williamson-2", "grid.optimize=lloyd"}, `grid.optimize = "lloyd"`},
	} {
		c := sim.DefaultConfig()
		for _, a := range tc.sets {
			if err := Set(&c, a); err != nil {
				t.Fatalf("Set(%q): %v", a, err)
			}
		}
		if err := c.Validate(); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%v: Validate() = %v, want an error containing %q", tc.sets, err, tc.want)
		}
	}
}

// scheme.hodge is set, written to the recipe only when it is not the
// default, parsed back, and refused with the key, the value and the
// allowed values when unknown; square-grid schemes are refused on
// distorted quads.
func TestSchemeHodgeKey(t *testing.T) {
	for _, h := range []string{"consistent", "diagonal"} {
		c := sim.DefaultConfig()
		for _, a := range []string{"grid.kind=quad", "grid.n=16", "grid.jitter=0.1", "scheme.hodge=" + h} {
			if err := Set(&c, a); err != nil {
				t.Fatalf("Set(%q): %v", a, err)
			}
		}
		if c.Scheme.Hodge != h {
			t.Fatalf("scheme.hodge = %q after --set %s", c.Scheme.Hodge, h)
		}
		if err := c.Validate(); err != nil {
			t.Fatalf("scheme.hodge = %s refused: %v", h, err)
		}
		recipe := Format(c, "")
		if strings.Contains(string(recipe), "hodge") != (h != "consistent") {
			t.Errorf("scheme.hodge = %s: recipe\n%s", h, recipe)
		}
		again, err := Parse(recipe, "recipe")
		if err != nil {
			t.Fatal(err)
		}
		if again.Config.Scheme != c.Scheme {
			t.Errorf("round trip changed the scheme: %+v → %+v", c.Scheme, again.Config.Scheme)
		}
	}
	c := sim.DefaultConfig()
	if err := Set(&c, "scheme.hodge=mixed"); err != nil {
		t.Fatal(err)
	}
	err := c.Validate()
	for _, want := range []string{"scheme.hodge", `"mixed"`, "consistent, diagonal"} {
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("Validate() = %v, want an error containing %s", err, want)
		}
	}
	if _, err := Parse([]byte("[scheme]\nhodge = \"mixed\"\n"), "f.toml"); err != nil {
		t.Fatalf("parse: %v", err) // types only; Validate names the value
	}
	c = sim.DefaultConfig()
	for _, a := range []string{"grid.kind=quad", "grid.n=16", "grid.distort=0.1", "scheme.name=al81"} {
		if err := Set(&c, a); err != nil {
			t.Fatal(err)
		}
	}
	if err := c.Validate(); err == nil || !strings.Contains(err.Error(), "regular quad") {
		t.Errorf("al81 on a distorted quad: Validate() = %v", err)
	}
}

// The Lloyd relaxation of a scenario written for the icosahedral grid
// stays with that grid: --set grid.kind=cubed drops it (and the run
// validates), while a relaxation asked for after the change is refused.
func TestSetGridKindDropsRelaxation(t *testing.T) {
	src, err := scenarios.Source("williamson-2")
	if err != nil {
		t.Fatal(err)
	}
	s, err := Parse(src, "williamson-2")
	if err != nil {
		t.Fatal(err)
	}
	if s.Config.Grid.Optimize != "lloyd" {
		t.Fatalf("williamson-2 has grid.optimize = %q; the test needs a relaxed grid", s.Config.Grid.Optimize)
	}
	c := s.Config.Clone()
	for _, a := range []string{"grid.kind=cubed", "grid.n=8"} {
		if err := Set(&c, a); err != nil {
			t.Fatal(err)
		}
	}
	if c.Grid.Optimize != "" {
		t.Errorf("grid.optimize = %q after grid.kind=cubed, want it dropped", c.Grid.Optimize)
	}
	if err := c.Validate(); err != nil {
		t.Errorf("williamson-2 on the cubed sphere: %v", err)
	}
	back := c.Clone()
	if err := Set(&back, "grid.kind=icosahedral"); err != nil || back.Grid.Optimize != "" {
		t.Errorf("grid.kind=icosahedral: optimize %q, %v; want it still dropped", back.Grid.Optimize, err)
	}
	same := s.Config.Clone()
	if err := Set(&same, "grid.kind=icosahedral"); err != nil || same.Grid.Optimize != "lloyd" {
		t.Errorf("grid.kind=icosahedral on an icosahedral scenario: optimize %q, %v; want lloyd kept", same.Grid.Optimize, err)
	}
}
