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

// Rewinder is implemented by integrators that keep the state at the start
// of their last step (the Runge–Kutta methods), so that a caller who must
// undo a step needs no copy of its own.
type Rewinder interface {
	// Rewind sets x back to the state at the start of the last Step.
	Rewind(x []float64)
}

// Stager is a tendency that also finishes a Runge–Kutta stage in the same
// sweep over the mesh, so that the tendency itself never needs storing:
// Stage sets
//
//	x ← a x0 + b (x + Δt f(x))
//
// in place, with x0 only read; a = 0, b = 1 give x + Δt f(x) exactly, and
// x0 is not read then. The arithmetic must be exactly that, element by
// element, so that a staged step and a plain one agree bit for bit.
type Stager interface {
	Stage(x, x0 []float64, a, b, dt float64)
}

// ChainStager is a Stager that can start the next stage inside this one.
// StageThen does what Stage does; the caller promises that its next call
// is Stage or StageThen on the same x, changed by nothing in between, so
// that work of the next stage done now (on values just written) stays
// valid. The results are those of Stage, bit for bit.
type ChainStager interface {
	Stager
	StageThen(x, x0 []float64, a, b, dt float64)
}

// StagedStepper is implemented by integrators whose every stage has the
// form of Stager (rk3). StepStaged advances x exactly as Step does with the
// stager's tendency, and needs no tendency vector.
type StagedStepper interface {
	StepStaged(s Stager, x []float64, dt float64)
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
	return bisect(0, 1, 60, func(z float64) bool { return !unstable(z) })
}

