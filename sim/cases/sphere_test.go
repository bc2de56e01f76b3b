package cases

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gyrebench/sim/mesh"
)

// earth is the physics of Williamson et al. (1992, J. Comput. Phys. 102,
// 211–224; from memory), also used by Galewsky et al. (2004).
var earth = Physics{G: 9.80616, Radius: 6.37122e6, Omega: 7.292e-5}

func sphereMesh(t testing.TB, n int) *mesh.Mesh {
	t.Helper()
	m, err := mesh.New(mesh.Spec{Kind: mesh.Icosahedral, N: n, Radius: earth.Radius})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// initCase runs the named case on m and returns h, u and b.
func initCase(t testing.TB, m *mesh.Mesh, name string, prm map[string]float64) (h, u, b []float64) {
	t.Helper()
	c, err := Lookup(name)
	if err != nil {
		t.Fatal(err)
	}
	h, u, b = make([]float64, m.NumCells), make([]float64, m.NumEdges), make([]float64, m.NumCells)
	if err := c.Init(m, earth, prm, h, u, b); err != nil {
		t.Fatal(err)
	}
	return h, u, b
}

type xyz [3]float64

func (a xyz) dot(b xyz) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func (a xyz) cross(b xyz) xyz {
	return xyz{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func edgeXYZ(m *mesh.Mesh, e int) xyz   { return xyz{m.EdgeX[e], m.EdgeY[e], m.EdgeZ[e]} }
func normalXYZ(m *mesh.Mesh, e int) xyz { return xyz{m.NormalX[e], m.NormalY[e], m.NormalZ[e]} }
func cellXYZ(m *mesh.Mesh, i int) xyz   { return xyz{m.CellX[i], m.CellY[i], m.CellZ[i]} }

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

func TestSphereCasesRegistered(t *testing.T) {
	for _, tc := range []struct {
		name   string
		steady bool
	}{
		{"williamson-2", true}, {"williamson-5", false}, {"williamson-6", false},
		{"galewsky", false}, {"galewsky-unperturbed", true},
	} {
		c, err := Lookup(tc.name)
		if err != nil {
			t.Fatal(err)
		}
		if !c.Sphere || c.Steady != tc.steady {
			t.Errorf("%s: Sphere = %v, Steady = %v; want true, %v", tc.name, c.Sphere, c.Steady, tc.steady)
		}
		// A sphere case refuses a planar mesh, naming the case and the grid.
		pm, err := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 8, Length: 1e6})
		if err != nil {
			t.Fatal(err)
		}
		h, u, b := make([]float64, pm.NumCells), make([]float64, pm.NumEdges), make([]float64, pm.NumCells)
		if err := c.Init(pm, earth, nil, h, u, b); err == nil || !strings.Contains(err.Error(), tc.name) {
			t.Errorf("%s on a hex plane: error %v, want one naming the case", tc.name, err)
		}
		// Bad physics is refused, not turned into NaNs.
		m := sphereMesh(t, 1)
		h, u, b = make([]float64, m.NumCells), make([]float64, m.NumEdges), make([]float64, m.NumCells)
		if err := c.Init(m, Physics{G: 9.8}, nil, h, u, b); err == nil || !strings.Contains(err.Error(), "physics.radius") {
			t.Errorf("%s with radius 0: error %v, want one naming physics.radius", tc.name, err)
		}
	}
	c, _ := Lookup("williamson-2")
	if _, err := c.RotationAxis(map[string]float64{"beta": 1}); err == nil || !strings.Contains(err.Error(), "initial.beta") {
		t.Errorf("RotationAxis with an unknown parameter: %v", err)
	}
}

// Williamson et al. (1992, J. Comput. Phys. 102, 211–224), case 2, from
// memory: gh0 = 2.94e4 m² s⁻² so h0 = 2998.1155 m, u0 = 2πa/12 days =
// 38.610683 m/s and, for α = 0, h = 1092.833 m at the poles (values
// derived by hand from the case's formulas).
func TestWilliamson2CheckValues(t *testing.T) {
	z := zonalFlow{p: earth, h0: 2.94e4 / earth.G, u0: 2 * math.Pi * earth.Radius / (12 * day)}
	if !near(z.h0, 2998.1155, 5e-5) || !near(z.u0, 38.610683, 5e-7) {
		t.Errorf("h0 = %.7f m, u0 = %.7f m/s; want 2998.1155, 38.610683", z.h0, z.u0)
	}
	m := sphereMesh(t, 3)
	h, _, b := initCase(t, m, "williamson-2", nil)
	for i := 0; i < m.NumCells; i++ {
		if z := m.CellZ[i] / earth.Radius; math.Abs(z) > 1-1e-12 {
			if !near(h[i], 1092.833, 5e-4) {
				t.Errorf("h at the pole cell %d = %.4f m, want 1092.833", i, h[i])
			}
		}
		if b[i] != 0 {
			t.Fatalf("case 2 has a flat bottom; b[%d] = %g", i, b[i])
		}
	}
}

// Case 2 is solid-body rotation about the axis a_α = (−sin α, 0, cos α) at
// angular speed u0/a, so in Cartesian form v = (u0/a) a_α × x and
// g h = g h0 − (aΩu0 + u0²/2)(a_α · x/a)²: formulas independent of the
// latitude–longitude expressions and of setWind's basis vectors.
func TestWilliamson2IsSolidBodyRotation(t *testing.T) {
	m := sphereMesh(t, 3)
	a := earth.Radius
	u0 := 2 * math.Pi * a / (12 * day)
	c, _ := Lookup("williamson-2")
	for _, alpha := range []float64{0, 0.05, math.Pi / 4, math.Pi/2 - 0.05, math.Pi / 2} {
		prm := map[string]float64{"alpha": alpha}
		h, u, _ := initCase(t, m, "williamson-2", prm)
		axis, err := c.RotationAxis(prm)
		if err != nil {
			t.Fatal(err)
		}
		if want := (xyz{-math.Sin(alpha), 0, math.Cos(alpha)}); axis != want {
			t.Fatalf("α = %g: rotation axis %v, want %v", alpha, axis, want)
		}
		for e := 0; e < m.NumEdges; e++ {
			v := xyz(axis).cross(edgeXYZ(m, e))
			want := u0 / a * v.dot(normalXYZ(m, e))
			if !near(u[e], want, 1e-10*u0) {
				t.Fatalf("α = %g edge %d: u_e = %.12g, solid-body rotation gives %.12g", alpha, e, u[e], want)
			}
		}
		for i := 0; i < m.NumCells; i++ {
			s := xyz(axis).dot(cellXYZ(m, i)) / a
			want := 2.94e4/earth.G - (a*earth.Omega*u0+u0*u0/2)*s*s/earth.G
			if !near(h[i], want, 1e-9) {
				t.Fatalf("α = %g cell %d: h = %.12g, want %.12g", alpha, i, h[i], want)
			}
		}
	}
}

// Williamson et al. (1992), case 5 (from memory): the case 2 free
// surface with h0 = 5960 m, u0 = 20 m/s gives h = 4992.059 m at the poles;
// the cone is 2000 m high at (3π/2, π/6) and its base has a radius of π/9
// in latitude, R ≈ 2224 km of arc.
func TestWilliamson5(t *testing.T) {
	if got := mountain(3*math.Pi/2, math.Pi/6); got != 2000 {
		t.Errorf("mountain top %g m, want 2000", got)
	}
	if got := mountain(-math.Pi/2, math.Pi/6); !near(got, 2000, 1e-9) {
		t.Errorf("mountain top seen from λ = −π/2: %g m, want 2000", got)
	}
	if got := mountain(3*math.Pi/2, math.Pi/6+math.Pi/18); !near(got, 1000, 1e-9) {
		t.Errorf("mountain half way up its side: %g m, want 1000", got)
	}
	m := sphereMesh(t, 4)
	h, u, b := initCase(t, m, "williamson-5", nil)
	centre := xyz{0, -math.Cos(math.Pi / 6), math.Sin(math.Pi / 6)}
	wet := 0
	for i := 0; i < m.NumCells; i++ {
		x := cellXYZ(m, i)
		if z := x[2] / earth.Radius; z > 1-1e-12 && !near(h[i]+b[i], 4992.059, 5e-4) {
			t.Errorf("free surface at the north pole %.4f m, want 4992.059", h[i]+b[i])
		}
		if !(h[i] > 0) || b[i] < 0 || b[i] > 2000 {
			t.Fatalf("cell %d: depth %g, bottom %g", i, h[i], b[i])
		}
		if b[i] > 0 {
			wet++
			if d := earth.Radius * math.Acos(math.Min(1, centre.dot(x)/earth.Radius)); d > 2224.5e3 {
				t.Errorf("cell %d with b = %g m lies %.0f km from the mountain's centre, beyond R", i, b[i], d/1e3)
			}
		}
	}
	if wet == 0 {
		t.Fatal("no cell has a mountain")
	}
	for e := range u {
		// Zonal flow: u = 20 cos θ ê_λ, ê_λ = ẑ × x / |ẑ × x|.
		x := edgeXYZ(m, e)
		east := xyz{0, 0, 1}.cross(x)
		want := 20 / earth.Radius * east.dot(normalXYZ(m, e))
		if !near(u[e], want, 1e-12*20) {
			t.Fatalf("edge %d: u_e = %g, want %g", e, u[e], want)
		}
	}
}

// Williamson et al. (1992), case 6 (formulas from memory): u_max = 100.00
// m/s on the equator, h over [8000.00, 10556.41] m with the maximum on the
// equator and h = h0 = 8000 m at the poles (values derived from the
// case's formulas).
func TestWilliamson6CheckValues(t *testing.T) {
	r := rossbyHaurwitz{earth}
	hmin, hmax, latMax := math.Inf(1), math.Inf(-1), 0.0
	for lat := -90.0; lat <= 90; lat += 0.5 {
		for lon := -180.0; lon < 180; lon += 0.5 {
			h := r.height(lon*math.Pi/180, lat*math.Pi/180)
			hmin = min(hmin, h)
			if h > hmax {
				hmax, latMax = h, lat
			}
		}
	}
	if latMax != 0 || !near(hmin, 8000, 1e-9) {
		t.Errorf("h min %.4f m (want 8000 at the poles); max at latitude %g°, want the equator", hmin, latMax)
	}
	umax := 0.0
	for lon := 0.0; lon < math.Pi/2; lon += 1e-5 {
		hmax = max(hmax, r.height(lon, 0))
		u, _ := r.wind(lon, 0)
		umax = max(umax, u)
	}
	if !near(hmax, 10556.41, 0.005) || !near(umax, 100.00, 0.005) {
		t.Errorf("h max %.4f m, u max %.4f m/s; want 10556.41 and 100.00", hmax, umax)
	}
	m := sphereMesh(t, 3)
	h, _, _ := initCase(t, m, "williamson-6", nil)
	for i, v := range h {
		if v < 8000-1e-9 || v > 10556.42 {
			t.Fatalf("cell %d: h = %g outside [8000, 10556.41]", i, v)
		}
	}
}

// The case 6 wind derives from the stream function
// ψ = −a²ω sin θ + a²K cosᴿθ sin θ cos Rλ as u = −(1/a) ∂ψ/∂θ,
// v = (1/(a cos θ)) ∂ψ/∂λ (Williamson et al. 1992, case 6), checked by
// central differences.
func TestWilliamson6StreamFunction(t *testing.T) {
	r := rossbyHaurwitz{earth}
	a := earth.Radius
	psi := func(lon, lat float64) float64 {
		return -a*a*rhOmega*math.Sin(lat) + a*a*rhK*math.Pow(math.Cos(lat), rhR)*math.Sin(lat)*math.Cos(rhR*lon)
	}
	rng := rand.New(rand.NewPCG(5, 6))
	const d = 1e-5
	for k := 0; k < 200; k++ {
		lon, lat := (rng.Float64()*2-1)*math.Pi, (rng.Float64()*2-1)*1.5
		u, v := r.wind(lon, lat)
		du := -(psi(lon, lat+d) - psi(lon, lat-d)) / (2 * d * a)
		dv := (psi(lon+d, lat) - psi(lon-d, lat)) / (2 * d * a * math.Cos(lat))
		if !near(u, du, 1e-6) || !near(v, dv, 1e-6) {
			t.Fatalf("(λ, θ) = (%g, %g): wind (%g, %g), from ψ (%g, %g)", lon, lat, u, v, du, dv)
		}
	}
}

// divergenceTendency returns ∂δ/∂t of the shallow-water equations in
// vector-invariant form, −∇·((ζ + f) k × v) − ∇²(g h + |v|²/2), for an
// analytic state with f = 2Ω (axis · x̂), by nested central differences
// in longitude and latitude. A balanced state has zero tendency.
func divergenceTendency(p Physics, axis xyz, wind func(lon, lat float64) (float64, float64), height func(lon, lat float64) float64, lon, lat float64) (tend, scale float64) {
	const d = 1e-4
	a := p.Radius
	f := func(lon, lat float64) float64 {
		return 2 * p.Omega * axis.dot(xyz{math.Cos(lat) * math.Cos(lon), math.Cos(lat) * math.Sin(lon), math.Sin(lat)})
	}
	// ζ = (1/(a cos θ)) [∂v/∂λ − ∂(u cos θ)/∂θ].
	zeta := func(lon, lat float64) float64 {
		_, vE := wind(lon+d, lat)
		_, vW := wind(lon-d, lat)
		uN, _ := wind(lon, lat+d)
		uS, _ := wind(lon, lat-d)
		return ((vE-vW)/(2*d) - (uN*math.Cos(lat+d)-uS*math.Cos(lat-d))/(2*d)) / (a * math.Cos(lat))
	}
	// F = (ζ + f) k × v = (ζ + f)(−v, u) in (ê_λ, ê_θ) components.
	flux := func(lon, lat float64) (float64, float64) {
		u, v := wind(lon, lat)
		q := zeta(lon, lat) + f(lon, lat)
		return -q * v, q * u
	}
	phi := func(lon, lat float64) float64 {
		u, v := wind(lon, lat)
		return p.G*height(lon, lat) + (u*u+v*v)/2
	}
	c := math.Cos(lat)
	fE, _ := flux(lon+d, lat)
	fW, _ := flux(lon-d, lat)
	_, gN := flux(lon, lat+d)
	_, gS := flux(lon, lat-d)
	div := ((fE-fW)/(2*d) + (gN*math.Cos(lat+d)-gS*math.Cos(lat-d))/(2*d)) / (a * c)
	p0 := phi(lon, lat)
	lap := ((phi(lon+d, lat)-2*p0+phi(lon-d, lat))/(d*d*c) +
		(math.Cos(lat+d/2)*(phi(lon, lat+d)-p0)-math.Cos(lat-d/2)*(p0-phi(lon, lat-d)))/(d*d)) / (a * a * c)
	return -div - lap, math.Abs(div) + math.Abs(lap)
}

// Cases 2 and 6 and the Galewsky jet are balanced: zero initial
// divergence tendency (Williamson et al. 1992, cases 2 and 6: the fields
// are nondivergent and balanced, checked by derivation here; the jet is
// in gradient-wind balance by construction, Galewsky et al. 2004). A
// height error of 1 m in a wave pattern must give ten times the allowed
// residual, which checks that the test can fail.
func TestBalancedCases(t *testing.T) {
	u0 := 2 * math.Pi * earth.Radius / (12 * day)
	rh := rossbyHaurwitz{earth}
	j := newJet(earth)
	type state struct {
		name   string
		axis   xyz
		wind   func(lon, lat float64) (float64, float64)
		height func(lon, lat float64) float64
	}
	var states []state
	for _, alpha := range []float64{0, 0.05, math.Pi / 4, math.Pi/2 - 0.05} {
		z := zonalFlow{p: earth, h0: 2.94e4 / earth.G, u0: u0, alpha: alpha}
		states = append(states, state{"williamson-2", xyz{-math.Sin(alpha), 0, math.Cos(alpha)}, z.wind, z.height})
	}
	states = append(states,
		state{"williamson-6", xyz{0, 0, 1}, rh.wind, rh.height},
		state{"galewsky-unperturbed", xyz{0, 0, 1}, func(lon, lat float64) (float64, float64) { return j.u(lat), 0 }, func(lon, lat float64) float64 { return j.height(lat) }})
	rng := rand.New(rand.NewPCG(7, 8))
	for _, s := range states {
		wrong := func(lon, lat float64) float64 { return s.height(lon, lat) + math.Cos(lat)*math.Sin(3*lon) }
		var worst, scale, bad, badScale float64
		for k := 0; k < 100; k++ {
			lon, lat := (rng.Float64()*2-1)*math.Pi, (rng.Float64()*2-1)*1.4
			tend, sc := divergenceTendency(earth, s.axis, s.wind, s.height, lon, lat)
			worst, scale = max(worst, math.Abs(tend)), max(scale, sc)
			tend, sc = divergenceTendency(earth, s.axis, s.wind, wrong, lon, lat)
			bad, badScale = max(bad, math.Abs(tend)), max(badScale, sc)
		}
		t.Logf("%s: largest |∂δ/∂t| %.2e s⁻², %.2e of the largest term; with a 1 m error %.2e", s.name, worst, worst/scale, bad/badScale)
		if worst > 1e-5*scale {
			t.Errorf("%s: divergence tendency %.2e of its scale, want balance (< 1e-5)", s.name, worst/scale)
		}
		if bad < 1e-4*badScale {
			t.Errorf("%s: a 1 m height error gives a tendency of only %.2e of the scale; the check cannot fail", s.name, bad/badScale)
		}
	}
}

// Galewsky, Scott & Polvani (2004, Tellus 56A, 429–440) jet, from memory: e_n =
// 1.468350e−4 so that u(π/4) = u_max = 80 m/s; h0 = 10158.186 m for a
// global mean depth of 10 km, h(S pole) = h0, h(N pole) = 9071.208 m; the
// bump peaks at ĥ cos(π/4) = 84.853 m (derived values, V).
func TestGalewskyCheckValues(t *testing.T) {
	j := newJet(earth)
	if !near(j.en, 1.468350e-4, 5e-11) || !near(j.u(math.Pi/4), 80, 1e-12) {
		t.Errorf("e_n = %.7e, u(π/4) = %.15g; want 1.468350e-4 and 80", j.en, j.u(math.Pi/4))
	}
	if !near(j.h0, 10158.186, 5e-4) || j.height(-math.Pi/2) != j.h0 || !near(j.height(math.Pi/2), 9071.208, 5e-4) {
		t.Errorf("h0 = %.4f, h(S pole) = %.4f, h(N pole) = %.4f; want 10158.186, 10158.186, 9071.208",
			j.h0, j.height(-math.Pi/2), j.height(math.Pi/2))
	}
	if got := bump(120, 0, math.Pi/4); !near(got, 84.853, 5e-4) {
		t.Errorf("peak perturbation %.4f m, want 84.853", got)
	}
	if got := bump(120, 2*math.Pi, math.Pi/4); !near(got, 84.853, 5e-4) {
		t.Errorf("perturbation at λ = 2π %.4f m, want the peak 84.853 (λ is periodic)", got)
	}
}

// The tabulated Gauss–Legendre integral against an independent composite
// Simpson rule on 20 000 intervals, written out here from the formulas of
// Galewsky et al. (2004, Tellus 56A, 429–440, from memory), and the
// gradient-wind balance g dh/dφ = −a u (f + u
// tan φ / a) by central differences of the interpolated height.
func TestGalewskyQuadrature(t *testing.T) {
	j := newJet(earth)
	phi0, phi1 := math.Pi/7, math.Pi/2-math.Pi/7
	en := math.Exp(-4 / ((phi1 - phi0) * (phi1 - phi0)))
	integrand := func(phi float64) float64 {
		if phi <= phi0 || phi >= phi1 {
			return 0
		}
		u := 80 / en * math.Exp(1/((phi-phi0)*(phi-phi1)))
		return earth.Radius * u * (2*earth.Omega*math.Sin(phi) + math.Tan(phi)*u/earth.Radius)
	}
	simpson := func(lo, hi float64, n int) float64 {
		h := (hi - lo) / float64(n)
		s := integrand(lo) + integrand(hi)
		for k := 1; k < n; k++ {
			w := 2.0
			if k%2 == 1 {
				w = 4
			}
			s += w * integrand(lo+float64(k)*h)
		}
		return s * h / 3
	}
	for _, deg := range []float64{-90, 20, 26, 30, 37.3, 45, 51.42, 60, 64, 70, 90} {
		phi := deg * math.Pi / 180
		want := j.h0 - simpson(phi0, math.Max(phi0, math.Min(phi, phi1)), 20000)/earth.G
		if got := j.height(phi); !near(got, want, 1e-7) {
			t.Errorf("h(%g°) = %.10f m, Simpson gives %.10f", deg, got, want)
		}
	}
	for _, deg := range []float64{27, 33.3, 45, 52.1, 63} {
		phi, d := deg*math.Pi/180, 1e-5
		dh := (j.height(phi+d) - j.height(phi-d)) / (2 * d)
		if want := -integrand(phi) / earth.G; !near(dh, want, 1e-5*math.Abs(want)+1e-6) {
			t.Errorf("dh/dφ at %g° = %.8g m, gradient wind gives %.8g", deg, dh, want)
		}
	}
}

// On the mesh: the area-weighted mean depth of the unperturbed jet is the
// 10 km it was built for (up to the midpoint rule's error), the winds are
// zonal, and the perturbed case differs by the bump alone.
func TestGalewskyOnMesh(t *testing.T) {
	m := sphereMesh(t, 5)
	h0, u0, _ := initCase(t, m, "galewsky-unperturbed", nil)
	h1, u1, _ := initCase(t, m, "galewsky", nil)
	var mass, area float64
	for i := range h0 {
		mass += m.CellArea[i] * h0[i]
		area += m.CellArea[i]
	}
	if mean := mass / area; !near(mean, 10000, 0.05) {
		t.Errorf("mean depth %.4f m, want 10000", mean)
	}
	peak := 0.0
	for i := range h0 {
		d := h1[i] - h0[i]
		if d < -1e-9 || d > 84.8528 {
			t.Fatalf("cell %d: perturbation %g outside [0, 84.853]", i, d)
		}
		peak = max(peak, d)
	}
	if peak < 80 {
		t.Errorf("largest perturbation on the level-5 mesh %g m, want close to 84.853", peak)
	}
	j := newJet(earth)
	for e := range u0 {
		if u0[e] != u1[e] {
			t.Fatalf("edge %d: the perturbation changed the wind", e)
		}
		x := edgeXYZ(m, e)
		east := xyz{0, 0, 1}.cross(x)
		r := math.Hypot(x[0], x[1])
		want := j.u(math.Atan2(x[2], r)) / r * east.dot(normalXYZ(m, e))
		if !near(u0[e], want, 1e-12*80) {
			t.Fatalf("edge %d: u_e = %g, zonal jet gives %g", e, u0[e], want)
		}
	}
}
