package linear

import "math"

// ContinuousIG returns the inertia–gravity frequency of the continuous
// linear shallow-water equations on the f-plane, ω² = f² + gH(k² + l²)
// (e.g. Gill 1982, Atmosphere–Ocean Dynamics, §7.3; from memory).
func ContinuousIG(f, g, depth, kx, ky float64) float64 {
	return math.Sqrt(f*f + g*depth*(kx*kx+ky*ky))
}

// QuadCGrid returns the inertia–gravity frequency of the linearised
// C-grid scheme on a uniform rectangular grid (cells dx × dy) on the
// f-plane:
//
//	ω² = f² cos²(k dx/2) cos²(l dy/2) + 4gH [sin²(k dx/2)/dx² + sin²(l dy/2)/dy²].
//
// Arakawa & Lamb (1977, Methods in Computational Physics 17, 173–265) give
// this relation for their scheme C with square cells (recalled from
// memory). It is derived here for our operator: on a rectangle every kite
// is a quarter of the cell, so the TRiSK weights of the four edges
// perpendicular to edge e are ±1/4 and those of the parallel edges 0
// (Thuburn et al. 2009, J. Comput. Phys. 228, eq. 33), and
// C_{ee'} = W_{ee'} l_{e'}/d_e = ±1/4: the Coriolis term is f times the
// four-point average of the crossing velocity. The PV average does not
// enter: at rest q = f/H is uniform, and both q_e and (q_e + q_{e'})/2
// equal it, so trisk-energy, trisk-enstrophy, apvm and al81 share this
// operator on the f-plane. With u ∝ e^{i(kx + ly)}, the averages have
// symbol cos(k dx/2) cos(l dy/2), the centred differences (2i/dx) sin(k dx/2)
// and (2i/dy) sin(l dy/2), and
//
//	iω u = f c v − g (2i/dx) s_x h,  iω v = −f c u − g (2i/dy) s_y h,
//	iω h = −H [(2i/dx) s_x u + (2i/dy) s_y v],
//
// whose determinant is ω (ω² − f²c² − 4gH (s_x²/dx² + s_y²/dy²)) = 0; the
// third root, ω = 0, is the geostrophic mode.
func QuadCGrid(f, g, depth, dx, dy, kx, ky float64) float64 {
	a, b := kx*dx/2, ky*dy/2
	c := math.Cos(a) * math.Cos(b)
	sx, sy := math.Sin(a)/dx, math.Sin(b)/dy
	return math.Sqrt(f*f*c*c + 4*g*depth*(sx*sx+sy*sy))
}

// ContinuousRossby returns the Rossby-wave frequency of the continuous
// linear equations on an unbounded β-plane, ω = βk/(k² + l² + f₀²/(gH)),
// with the sign convention of this package (modes e^{i(k·x + ωt)}; the
// textbook form ω = −βk/(…) is for e^{i(k·x − ωt)}; e.g. Pedlosky 1987,
// Geophysical Fluid Dynamics, §3.17; from memory). The periodic β-plane
// of the workbench has a jump of β·Ly in f at y = 0, so this is a guide,
// not a test.
func ContinuousRossby(f0, beta, g, depth, kx, ky float64) float64 {
	return beta * kx / (kx*kx + ky*ky + f0*f0/(g*depth))
}
