package step

import (
	"math"
	"testing"
)

// The ray limits reproduce the known stability intervals: on the
// imaginary axis rk3 √3, rk4 2√2, leapfrog the filtered bound of
// leapfrogLimit, euler none; on the negative real axis euler 2, rk3
// 2.5127 and rk4 2.7853 (the real roots of R(x) = −1; Hairer & Wanner
// 1996, Solving ODEs II, Fig. IV.2.1: from memory). Filtered leapfrog
// keeps a short stable interval there, up to where its computational root
// reaches −1: 1 + 2(ν + z) + 2ν − 1 + 2νz = 0, z = −2ν/(1 + ν) (0.0952 for
// ν = 0.05); unfiltered leapfrog (ν → 0) has none.
func TestRayLimit(t *testing.T) {
	opt := Options{}
	for _, tc := range []struct {
		name   string
		lambda complex128
		want   float64
		tol    float64
	}{
		{RK3, 1i, math.Sqrt(3), 1e-10},
		{RK4, 1i, 2 * math.Sqrt2, 1e-10},
		{Leapfrog, 1i, leapfrogLimit(DefaultAsselin), 1e-9},
		{Euler, 1i, 0, 0},
		{Euler, -1, 2, 1e-10},
		{RK3, -1, 2.5127453266183286, 1e-9},
		{RK4, -1, 2.785293563405282, 1e-9},
		{Leapfrog, -1, 2 * DefaultAsselin / (1 + DefaultAsselin), 1e-9},
		{RK3, -4, 2.5127453266183286 / 4, 1e-9},
	} {
		got := RayLimit(tc.name, opt, tc.lambda)
		if math.Abs(got-tc.want) > tc.tol*max(tc.want, 1) {
			t.Errorf("%s along %v: limit %.15g, want %.15g", tc.name, tc.lambda, got, tc.want)
		}
		// Just inside the limit the step is stable, just outside it is not.
		if tc.want > 0 {
			if a := Amplification(tc.name, opt, complex(0.999*got, 0)*tc.lambda); a > 1+1e-12 {
				t.Errorf("%s: |R| = %.15g at 0.999 of the limit", tc.name, a)
			}
			if a := Amplification(tc.name, opt, complex(1.001*got, 0)*tc.lambda); a <= 1 {
				t.Errorf("%s: |R| = %.15g at 1.001 of the limit", tc.name, a)
			}
		}
	}
}