// bisect halves [lo, hi] n times, keeping ok true at lo and false at hi,
// and returns the final lo.
func bisect(lo, hi float64, n int, ok func(float64) bool) float64 {
	for range n {
		mid := (lo + hi) / 2
		if ok(mid) {
			lo = mid
		} else {
			hi = mid
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
	// For runs the integrator's element-wise loops: it must call body on
	// contiguous ranges that cover [0, n) once each and return when all are
	// done (par.Pool.For does). Every element is computed the same way
	// whatever the ranges, so results do not depend on it. nil runs the
	// loops in the calling goroutine.
	For func(n int, body func(lo, hi int))
}

// serial is the default Options.For.
func serial(n int, body func(lo, hi int)) { body(0, n) }

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
	loop := opt.For
	if loop == nil {
		loop = serial
	}
	// Fresh scratch is written once here, so that the first step does not
	// pay for faulting its pages in (on a virtual machine, milliseconds per
	// MB the first time).
	vec := func() []float64 {
		v := make([]float64, n)
		clear(v)
		return v
	}
	switch name {
	case RK3:
		s := &ssprk3{loop: loop, x0: vec()}
		s.stages = [3]func(lo, hi int){s.stage1, s.stage2, s.stage3}
		s.save = s.doSave
		return s, nil
	case RK4:
		s := &rk4{loop: loop, x0: vec(), xs: vec(), k: vec(), acc: vec()}
		s.stages = [4]func(lo, hi int){s.stage1, s.stage2, s.stage3, s.stage4}
		return s, nil
	case Leapfrog:
		s := &leapfrog{loop: loop, nu: opt.asselin(), prev: vec(), k: vec()}
		s.first, s.next = s.doFirst, s.doNext
		return s, nil
	case Euler:
		s := &euler{loop: loop, k: vec()}
		s.update = s.doUpdate
		return s, nil
	}
	return nil, fmt.Errorf("time.integrator = %q: unknown; allowed: %s", name, strings.Join(Names, ", "))
}

// The element-wise loops below are method values built once, so that a
// step allocates nothing; x and dt of the step in progress are fields.

// ssprk3 is the three-stage, third-order strong-stability-preserving
// Runge–Kutta method of Shu & Osher (1988, J. Comput. Phys. 77, 439–471,
// eq. 2.18):
//
//	x1 = x + Δt f(x)
//	x2 = ¾ x + ¼ (x1 + Δt f(x1))
//	x' = ⅓ x + ⅔ (x2 + Δt f(x2))
type ssprk3 struct {
	loop   func(n int, body func(lo, hi int))
	x0, k  []float64 // k only once Step is used: StepStaged needs none
	x      []float64
	dt     float64
	stages [3]func(lo, hi int)
	save   func(lo, hi int)
}

func (s *ssprk3) Name() string       { return RK3 }
func (s *ssprk3) Restart()           {}
func (s *ssprk3) Rewind(x []float64) { copy(x, s.x0) }
func (s *ssprk3) Step(f Tendency, x []float64, dt float64) {
	if s.k == nil {
		s.k = make([]float64, len(s.x0))
	}
	s.x, s.dt = x, dt
	for _, stage := range s.stages {
		f(s.k, x)
		s.loop(len(x), stage)
	}
	s.x = nil
}

// The stage coefficients of StepStaged are those of stage1–stage3.
func (s *ssprk3) StepStaged(st Stager, x []float64, dt float64) {
	s.x = x
	s.loop(len(x), s.save)
	s.x = nil
	then := st.Stage
	if c, ok := st.(ChainStager); ok {
		then = c.StageThen
	}
	then(x, s.x0, 0, 1, dt)
	then(x, s.x0, 0.75, 0.25, dt)
	st.Stage(x, s.x0, 1.0/3, 2.0/3, dt)
}

func (s *ssprk3) doSave(lo, hi int) { copy(s.x0[lo:hi], s.x[lo:hi]) }

// stage1 also saves the start of the step, which f(k, x) has only read.
func (s *ssprk3) stage1(lo, hi int) { saveThenEuler(s.x[lo:hi], s.x0[lo:hi], s.k[lo:hi], s.dt) }

func (s *ssprk3) stage2(lo, hi int) {
	x, x0, k, dt := s.x[lo:hi], s.x0[lo:hi], s.k[lo:hi], s.dt
	x0, k = x0[:len(x)], k[:len(x)]
	for i := range x {
		x[i] = 0.75*x0[i] + 0.25*(x[i]+dt*k[i])
	}
}

func (s *ssprk3) stage3(lo, hi int) {
	x, x0, k, dt := s.x[lo:hi], s.x0[lo:hi], s.k[lo:hi], s.dt
	x0, k = x0[:len(x)], k[:len(x)]
	const third, twoThirds = 1.0 / 3, 2.0 / 3
	for i := range x {
		x[i] = third*x0[i] + twoThirds*(x[i]+dt*k[i])
	}
}

// rk4 is the classical fourth-order Runge–Kutta method.
type rk4 struct {
	loop              func(n int, body func(lo, hi int))
	x0, xs, k, acc, x []float64
	dt                float64
	stages            [4]func(lo, hi int)
}

func (s *rk4) Name() string       { return RK4 }
func (s *rk4) Restart()           {}
func (s *rk4) Rewind(x []float64) { copy(x, s.x0) }
func (s *rk4) Step(f Tendency, x []float64, dt float64) {
	s.x, s.dt = x, dt
	n := len(x)
	copy(s.x0, x)
	f(s.k, s.x0)
	s.loop(n, s.stages[0])
	f(s.k, s.xs)
	s.loop(n, s.stages[1])
	f(s.k, s.xs)
	s.loop(n, s.stages[2])
	f(s.k, s.xs)
	s.loop(n, s.stages[3])
	s.x = nil
}

func (s *rk4) stage1(lo, hi int) {
	x0, xs, k, acc, dt := s.x0[lo:hi], s.xs[lo:hi], s.k[lo:hi], s.acc[lo:hi], s.dt
	xs, k, acc = xs[:len(x0)], k[:len(x0)], acc[:len(x0)]
	for i := range x0 {
		acc[i] = k[i]
		xs[i] = x0[i] + 0.5*dt*k[i]
	}
}

func (s *rk4) stage2(lo, hi int) { s.middle(lo, hi, 0.5) }
func (s *rk4) stage3(lo, hi int) { s.middle(lo, hi, 1) }

// middle is stage 2 (c = ½) and stage 3 (c = 1): acc += 2k, xs = x0 + c·Δt·k
// (c·Δt·k is (c·Δt)·k, so c = 1 gives Δt·k to the bit).
func (s *rk4) middle(lo, hi int, c float64) {
	x0, xs, k, acc, dt := s.x0[lo:hi], s.xs[lo:hi], s.k[lo:hi], s.acc[lo:hi], s.dt
	xs, k, acc = xs[:len(x0)], k[:len(x0)], acc[:len(x0)]
	for i := range x0 {
		acc[i] += 2 * k[i]
		xs[i] = x0[i] + c*dt*k[i]
	}
}

func (s *rk4) stage4(lo, hi int) {
	x0, x, k, acc, dt := s.x0[lo:hi], s.x[lo:hi], s.k[lo:hi], s.acc[lo:hi], s.dt
	x, k, acc = x[:len(x0)], k[:len(x0)], acc[:len(x0)]
	for i := range x0 {
		x[i] = x0[i] + dt/6*(acc[i]+k[i])
	}
}

// leapfrog is x^{n+1} = x̄^{n−1} + 2Δt f(x^n) with the Robert–Asselin filter
// x̄^n = x^n + ν(x̄^{n−1} − 2x^n + x^{n+1}) (Asselin 1972, Mon. Wea. Rev.
// 100, 487–490). The first step after a restart is a forward Euler step.
type leapfrog struct {
	loop        func(n int, body func(lo, hi int))
	nu          float64
	prev, k, x  []float64 // x̄^{n−1}, scratch, the state
	dt          float64
	started     bool
	first, next func(lo, hi int)
}

func (s *leapfrog) Name() string { return Leapfrog }
func (s *leapfrog) Restart()     { s.started = false }
func (s *leapfrog) Step(f Tendency, x []float64, dt float64) {
	s.x, s.dt = x, dt
	f(s.k, x)
	if !s.started {
		s.loop(len(x), s.first)
		s.started = true
	} else {
		s.loop(len(x), s.next)
	}
	s.x = nil
}

func (s *leapfrog) doFirst(lo, hi int) { saveThenEuler(s.x[lo:hi], s.prev[lo:hi], s.k[lo:hi], s.dt) }

func (s *leapfrog) doNext(lo, hi int) {
	x, prev, k, dt, nu := s.x[lo:hi], s.prev[lo:hi], s.k[lo:hi], s.dt, s.nu
	prev, k = prev[:len(x)], k[:len(x)]
	for i, xn := range x {
		next := prev[i] + 2*dt*k[i]
		prev[i] = xn + nu*(prev[i]-2*xn+next)
		x[i] = next
	}
}

// euler is forward Euler, kept to show an unconditionally unstable method.
type euler struct {
	loop   func(n int, body func(lo, hi int))
	k, x   []float64
	dt     float64
	update func(lo, hi int)
}

func (s *euler) Name() string { return Euler }
func (s *euler) Restart()     {}
func (s *euler) Step(f Tendency, x []float64, dt float64) {
	s.x, s.dt = x, dt
	f(s.k, x)
	s.loop(len(x), s.update)
	s.x = nil
}

func (s *euler) doUpdate(lo, hi int) {
	x, k, dt := s.x[lo:hi], s.k[lo:hi], s.dt
	k = k[:len(x)]
	for i := range x {
		x[i] += dt * k[i]
	}
}

// saveThenEuler copies x into save and then takes the forward Euler step
// x += dt·k: the first stage of ssprk3 and the first leapfrog step.
func saveThenEuler(x, save, k []float64, dt float64) {
	save, k = save[:len(x)], k[:len(x)]
	for i, xi := range x {
		save[i] = xi
		x[i] = xi + dt*k[i]
	}
}
