package cases

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/integrate/quad"

	"gyrebench/sim/mesh"
)

// Spherical test cases. Their constants are those of the papers
// (Williamson et al. 1992, J. Comput. Phys. 102, 211–224; Galewsky, Scott &
// Polvani 2004, Tellus 56A, 429–440) as recalled from memory; the physics radius,
// rotation rate and gravity come from Physics, so with the default physics
// (a = 6.37122e6 m, Ω = 7.292e-5 s⁻¹, g = 9.80616 m s⁻²) they are the
// published set-ups. Longitude λ is measured from the +x axis towards +y,
// latitude θ from the equator towards +z. Scalars are point values at cell
// centres; velocities are u_e = (u ê_λ + v ê_θ) · n_e at the edge point.

// Case names on the sphere.
const (
	williamson2Name       = "williamson-2"
	williamson5Name       = "williamson-5"
	williamson6Name       = "williamson-6"
	galewskyName          = "galewsky"
	galewskyUnperturbName = "galewsky-unperturbed"
)

const day = 86400.0 // s

func sphereCases() []*Case {
	return []*Case{williamson2(), williamson5(), williamson6(), galewsky(), galewskyUnperturbed(), twinHills()}
}

// RotationAxis returns the unit vector, in the mesh's Cartesian frame, of
// the rotation axis the case is written for, so that f = 2Ω (axis · x)/a.
// It is the z axis for every case but williamson-2 with alpha ≠ 0: there
// Williamson et al. (1992, J. Comput. Phys. 102, 211–224, case 2) turn the
// Coriolis parameter with the flow, f = 2Ω(−cos λ cos θ sin α + sin θ cos α)
// (from memory), without which the rotated flow is not steady.
func (c *Case) RotationAxis(prm map[string]float64) ([3]float64, error) {
	full, err := c.Resolve(prm)
	if err != nil {
		return [3]float64{}, err
	}
	if c.Name == williamson2Name {
		a := full["alpha"]
		return [3]float64{-math.Sin(a), 0, math.Cos(a)}, nil
	}
	return [3]float64{0, 0, 1}, nil
}

// lonLat returns the longitude in (−π, π] and the latitude of (x, y, z).
func lonLat(x, y, z float64) (lon, lat float64) {
	return math.Atan2(y, x), math.Atan2(z, math.Hypot(x, y))
}

// setWind sets u_e = (u ê_λ + v ê_θ) · n_e at every edge point, for the
// zonal (u) and meridional (v) wind of an analytic field. At a pole, where
// ê_λ is undefined, lonLat returns λ = 0 and the field must be written so
// that its Cartesian value does not depend on λ there, as all these are.
func setWind(m *mesh.Mesh, u []float64, wind func(lon, lat float64) (float64, float64)) {
	for e := range u {
		lon, lat := lonLat(m.EdgeX[e], m.EdgeY[e], m.EdgeZ[e])
		ue, vn := wind(lon, lat)
		sl, cl := math.Sincos(lon)
		sp, cp := math.Sincos(lat)
		// ê_λ = (−sin λ, cos λ, 0), ê_θ = (−sin θ cos λ, −sin θ sin λ, cos θ).
		vx := -ue*sl - vn*sp*cl
		vy := ue*cl - vn*sp*sl
		vz := vn * cp
		u[e] = vx*m.NormalX[e] + vy*m.NormalY[e] + vz*m.NormalZ[e]
	}
}

// setCells sets s[i] = f(λ_i, θ_i) at the cell centres.
func setCells(m *mesh.Mesh, s []float64, f func(lon, lat float64) float64) {
	for i := range s {
		s[i] = f(lonLat(m.CellX[i], m.CellY[i], m.CellZ[i]))
	}
}

func needSphere(name string, p Physics) error {
	if !(p.Radius > 0) || math.IsInf(p.Radius, 0) {
		return fmt.Errorf("initial.case = %q needs physics.radius > 0; got %g", name, p.Radius)
	}
	if !(p.G > 0) || math.IsInf(p.G, 0) {
		return fmt.Errorf("initial.case = %q needs physics.g > 0; got %g", name, p.G)
	}
	return nil
}

