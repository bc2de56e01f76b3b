package step

import (
	"math"
	"testing"
)

// oscillator is y′ = iωy written as a real system x = (Re y, Im y).
func oscillator(omega float64) Tendency {
	return func(dst, x []float64) {
		dst[0] = -omega * x[1]
		dst[1] = omega * x[0]
	}
}

func amplitude(name string, z float64, steps int) float64 {
	in, _ := New(name, 2, Options{})
	x := []float64{1, 0}
	for i := 0; i < steps; i++ {
		in.Step(oscillator(1), x, z)
	}
	return math.Hypot(x[0], x[1])
}

// Stability on the imaginary axis: stable just below the bound, unstable
// just above (references: any 3-stage third-order RK √3, classical RK4 2√2,
// leapfrog 1; e.g. Durran 2010, Numerical Methods for Fluid Dynamics, §2.3,
// from memory; TestEnergyChangePerStep derives them from the polynomials).
func TestImaginaryAxisStability(t *testing.T) {
	for _, name := range []string{RK3, RK4, Leapfrog} {
		lim := ImaginaryAxisLimit(name, Options{})
		if a := amplitude(name, 0.99*lim, 2000); a > 1.0001 && name != Leapfrog || a > 1.5 {
			t.Errorf("%s at z = 0.99 × %.4f: amplitude %g after 2000 steps, want bounded", name, lim, a)
		}
		if a := amplitude(name, 1.01*lim, 2000); a < 10 {
			t.Errorf("%s at z = 1.01 × %.4f: amplitude %g after 2000 steps, want growth", name, lim, a)
		}
	}
	// Without the filter the leapfrog bound is exactly 1; the filter
	// lowers it a little.
	if l := ImaginaryAxisLimit(Leapfrog, Options{Asselin: 1e-9}); math.Abs(l-1) > 1e-6 {
		t.Errorf("unfiltered leapfrog bound %g, want 1", l)
	}
	if l := ImaginaryAxisLimit(Leapfrog, Options{}); !(l < 1 && l > 0.8) {
		t.Errorf("filtered leapfrog bound %g, want a little below 1", l)
	}
	if a := amplitude(Euler, 0.01, 1000); !(a > 1) {
		t.Errorf("euler: amplitude %g, want growth for every z", a)
	}
}

// The energy change per step of a skew system: |R(iz)|² − 1 = −z⁴/12 + z⁶/36
// for rk3 and −z⁶/72 + z⁸/576 for rk4, +z² for euler (derived here from
// the stability polynomials R(iz) = Σ_{k≤p} (iz)ᵏ/k!; e.g. Durran 2010,
// Numerical Methods for Fluid Dynamics, 2nd ed., ch. 2, from memory).
func TestEnergyChangePerStep(t *testing.T) {
	for _, z := range []float64{0.1, 0.3, 0.7} {
		want := map[string]float64{
			RK3:   -math.Pow(z, 4)/12 + math.Pow(z, 6)/36,
			RK4:   -math.Pow(z, 6)/72 + math.Pow(z, 8)/576,
			Euler: z * z,
		}
		for name, w := range want {
			a := amplitude(name, z, 1)
			if got := a*a - 1; math.Abs(got-w) > 1e-12+1e-9*math.Abs(w) {
				t.Errorf("%s z=%g: |R|² − 1 = %.15g, want %.15g", name, z, got, w)
			}
		}
	}
}

// Convergence order on a nonlinear problem with a known solution:
// x′ = −x², x(0) = 1, x(t) = 1/(1+t). The observed order from halving Δt
// must match the method's order (rk3 3, rk4 4, leapfrog 2, euler 1).
func TestConvergenceOrder(t *testing.T) {
	f := func(dst, x []float64) { dst[0] = -x[0] * x[0] }
	errAt := func(name string, n int) float64 {
		in, _ := New(name, 1, Options{Asselin: 1e-12})
		x := []float64{1}
		dt := 1.0 / float64(n)
		for i := 0; i < n; i++ {
			in.Step(f, x, dt)
		}
		return math.Abs(x[0] - 0.5)
	}
	for name, order := range map[string]float64{RK3: 3, RK4: 4, Leapfrog: 2, Euler: 1} {
		e1, e2 := errAt(name, 40), errAt(name, 80)
		if p := math.Log2(e1 / e2); math.Abs(p-order) > 0.15 {
			t.Errorf("%s: observed order %.3f, want %g", name, p, order)
		}
	}
}

func TestZeroAllocations(t *testing.T) {
	f := oscillator(1)
	for _, name := range Names {
		in, _ := New(name, 2, Options{})
		x := []float64{1, 0}
		if a := testing.AllocsPerRun(50, func() { in.Step(f, x, 0.1) }); a != 0 {
			t.Errorf("%s: %v allocations per step", name, a)
		}
	}
}

func TestBadInput(t *testing.T) {
	if _, err := New("ab2", 1, Options{}); err == nil {
		t.Error("unknown integrator accepted")
	}
	if _, err := New(Leapfrog, 1, Options{Asselin: 0.7}); err == nil {
		t.Error("Asselin 0.7 accepted")
	}
}

// stagedOscillator is the oscillator as a Stager, with the element-wise
// arithmetic the Stager contract fixes.
type stagedOscillator struct{ omega float64 }

func (s stagedOscillator) Stage(x, x0 []float64, a, b, dt float64) {
	f := []float64{-s.omega * x[1], s.omega * x[0]}
	for i := range x {
		if a == 0 && b == 1 {
			x[i] = x[i] + dt*f[i]
		} else {
			x[i] = a*x0[i] + b*(x[i]+dt*f[i])
		}
	}
}

// A staged rk3 step is the plain one, bit for bit, and Rewind brings back
// the start of the last step; with a parallel For the loops give the same
// bits too.
func TestStagedStepMatchesStep(t *testing.T) {
	split := func(n int, body func(lo, hi int)) {
		body(0, n/3)
		body(n/3, n)
	}
	for _, loop := range []func(int, func(int, int)){nil, split} {
		plain, _ := New(RK3, 2, Options{For: loop})
		staged, _ := New(RK3, 2, Options{For: loop})
		x, y := []float64{1, 0.25}, []float64{1, 0.25}
		for i := 0; i < 50; i++ {
			start := append([]float64(nil), y...)
			plain.Step(oscillator(1.3), x, 0.37)
			staged.(StagedStepper).StepStaged(stagedOscillator{1.3}, y, 0.37)
			for k := range x {
				if math.Float64bits(x[k]) != math.Float64bits(y[k]) {
					t.Fatalf("step %d: staged %v, plain %v", i, y, x)
				}
			}
			z := append([]float64(nil), y...)
			staged.(Rewinder).Rewind(z)
			if z[0] != start[0] || z[1] != start[1] {
				t.Fatalf("step %d: Rewind gives %v, the step started at %v", i, z, start)
			}
		}
	}
}
