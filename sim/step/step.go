// Package step holds the time integrators. An integrator advances a flat
// state vector in place with any tendency function; it knows nothing of
// meshes or schemes. Step allocates nothing: scratch vectors are sized once,
// at construction.
//
// Stability on the imaginary axis (linear oscillation y′ = iωy, z = ωΔt),
// which bounds the time step of the non-dissipative C-grid schemes:
// rk3 |z| ≤ √3, rk4 |z| ≤ 2√2, leapfrog |z| ≤ 1, euler never stable
// (forward Euler amplifies every oscillation by √(1+z²) per step).
package step

import (
	"fmt"
	"math/cmplx"
	"strings"
)

// Integrator names.
const (
	RK3      = "rk3"
	RK4      = "rk4"
	Leapfrog = "leapfrog"
	Euler    = "euler"
)

// Names lists every integrator.
var Names = []string{RK3, RK4, Leapfrog, Euler}

// Tendency sets dst = dx/dt. dst and x never alias.
type Tendency func(dst, x []float64)

// Integrator advances a state vector by one step.
type Integrator interface {
	Name() string
	// Step advances x in place by dt.
	Step(f Tendency, x []float64, dt float64)
	// Restart forgets any history (multi-step methods), for when the state,
	// the tendency or dt is changed from outside.
	Restart()
}

// ImaginaryAxisLimit returns the largest |ωΔt| for which the integrator is
// stable on the imaginary axis, or 0 when it is unstable for every ω ≠ 0.
// For leapfrog it accounts for the Robert–Asselin filter, which lowers the
// unfiltered bound of 1.
func ImaginaryAxisLimit(name string, opt Options) float64 {
	switch name {
	case RK3:
		return 1.7320508075688772 // √3
	case RK4:
		return 2.8284271247461903 // 2√2
	case Leapfrog:
		return leapfrogLimit(opt.asselin())
	}
	return 0
}

// leapfrogLimit finds the stability bound of filtered leapfrog by
// bisection. With state (x̄^{n−1}, x^n) one step is the matrix
// [[2ν, 1−2ν+2iνz], [1, 2iz]], whose eigenvalues solve
// λ² − 2(ν + iz)λ + (2ν − 1 + 2iνz) = 0.
func leapfrogLimit(nu float64) float64 {
	unstable := func(z float64) bool {
		b := complex(-2*nu, -2*z)
		c := complex(2*nu-1, 2*nu*z)
		d := cmplx.Sqrt(b*b - 4*c)
		return max(cmplx.Abs((-b+d)/2), cmplx.Abs((-b-d)/2)) > 1+1e-12
	}
	lo, hi := 0.0, 1.0
	for range 60 {
		mid := (lo + hi) / 2
		if unstable(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return lo
}

// Options tunes the integrators.
type Options struct {
	// Asselin is the Robert–Asselin filter coefficient ν of leapfrog;
	// 0 means the default 0.05. Customary values are 0.01–0.2 (common
	// practice).
	Asselin float64
}

// DefaultAsselin is the default Robert–Asselin coefficient.
const DefaultAsselin = 0.05

func (o Options) asselin() float64 {
	if o.Asselin == 0 {
		return DefaultAsselin
	}
	return o.Asselin
}

// New returns the named integrator for states of length n.
func New(name string, n int, opt Options) (Integrator, error) {
	if opt.Asselin < 0 || opt.Asselin >= 0.5 {
		return nil, fmt.Errorf("time.asselin = %g: must be in [0, 0.5)", opt.Asselin)
	}
	switch name {
	case RK3:
		return &ssprk3{x0: make([]float64, n), k: make([]float64, n)}, nil
	case RK4:
		return &rk4{x0: make([]float64, n), xs: make([]float64, n), k: make([]float64, n), acc: make([]float64, n)}, nil
	case Leapfrog:
		return &leapfrog{nu: opt.asselin(), prev: make([]float64, n), k: make([]float64, n)}, nil
	case Euler:
		return &euler{k: make([]float64, n)}, nil
	}
	return nil, fmt.Errorf("time.integrator = %q: unknown; allowed: %s", name, strings.Join(Names, ", "))
}

// ssprk3 is the three-stage, third-order strong-stability-preserving
// Runge–Kutta method of Shu & Osher (1988, J. Comput. Phys. 77, 439–471,
// eq. 2.18):
//
//	x1 = x + Δt f(x)
//	x2 = ¾ x + ¼ (x1 + Δt f(x1))
//	x' = ⅓ x + ⅔ (x2 + Δt f(x2))
type ssprk3 struct{ x0, k []float64 }

func (s *ssprk3) Name() string { return RK3 }
func (s *ssprk3) Restart()     {}
func (s *ssprk3) Step(f Tendency, x []float64, dt float64) {
	x0, k := s.x0, s.k
	copy(x0, x)
	f(k, x)
	for i := range x {
		x[i] = x0[i] + dt*k[i]
	}
	f(k, x)
	for i := range x {
		x[i] = 0.75*x0[i] + 0.25*(x[i]+dt*k[i])
	}
	f(k, x)
	for i := range x {
		x[i] = x0[i]/3 + 2.0/3*(x[i]+dt*k[i])
	}
}

// rk4 is the classical fourth-order Runge–Kutta method.
type rk4 struct{ x0, xs, k, acc []float64 }

func (s *rk4) Name() string { return RK4 }
func (s *rk4) Restart()     {}
func (s *rk4) Step(f Tendency, x []float64, dt float64) {
	x0, xs, k, acc := s.x0, s.xs, s.k, s.acc
	copy(x0, x)
	f(k, x0)
	for i := range x {
		acc[i] = k[i]
		xs[i] = x0[i] + 0.5*dt*k[i]
	}
	f(k, xs)
	for i := range x {
		acc[i] += 2 * k[i]
		xs[i] = x0[i] + 0.5*dt*k[i]
	}
	f(k, xs)
	for i := range x {
		acc[i] += 2 * k[i]
		xs[i] = x0[i] + dt*k[i]
	}
	f(k, xs)
	for i := range x {
		x[i] = x0[i] + dt/6*(acc[i]+k[i])
	}
}

// leapfrog is x^{n+1} = x̄^{n−1} + 2Δt f(x^n) with the Robert–Asselin filter
// x̄^n = x^n + ν(x̄^{n−1} − 2x^n + x^{n+1}) (Asselin 1972, Mon. Wea. Rev.
// 100, 487–490). The first step after a restart is a forward Euler step.
type leapfrog struct {
	nu      float64
	prev, k []float64 // x̄^{n−1}, scratch
	started bool
}

func (s *leapfrog) Name() string { return Leapfrog }
func (s *leapfrog) Restart()     { s.started = false }
func (s *leapfrog) Step(f Tendency, x []float64, dt float64) {
	f(s.k, x)
	if !s.started {
		copy(s.prev, x)
		for i := range x {
			x[i] += dt * s.k[i]
		}
		s.started = true
		return
	}
	nu := s.nu
	for i, xn := range x {
		next := s.prev[i] + 2*dt*s.k[i]
		s.prev[i] = xn + nu*(s.prev[i]-2*xn+next)
		x[i] = next
	}
}

// euler is forward Euler, kept to show an unconditionally unstable method.
type euler struct{ k []float64 }

func (s *euler) Name() string { return Euler }
func (s *euler) Restart()     {}
func (s *euler) Step(f Tendency, x []float64, dt float64) {
	f(s.k, x)
	for i := range x {
		x[i] += dt * s.k[i]
	}
}