// zonalFlow is the steady solid-body flow of Williamson case 2 about the
// axis tilted by alpha towards λ = π: wind and free-surface height
//
//	u = u0 (cos θ cos α + cos λ sin θ sin α),  v = −u0 sin λ sin α,
//	g h = g h0 − (a Ω u0 + u0²/2) (−cos λ cos θ sin α + sin θ cos α)²
//
// (Williamson et al. 1992, J. Comput. Phys. 102, 211–224, case 2, from memory).
type zonalFlow struct {
	p             Physics
	h0, u0, alpha float64
}

func (z zonalFlow) height(lon, lat float64) float64 {
	s := -math.Cos(lon)*math.Cos(lat)*math.Sin(z.alpha) + math.Sin(lat)*math.Cos(z.alpha)
	return z.h0 - (z.p.Radius*z.p.Omega*z.u0+z.u0*z.u0/2)*s*s/z.p.G
}

func (z zonalFlow) wind(lon, lat float64) (float64, float64) {
	return z.u0 * (math.Cos(lat)*math.Cos(z.alpha) + math.Cos(lon)*math.Sin(lat)*math.Sin(z.alpha)), -z.u0 * math.Sin(lon) * math.Sin(z.alpha)
}

func williamson2() *Case {
	return &Case{
		Name: williamson2Name,
		Doc: "Williamson et al. (1992) case 2: steady zonal geostrophic flow, u0 = 2πa/12 days, gh0 = 2.94e4 m² s⁻², " +
			"about an axis tilted by alpha (the Coriolis axis tilts with it); exact solution = initial state",
		Sphere: true,
		Steady: true,
		Params: []Param{{"alpha", 0, "angle α between the flow's axis and the pole, radians (Williamson: 0, 0.05, π/2 − 0.05, π/2)"}},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needSphere(williamson2Name, p); err != nil {
				return err
			}
			z := zonalFlow{p: p, h0: 2.94e4 / p.G, u0: 2 * math.Pi * p.Radius / (12 * day), alpha: prm["alpha"]}
			setCells(m, h, z.height)
			setWind(m, u, z.wind)
			return nil
		},
	}
}

// mountain is the isolated cone of Williamson case 5: h_s = h_s0 (1 − r/R)
// with r² = min(R², (λ − λc)² + (θ − θc)²) in radians of longitude and
// latitude (not a great-circle distance), h_s0 = 2000 m, R = π/9,
// (λc, θc) = (3π/2, π/6) (Williamson et al. 1992, case 5, from memory).
func mountain(lon, lat float64) float64 {
	const hs0, r0, lonC, latC = 2000.0, math.Pi / 9, 3 * math.Pi / 2, math.Pi / 6
	dl := math.Remainder(lon-lonC, 2*math.Pi)
	dp := lat - latC
	r := math.Min(r0, math.Sqrt(dl*dl+dp*dp))
	return hs0 * (1 - r/r0)
}

func williamson5() *Case {
	return &Case{
		Name:   williamson5Name,
		Doc:    "Williamson et al. (1992) case 5: zonal flow (u0 = 20 m/s, h0 = 5960 m) over an isolated 2000 m mountain at 90°W, 30°N; run 15 days",
		Sphere: true,
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needSphere(williamson5Name, p); err != nil {
				return err
			}
			// The case 2 formula with α = 0 gives the free surface h + b.
			z := zonalFlow{p: p, h0: 5960, u0: 20}
			setCells(m, b, mountain)
			setCells(m, h, z.height)
			for i := range h {
				h[i] -= b[i]
			}
			setWind(m, u, z.wind)
			return nil
		},
	}
}

// rossbyHaurwitz is the wavenumber-4 Rossby–Haurwitz wave of Williamson
// case 6, ω = K = 7.848e-6 s⁻¹, R = 4, h0 = 8000 m (Williamson et al.
// 1992, J. Comput. Phys. 102, 211–224, case 6; formulas from memory).
type rossbyHaurwitz struct{ p Physics }

const (
	rhOmega = 7.848e-6
	rhK     = 7.848e-6
	rhR     = 4
	rhH0    = 8000.0
)

