package step

import (
	"math"
	"math/cmplx"
)

// Amplification returns the largest modulus of the one-step amplification
// of the named integrator for the linear equation y′ = λy with
// z = λΔt complex: for the Runge–Kutta methods |R(z)| with
//
//	euler R = 1 + z,  rk3 R = 1 + z + z²/2 + z³/6,  rk4 R = … + z⁴/24
//
// (rk3 of Shu & Osher 1988 has the third-order Taylor polynomial as its
// stability function, as every three-stage third-order method), and for
// filtered leapfrog the larger root of λ² − 2(ν + z)λ + (2ν − 1 + 2νz) = 0
// (the matrix of leapfrogLimit with iz replaced by z). A step is stable
// for z when this is at most 1. It returns NaN for an unknown name.
func Amplification(name string, opt Options, z complex128) float64 {
	switch name {
	case Euler:
		return cmplx.Abs(1 + z)
	case RK3:
		return cmplx.Abs(1 + z*(1+z*(0.5+z/6)))
	case RK4:
		return cmplx.Abs(1 + z*(1+z*(0.5+z*(1.0/6+z/24))))
	case Leapfrog:
		nu := complex(opt.asselin(), 0)
		b := -2 * (nu + z)
		c := 2*nu - 1 + 2*nu*z
		d := cmplx.Sqrt(b*b - 4*c)
		return max(cmplx.Abs((-b+d)/2), cmplx.Abs((-b-d)/2))
	}
	return math.NaN()
}

// amplificationTol absorbs rounding at the edge of the stability region
// (the imaginary axis is tangent to the rk3 and rk4 regions at 0).
const amplificationTol = 1e-12

// RayLimit returns the largest Δt such that the integrator is stable for
// z = λΔt' at every 0 < Δt' ≤ Δt, for the eigenvalue λ: the Δt limit that
// λ sets along its ray in the stability region. It returns 0 when no step
// along the ray is stable (euler on the imaginary axis; leapfrog is
// unstable on the negative real axis) and +Inf for λ = 0. The boundary is
// found by a scan of |z| in steps of 1/64 up to 16, then bisection, to
// about 1e-13 relative; a boundary below |z| = 10⁻³ counts as none (the
// amplification there exceeds 1 by less than the rounding tolerance).
func RayLimit(name string, opt Options, lambda complex128) float64 {
	dir := lambda
	r := cmplx.Abs(dir)
	if r == 0 {
		return math.Inf(1)
	}
	u := dir / complex(r, 0)
	stable := func(t float64) bool {
		return Amplification(name, opt, complex(t, 0)*u) <= 1+amplificationTol
	}
	const h, top = 1.0 / 64, 16.0
	lo := 0.0
	for t := h; t <= top; t += h {
		if !stable(t) {
			lo = bisect(lo, t, 80, stable)
			if lo < 1e-3 {
				return 0
			}
			return lo / r
		}
		lo = t
	}
	return top / r
}
