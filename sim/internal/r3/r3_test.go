package r3

import (
	"math"
	"testing"
)

// The octant triangle (x̂, ŷ, ẑ) covers one eighth of the unit sphere,
// 4π/8, positive anticlockwise seen from outside and negative reversed;
// a thin triangle keeps its small area (the triple product from
// differences).
func TestTriArea(t *testing.T) {
	x, y, z := Vec{1, 0, 0}, Vec{0, 1, 0}, Vec{0, 0, 1}
	if a := TriArea(x, y, z); math.Abs(a-math.Pi/2) > 1e-15 {
		t.Errorf("octant area %.17g, want π/2", a)
	}
	if a := TriArea(x, z, y); math.Abs(a+math.Pi/2) > 1e-15 {
		t.Errorf("reversed octant area %.17g, want −π/2", a)
	}
	// A right triangle with legs ε: area ε²/2 to relative O(ε²).
	const eps = 1e-6
	b, c := Vec{1, eps, 0}.Unit(), Vec{1, 0, eps}.Unit()
	if a := TriArea(x, b, c); math.Abs(a-eps*eps/2) > 1e-6*eps*eps {
		t.Errorf("thin triangle area %.17g, want %.17g", a, eps*eps/2)
	}
}

// The tangent basis is orthonormal, tangent at p and right-handed
// (e1 × e2 = p), near the poles as well as elsewhere.
func TestTangentBasis(t *testing.T) {
	for _, p := range []Vec{{0, 0, 1}, {0, 0, -1}, Vec{1, 2, 3}.Unit(), Vec{0.1, 0, 0.995}.Unit(), {1, 0, 0}} {
		e1, e2 := TangentBasis(p)
		for _, c := range []struct {
			what string
			got  float64
			want float64
		}{
			{"|e1|", e1.Norm(), 1}, {"|e2|", e2.Norm(), 1},
			{"e1·e2", e1.Dot(e2), 0}, {"e1·p", e1.Dot(p), 0}, {"e2·p", e2.Dot(p), 0},
			{"(e1×e2)·p", e1.Cross(e2).Dot(p), 1},
		} {
			if math.Abs(c.got-c.want) > 1e-15 {
				t.Errorf("p = %v: %s = %.17g, want %g", p, c.what, c.got, c.want)
			}
		}
	}
}