func (r rossbyHaurwitz) wind(lon, lat float64) (float64, float64) {
	a, R := r.p.Radius, float64(rhR)
	c, s := math.Cos(lat), math.Sin(lat)
	cr1 := math.Pow(c, R-1)
	u := a*rhOmega*c + a*rhK*cr1*(R*s*s-c*c)*math.Cos(R*lon)
	v := -a * rhK * R * cr1 * s * math.Sin(R*lon)
	return u, v
}

func (r rossbyHaurwitz) height(lon, lat float64) float64 {
	a, R, Ω, ω, K := r.p.Radius, float64(rhR), r.p.Omega, rhOmega, rhK
	c := math.Cos(lat)
	c2 := c * c
	cr := math.Pow(c, R)
	// cos^(2R) θ · cos⁻² θ written as cos^(2R−2) θ, finite at the poles.
	A := ω/2*(2*Ω+ω)*c2 + K*K/4*(cr*cr*((R+1)*c2+(2*R*R-R-2))-2*R*R*math.Pow(c, 2*R-2))
	B := 2 * (Ω + ω) * K / ((R + 1) * (R + 2)) * cr * ((R*R + 2*R + 2) - (R+1)*(R+1)*c2)
	C := K * K / 4 * cr * cr * ((R+1)*c2 - (R + 2))
	return rhH0 + a*a*(A+B*math.Cos(R*lon)+C*math.Cos(2*R*lon))/r.p.G
}

func williamson6() *Case {
	return &Case{
		Name:   williamson6Name,
		Doc:    "Williamson et al. (1992) case 6: Rossby–Haurwitz wave of wavenumber 4, moving east at about 12°/day; run 14 days",
		Sphere: true,
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needSphere(williamson6Name, p); err != nil {
				return err
			}
			r := rossbyHaurwitz{p}
			setCells(m, h, r.height)
			setWind(m, u, r.wind)
			return nil
		},
	}
}

// Galewsky, Scott & Polvani (2004, Tellus 56A, 429–440) jet, parameters
// from memory.
const (
	galewskyUMax  = 80.0
	galewskyPhi0  = math.Pi / 7
	galewskyPhi1  = math.Pi/2 - math.Pi/7
	galewskyMean  = 10000.0 // global mean depth, m
	galewskyAlpha = 1.0 / 3
	galewskyBeta  = 1.0 / 15
	galewskyPhi2  = math.Pi / 4
)

// jet is the balanced Galewsky jet for one set of physics:
//
//	u(φ) = (u_max/e_n) exp[1/((φ − φ0)(φ − φ1))] on (φ0, φ1), else 0,
//	g h(φ) = g h0 − ∫_{−π/2}^{φ} a u(φ′) [f(φ′) + tan φ′ u(φ′)/a] dφ′,
//
// with e_n = exp[−4/(φ1 − φ0)²] and h0 such that the global mean of h is
// 10 km. The integral is tabulated at jetIntervals + 1 equally spaced
// latitudes across the jet with jetNodes-point Gauss–Legendre per
// interval, and completed with the same rule from the nearest node below.
// The integrand is smooth and flat at both ends of the jet, so the rule is
// accurate to rounding (the test compares with an independent Simpson
// quadrature).
type jet struct {
	p      Physics
	en, h0 float64
	x, w   []float64 // Gauss–Legendre nodes and weights on [0, 1]
	cum    []float64 // ∫_{φ0}^{φ_k} of the integrand at the table latitudes
}

const (
	jetIntervals = 64
	jetNodes     = 20
)

func newJet(p Physics) *jet {
	j := &jet{p: p, en: math.Exp(-4 / ((galewskyPhi1 - galewskyPhi0) * (galewskyPhi1 - galewskyPhi0)))}
	j.x, j.w = make([]float64, jetNodes), make([]float64, jetNodes)
	quad.Legendre{}.FixedLocations(j.x, j.w, 0, 1)
	j.cum = make([]float64, jetIntervals+1)
	step := (galewskyPhi1 - galewskyPhi0) / jetIntervals
	for k := 0; k < jetIntervals; k++ {
		lo := galewskyPhi0 + float64(k)*step
		j.cum[k+1] = j.cum[k] + j.integral(lo, lo+step, j.integrand)
	}
	// Mean of h = h0 − (1/g) mean of G with G(φ) = ∫_{−π/2}^{φ} I; by
	// parts, (1/2)∫ G cos φ dφ = (1/2)∫ I(φ)(1 − sin φ) dφ over the jet.
	var s float64
	for k := 0; k < jetIntervals; k++ {
		lo := galewskyPhi0 + float64(k)*step
		s += j.integral(lo, lo+step, func(phi float64) float64 { return j.integrand(phi) * (1 - math.Sin(phi)) })
	}
	j.h0 = galewskyMean + s/(2*p.G)
	return j
}

