package scheme

import (
	"fmt"
	"math"
	"testing"

	"gyrebench/sim/mesh"
	"gyrebench/sim/par"
	"gyrebench/sim/step"
)

// families is one small mesh of every grid family, and the distorted
// planes with their general Hodge star and with the diagonal one.
var families = []struct {
	name    string
	spec    mesh.Spec
	general bool // distort the grid and use its general Hodge star
}{
	{"quad", mesh.Spec{Kind: mesh.Quad, N: 8, Length: 2e6}, false},
	{"hex", mesh.Spec{Kind: mesh.Hex, N: 8, Length: 2e6}, false},
	{"tri", mesh.Spec{Kind: mesh.Tri, N: 8, Length: 2e6}, false},
	{"icosahedral", mesh.Spec{Kind: mesh.Icosahedral, N: 2, Radius: 6.37122e6}, false},
	{"cubed", mesh.Spec{Kind: mesh.Cubed, N: 4, Radius: 6.37122e6}, false},
	{"cubed, general H", mesh.Spec{Kind: mesh.Cubed, N: 4, Radius: 6.37122e6}, true},
	{"distorted quad, diagonal H", mesh.Spec{Kind: mesh.Quad, N: 8, Length: 2e6, Distort: 0.15, Jitter: 0.1, Seed: 4}, false},
	{"distorted quad, general H", mesh.Spec{Kind: mesh.Quad, N: 8, Length: 2e6}, true},
	{"distorted hex, general H", mesh.Spec{Kind: mesh.Hex, N: 8, Length: 2e6}, true},
	{"distorted tri, general H", mesh.Spec{Kind: mesh.Tri, N: 8, Length: 2e6}, true},
}

// familyFixture builds the random state of a family's mesh.
func familyFixture(t testing.TB, spec mesh.Spec, general bool) fixture {
	if !general {
		return randomFixtureOn(t, spec, 5)
	}
	if spec.Kind.OnSphere() {
		f := randomFixtureOn(t, spec, 5)
		if err := mesh.EnsureHodge(f.m); err != nil || f.m.Hodge == nil {
			t.Fatalf("%s: no general Hodge star (%v)", spec.Kind, err)
		}
		return f
	}
	return distorted(t, spec, 5)
}

// schemesOn lists the schemes that run on the fixture's grid: the
// square-grid stencils only on the undistorted quad grid.
func schemesOn(f fixture) []string {
	if f.m.Hodge != nil || !f.m.Orthogonal {
		return Anywhere()
	}
	return Available(f.g)
}

// advance runs steps of the integrator on a copy of the fixture's state
// with w workers, staged (step.StagedStepper with the scheme's Stage and,
// for rk3, StageThen) or through Tendency, and returns the final state.
func advance(t *testing.T, f fixture, name, integ string, staged bool, w, steps int) []float64 {
	t.Helper()
	pool := par.New(w)
	defer pool.Close()
	s, err := New(name, f.g, f.phys, pool, Options{})
	if err != nil {
		t.Fatal(err)
	}
	const dt = 20
	s.SetDt(dt)
	in, err := step.New(integ, len(f.x), step.Options{For: pool.For})
	if err != nil {
		t.Fatal(err)
	}
	x := append([]float64(nil), f.x...)
	for i := 0; i < steps; i++ {
		if staged {
			in.(step.StagedStepper).StepStaged(s.(step.Stager), x, dt)
		} else {
			in.Step(s.Tendency, x, dt)
		}
	}
	return x
}

// Every scheme on every grid family gives the same bits for 1, 2 and 4
// workers, through rk3 (staged, with the stages chained, and plain, which
// must agree with each other bit for bit) and rk4: every loop is split in
// contiguous chunks and each output is computed in one place in one order.
func TestBitIdenticalWorkersEveryFamily(t *testing.T) {
	for _, fam := range families {
		f := familyFixture(t, fam.spec, fam.general)
		for _, name := range schemesOn(f) {
			_, stager := mustScheme(t, name, f).(step.Stager)
			type path struct {
				integ  string
				staged bool
			}
			paths := []path{{step.RK3, false}, {step.RK4, false}}
			if testing.Short() {
				paths = paths[:1] // rk3 only: the race detector makes every step slow
			}
			if stager {
				paths = append(paths, path{step.RK3, true})
			}
			steps := 3
			if testing.Short() {
				steps = 1
			}
			ref := map[string][]float64{}
			for _, p := range paths {
				for _, w := range []int{1, 2, 4} {
					got := advance(t, f, name, p.integ, p.staged, w, steps)
					want, ok := ref[p.integ]
					if !ok {
						ref[p.integ] = got
						continue
					}
					for k := range got {
						if math.Float64bits(got[k]) != math.Float64bits(want[k]) {
							t.Fatalf("%s, %s, %s (staged %t), %d workers: element %d is %v, %v with 1 worker unstaged",
								fam.name, name, p.integ, p.staged, w, k, got[k], want[k])
						}
					}
				}
			}
		}
	}
}

func mustScheme(t testing.TB, name string, f fixture) Scheme {
	s, err := New(name, f.g, f.phys, par.New(1), Options{})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// A tendency, a stage, a plain step and a staged rk3 step allocate
// nothing, for every scheme and grid family, with one and two workers
// (one under -short).
func TestZeroAllocationsEveryFamily(t *testing.T) {
	runs, workers := 10, []int{1, 2}
	if testing.Short() {
		// The race detector slows the spinning pool of two workers on a
		// busy machine by minutes; par's own test covers its allocations.
		runs, workers = 2, []int{1}
	}
	for _, fam := range families {
		f := familyFixture(t, fam.spec, fam.general)
		for _, w := range workers {
			pool := par.New(w)
			for _, name := range schemesOn(f) {
				s, err := New(name, f.g, f.phys, pool, Options{})
				if err != nil {
					t.Fatal(err)
				}
				s.SetDt(20)
				what := fmt.Sprintf("%s, %s, %d workers", fam.name, name, w)
				dx := make([]float64, len(f.x))
				x := append([]float64(nil), f.x...)
				if a := testing.AllocsPerRun(runs, func() { s.Tendency(dx, f.x) }); a != 0 {
					t.Errorf("%s: %v allocations per tendency", what, a)
				}
				for _, integ := range []string{step.RK3, step.RK4} {
					in, _ := step.New(integ, len(x), step.Options{For: pool.For})
					tend := s.Tendency
					if a := testing.AllocsPerRun(runs, func() { in.Step(tend, x, 1) }); a != 0 {
						t.Errorf("%s: %v allocations per %s step", what, a, integ)
					}
				}
				st, ok := s.(step.Stager)
				if !ok {
					continue
				}
				x0 := append([]float64(nil), f.x...)
				if a := testing.AllocsPerRun(runs, func() { st.Stage(x, x0, 0.75, 0.25, 1) }); a != 0 {
					t.Errorf("%s: %v allocations per stage", what, a)
				}
				in, _ := step.New(step.RK3, len(x), step.Options{For: pool.For})
				staged := in.(step.StagedStepper)
				if a := testing.AllocsPerRun(runs, func() { staged.StepStaged(st, x, 1) }); a != 0 {
					t.Errorf("%s: %v allocations per staged rk3 step", what, a)
				}
			}
			pool.Close()
		}
	}
}
