// Package r3 is the small vector algebra of R³ that the sphere code shares
// (mesh generation, remapping between sphere meshes): values of [3]float64
// and the spherical triangle area. It owns no state.
package r3

import "math"

// Vec is a vector of R³.
type Vec [3]float64

func (a Vec) Add(b Vec) Vec       { return Vec{a[0] + b[0], a[1] + b[1], a[2] + b[2]} }
func (a Vec) Sub(b Vec) Vec       { return Vec{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func (a Vec) Scale(s float64) Vec { return Vec{s * a[0], s * a[1], s * a[2]} }
func (a Vec) Dot(b Vec) float64   { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func (a Vec) Norm() float64       { return math.Sqrt(a.Dot(a)) }
func (a Vec) Unit() Vec           { return a.Scale(1 / a.Norm()) }
func (a Vec) Cross(b Vec) Vec {
	return Vec{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// TangentBasis returns unit vectors e1, e2 spanning the tangent plane at
// the unit vector p, with (e1, e2, p) right-handed, so that angles measured
// from e1 towards e2 run anticlockwise seen from outside.
func TangentBasis(p Vec) (e1, e2 Vec) {
	ref := Vec{0, 0, 1}
	if math.Abs(p[2]) > 0.9 {
		ref = Vec{1, 0, 0}
	}
	e1 = ref.Cross(p).Unit()
	return e1, p.Cross(e1)
}

// Triple returns a·(b×c), formed from the differences b − a and c − a so
// that a small triangle of unit vectors keeps its relative precision.
func Triple(a, b, c Vec) float64 { return a.Dot(b.Sub(a).Cross(c.Sub(a))) }

// TriArea returns the signed area of the spherical triangle abc on the
// unit sphere, positive when abc is anticlockwise seen from outside
// (Eriksson 1990, Math. Mag. 63, 184–187: tan(E/2) = a·(b×c) /
// (1 + a·b + b·c + c·a)), with the triple product of Triple.
func TriArea(a, b, c Vec) float64 {
	return 2 * math.Atan2(Triple(a, b, c), 1+a.Dot(b)+b.Dot(c)+c.Dot(a))
}