func (j *jet) integral(lo, hi float64, f func(float64) float64) float64 {
	s := 0.0
	for k, x := range j.x {
		s += j.w[k] * f(lo+(hi-lo)*x)
	}
	return s * (hi - lo)
}

// u returns the zonal wind at latitude phi.
func (j *jet) u(phi float64) float64 {
	if phi <= galewskyPhi0 || phi >= galewskyPhi1 {
		return 0
	}
	return galewskyUMax / j.en * math.Exp(1/((phi-galewskyPhi0)*(phi-galewskyPhi1)))
}

// integrand is a u (f + u tan φ / a), the gradient-wind balance.
func (j *jet) integrand(phi float64) float64 {
	u := j.u(phi)
	return j.p.Radius * u * (2*j.p.Omega*math.Sin(phi) + math.Tan(phi)*u/j.p.Radius)
}

// height returns the balanced free-surface height at latitude phi.
func (j *jet) height(phi float64) float64 {
	var g float64
	switch {
	case phi <= galewskyPhi0:
	case phi >= galewskyPhi1:
		g = j.cum[jetIntervals]
	default:
		step := (galewskyPhi1 - galewskyPhi0) / jetIntervals
		k := min(int((phi-galewskyPhi0)/step), jetIntervals-1)
		lo := galewskyPhi0 + float64(k)*step
		g = j.cum[k] + j.integral(lo, phi, j.integrand)
	}
	return j.h0 - g/j.p.G
}

// bump is the height perturbation h′ = ĥ cos φ exp[−(λ/α)²]
// exp[−((φ2 − φ)/β)²] for λ in (−π, π], α = 1/3, β = 1/15, φ2 = π/4.
func bump(hHat, lon, lat float64) float64 {
	l := math.Remainder(lon, 2*math.Pi) / galewskyAlpha
	d := (galewskyPhi2 - lat) / galewskyBeta
	return hHat * math.Cos(lat) * math.Exp(-l*l) * math.Exp(-d*d)
}

func galewskyInit(name string, m *mesh.Mesh, p Physics, hHat float64, h, u []float64) error {
	if err := needSphere(name, p); err != nil {
		return err
	}
	j := newJet(p)
	setCells(m, h, func(lon, lat float64) float64 { return j.height(lat) + bump(hHat, lon, lat) })
	setWind(m, u, func(lon, lat float64) (float64, float64) { return j.u(lat), 0 })
	return nil
}

func galewsky() *Case {
	return &Case{
		Name: galewskyName,
		Doc: "Galewsky, Scott & Polvani (2004) barotropically unstable mid-latitude jet (u_max = 80 m/s) in gradient-wind balance, with a localised " +
			"height bump, unbalanced on purpose, that sets off its roll-up; run 6 days",
		Sphere: true,
		Params: []Param{{"perturbation", 120, "amplitude ĥ of the height bump, m (the paper's 120 m)"}},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			return galewskyInit(galewskyName, m, p, prm["perturbation"], h, u)
		},
	}
}

// galewskyUnperturbed is the balanced jet alone. A zonal flow in
// gradient-wind balance is an exact steady solution, so the case is
// Steady and its error norms measure how the grid breaks the symmetry.
func galewskyUnperturbed() *Case {
	return &Case{
		Name:   galewskyUnperturbName,
		Doc:    "the Galewsky et al. (2004) jet without its bump: an exact steady state that only grid imprinting destabilises",
		Sphere: true,
		Steady: true,
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			return galewskyInit(galewskyUnperturbName, m, p, 0, h, u)
		},
	}
}
