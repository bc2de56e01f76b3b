package sim

import (
	"errors"
	"math"
	"testing"
)

// The blow-up scan reports the first bad value: a non-positive or
// non-finite depth, else a non-finite velocity, wherever it sits in its
// block and in whichever of the scan's four lanes, with any number of
// workers, and nothing for a good state.
func TestCheckFindsFirstBadValue(t *testing.T) {
	for _, w := range []int{1, 2, 3} {
		checkFindsFirstBadValue(t, w)
	}
}

func checkFindsFirstBadValue(t *testing.T, workers int) {
	cfg := DefaultConfig()
	cfg.Grid = GridConfig{Kind: "hex", N: 32, Length: 1e6}
	m := mustModel(t, cfg, workers)
	nc := m.Mesh().NumCells
	good := append([]float64(nil), m.State()...)
	type bad struct {
		at int // index in the state vector
		v  float64
	}
	cases := []struct {
		name       string
		bads       []bad
		cell, edge int // want; both −1 for no error
	}{
		{"good", nil, -1, -1},
		{"zero depth", []bad{{700, 0}}, 700, -1},
		{"negative zero depth", []bad{{3, math.Copysign(0, -1)}}, 3, -1},
		{"negative depth", []bad{{nc - 1, -1}}, nc - 1, -1},
		{"NaN depth", []bad{{513, math.NaN()}}, 513, -1},
		{"NaN depth, third lane", []bad{{514, math.NaN()}}, 514, -1},
		{"zero depth, fourth lane", []bad{{519, 0}}, 519, -1},
		{"infinite velocity, second lane", []bad{{nc + 2049, math.Inf(1)}}, -1, 2049},
		{"infinite depth", []bad{{0, math.Inf(1)}}, 0, -1},
		{"minus infinite depth", []bad{{600, math.Inf(-1)}}, 600, -1},
		{"NaN velocity", []bad{{nc + 1000, math.NaN()}}, -1, 1000},
		{"infinite velocity", []bad{{nc + 511, math.Inf(1)}}, -1, 511},
		{"minus infinite velocity", []bad{{len(good) - 1, math.Inf(-1)}}, -1, len(good) - 1 - nc},
		{"first of two depths", []bad{{900, -2}, {20, math.NaN()}}, 20, -1},
		{"depth before velocity", []bad{{nc + 5, math.NaN()}, {nc - 2, 0}}, nc - 2, -1},
	}
	for _, c := range cases {
		x := append([]float64(nil), good...)
		for _, b := range c.bads {
			x[b.at] = b.v
		}
		copy(m.x, x)
		got := m.check()
		switch {
		case c.cell < 0 && c.edge < 0:
			if got != nil {
				t.Errorf("%d workers, %s: got %v, want no error", workers, c.name, got)
			}
		case got == nil:
			t.Errorf("%d workers, %s: no error, want cell %d edge %d", workers, c.name, c.cell, c.edge)
		case got.Cell != c.cell || got.Edge != c.edge:
			t.Errorf("%d workers, %s: got cell %d edge %d, want cell %d edge %d", workers, c.name, got.Cell, got.Edge, c.cell, c.edge)
		}
	}
	copy(m.x, good)
}

// With a Runge–Kutta integrator the model undoes a failed step from the
// integrator's own copy of the step's start; the state must come back bit
// for bit.
func TestBlowUpRewindsRungeKutta(t *testing.T) {
	for _, integ := range []string{"rk3", "rk4"} {
		cfg := DefaultConfig()
		cfg.Grid = GridConfig{Kind: "hex", N: 16, Length: 1e6}
		cfg.Time.Integrator = integ
		cfg.Time.Dt = 3000 // far past the gravity-wave limit of either
		m := mustModel(t, cfg, 2)
		var bu *BlowUpError
		for i := 0; i < 2000 && bu == nil; i++ {
			before := append([]float64(nil), m.State()...)
			err := m.Step()
			if err == nil {
				continue
			}
			if !errors.As(err, &bu) {
				t.Fatalf("%s: step error %v is not a *BlowUpError", integ, err)
			}
			for k, v := range m.State() {
				if math.Float64bits(v) != math.Float64bits(before[k]) {
					t.Fatalf("%s: after the blow-up the state differs from the last good one at %d", integ, k)
				}
			}
			if m.Steps() != int64(i) {
				t.Errorf("%s: %d steps counted after %d good ones", integ, m.Steps(), i)
			}
		}
		if bu == nil {
			t.Fatalf("%s at Δt = 3000 s did not blow up", integ)
		}
	}
}

// Bit-identical states for any number of workers on the grids with the
// specialised kernels (hexagons; the sphere's hexagons, pentagons and
// three-edge vertices), through the staged rk3 step and plain rk4.
func TestBitIdenticalWorkersHexAndSphere(t *testing.T) {
	hex := DefaultConfig()
	hex.Grid = GridConfig{Kind: "hex", N: 32, Length: 1e6}
	hex.Initial.Case = "turbulence"
	sphere := DefaultConfig()
	sphere.Grid = GridConfig{Kind: "icosahedral", N: 3}
	sphere.Initial.Case = "williamson-6"
	sphere.Time.Dt = 600
	for _, cfg := range []Config{hex, sphere} {
		for _, integ := range []string{"rk3", "rk4"} {
			cfg.Time.Integrator = integ
			var ref []float64
			for _, w := range []int{1, 2, 3, 4} {
				m := steppedModel(t, cfg, w, 10)
				if ref == nil {
					ref = append([]float64(nil), m.State()...)
					continue
				}
				for k, v := range m.State() {
					if math.Float64bits(v) != math.Float64bits(ref[k]) {
						t.Fatalf("%s %s: workers=%d differs at %d", cfg.Grid.Kind, integ, w, k)
					}
				}
			}
		}
	}
}

// steppedModel returns a model of cfg with the given workers, after n
// steps.
func steppedModel(t *testing.T, cfg Config, workers, n int) *Model {
	t.Helper()
	m := mustModel(t, cfg, workers)
	for i := 0; i < n; i++ {
		if err := m.Step(); err != nil {
			t.Fatal(err)
		}
	}
	return m
}

// A step, its blow-up check and the copy it keeps of the last good state
// allocate nothing, with one worker or several.
func TestStepAllocatesNothing(t *testing.T) {
	for _, integ := range []string{"rk3", "rk4", "leapfrog", "euler"} {
		for _, w := range []int{1, 2} {
			cfg := DefaultConfig()
			cfg.Grid = GridConfig{Kind: "hex", N: 16, Length: 1e6}
			cfg.Time.Integrator = integ
			m := mustModel(t, cfg, w)
			if a := testing.AllocsPerRun(20, func() {
				if err := m.Step(); err != nil {
					t.Fatal(err)
				}
			}); a != 0 {
				t.Errorf("%s, %d workers: %v allocations per step, want 0", integ, w, a)
			}
		}
	}
}
