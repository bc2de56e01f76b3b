// Package cases holds the initial conditions: published test cases under
// their published names, and demonstration flows of our own.
//
// A case reads mesh coordinates (it is the one layer besides output that
// may) and fills depth h on cells, normal velocity u on edges and the
// bottom height b on cells. Velocities are point values of an analytic
// field at the edge crossing point, projected on n_e.
package cases

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"strings"

	"gyrebench/sim/mesh"
)

// Physics is what a case needs to know of the physical set-up.
type Physics struct {
	G, F0, Beta, Depth float64 // plane: f = F0 + Beta (y − Ly/2)
	Radius, Omega      float64 // sphere
}

// Param is one tunable parameter of a case, with its default.
type Param struct {
	Name    string
	Default float64
	Doc     string
}

// Case is one initial condition.
type Case struct {
	Name   string
	Doc    string
	Sphere bool // runs on the sphere; otherwise on the plane
	// Steady is true when the exact solution at every time is the initial
	// state, so that error norms are against it.
	Steady bool
	Params []Param
	init   func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error
}

// Init fills h, u and b for the mesh. prm holds the case's parameters;
// missing ones take their defaults, unknown ones are an error.
func (c *Case) Init(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
	if c.Sphere != m.Surface.Sphere {
		where := "the plane"
		if c.Sphere {
			where = "the sphere"
		}
		return fmt.Errorf("initial.case = %q runs on %s; grid.kind = %q does not", c.Name, where, m.Kind)
	}
	full, err := c.Resolve(prm)
	if err != nil {
		return err
	}
	for i := range b {
		b[i] = 0
	}
	return c.init(m, p, full, h, u, b)
}

// Resolve returns the parameters with defaults filled in, or an error
// naming an unknown parameter and the allowed ones.
func (c *Case) Resolve(prm map[string]float64) (map[string]float64, error) {
	full := make(map[string]float64, len(c.Params))
	for _, q := range c.Params {
		full[q.Name] = q.Default
	}
	keys := make([]string, 0, len(prm))
	for k := range prm {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if _, ok := full[k]; !ok {
			return nil, fmt.Errorf("initial.%s: not a parameter of case %q; allowed: %s", k, c.Name, strings.Join(c.paramNames(), ", "))
		}
		if v := prm[k]; math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("initial.%s = %g: must be a finite number", k, v)
		}
		full[k] = prm[k]
	}
	return full, nil
}

func (c *Case) paramNames() []string {
	var s []string
	for _, q := range c.Params {
		s = append(s, q.Name)
	}
	if len(s) == 0 {
		return []string{"(none)"}
	}
	return s
}

// All returns every case, planar first.
func All() []*Case {
	return append([]*Case{
		geostrophicSteady(), gaussianBump(), shearLayer(), vortexPair(), turbulence(), seamount(),
	}, sphereCases()...)
}

// Names returns the names of all cases.
func Names() []string {
	var s []string
	for _, c := range All() {
		s = append(s, c.Name)
	}
	return s
}

// Lookup returns the named case.
func Lookup(name string) (*Case, error) {
	for _, c := range All() {
		if c.Name == name {
			return c, nil
		}
	}
	return nil, fmt.Errorf("initial.case = %q: unknown; allowed: %s", name, strings.Join(Names(), ", "))
}

// setVelocity sets u_e = v(x_e) · n_e for the planar vector field v.
func setVelocity(m *mesh.Mesh, u []float64, v func(x, y float64) (float64, float64)) {
	for e := range u {
		vx, vy := v(m.EdgeX[e], m.EdgeY[e])
		u[e] = vx*m.NormalX[e] + vy*m.NormalY[e]
	}
}

// setStreamfunction sets u_e = (ψ(v0) − ψ(v1)) / l_e from the
// streamfunction ψ at the edge's two vertices, the discrete form of
// u = k × ∇ψ with t_e = k × n_e running from v0 to v1. Its discrete
// divergence is zero to round-off on every grid (the divergence of a
// discrete curl vanishes: Thuburn et al. 2009, J. Comput. Phys. 228,
// 8321–8335), whereas point values of a nondivergent field projected on
// n_e carry a truncation-size divergence that starts gravity waves.
func setStreamfunction(m *mesh.Mesh, u []float64, psi func(x, y float64) float64) {
	for e := range u {
		v0, v1 := m.EdgeVertices[2*e], m.EdgeVertices[2*e+1]
		u[e] = (psi(m.VertexX[v0], m.VertexY[v0]) - psi(m.VertexX[v1], m.VertexY[v1])) / m.EdgeLength[e]
	}
}

// wrap returns the periodic image of d nearest zero.
func wrap(d, l float64) float64 { return d - l*math.Round(d/l) }

// inPeriod returns the periodic image of y in [0, l).
func inPeriod(y, l float64) float64 {
	y -= l * math.Floor(y/l)
	if y >= l { // y a tiny negative number rounds up to l
		y = 0
	}
	return y
}

func needRotation(name string, p Physics) error {
	if p.F0 == 0 {
		return fmt.Errorf("initial.case = %q is in geostrophic balance and needs physics.f0 ≠ 0", name)
	}
	return nil
}

func geostrophicSteady() *Case {
	return &Case{
		Name:   "geostrophic-steady",
		Doc:    "exact steady zonal flow in geostrophic balance on the f-plane: h = H + a sin(2πy/Ly)",
		Steady: true,
		Params: []Param{{"amplitude", 20, "depth anomaly a, m"}},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needRotation("geostrophic-steady", p); err != nil {
				return err
			}
			if p.Beta != 0 {
				return fmt.Errorf("initial.case = \"geostrophic-steady\" is steady only on the f-plane; physics.beta = %g must be 0", p.Beta)
			}
			a, ly := prm["amplitude"], m.Surface.Ly
			k := 2 * math.Pi / ly
			for i := range h {
				h[i] = p.Depth + a*math.Sin(k*m.CellY[i])
			}
			// f u = −g ∂h/∂y: an exact nonlinear steady state (v = 0,
			// u = u(y) makes every advection term vanish).
			setVelocity(m, u, func(x, y float64) (float64, float64) {
				return -p.G / p.F0 * a * k * math.Cos(k*y), 0
			})
			return nil
		},
	}
}

func gaussianBump() *Case {
	return &Case{
		Name: "gaussian-bump",
		Doc:  "fluid at rest with a Gaussian depth bump, unbalanced on purpose: it sheds gravity waves and adjusts geostrophically",
		Params: []Param{
			{"amplitude", 10, "bump height, m"},
			{"width", 0.05, "Gaussian e-folding radius σ as a fraction of the domain width"},
			{"x0", 0.5, "centre x as a fraction of the domain width"},
			{"y0", 0.5, "centre y as a fraction of the domain height"},
		},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			lx, ly := m.Surface.Lx, m.Surface.Ly
			s := prm["width"] * lx
			if !(s > 0) {
				return fmt.Errorf("initial.width = %g: must be > 0", prm["width"])
			}
			x0, y0 := prm["x0"]*lx, prm["y0"]*ly
			for i := range h {
				dx, dy := wrap(m.CellX[i]-x0, lx), wrap(m.CellY[i]-y0, ly)
				h[i] = p.Depth + prm["amplitude"]*math.Exp(-(dx*dx+dy*dy)/(2*s*s))
			}
			for e := range u {
				u[e] = 0
			}
			return nil
		},
	}
}

// balancedBumps sets the nondivergent wind u = −∂ψ/∂y, v = ∂ψ/∂x of the
// streamfunction ψ = (g/f0) Σ a_k exp(−r_k²/2σ²), which is the geostrophic
// wind of a depth H + Σ a_k exp(−r_k²/2σ²), and the depth in nonlinear
// balance with that wind (balancedDepth).
func balancedBumps(m *mesh.Mesh, p Physics, h, u []float64, sigma float64, xs, ys, amps []float64) error {
	lx, ly := m.Surface.Lx, m.Surface.Ly
	bumps := func(x, y float64) (hh, hx, hy float64) {
		for k := range xs {
			dx, dy := wrap(x-xs[k], lx), wrap(y-ys[k], ly)
			g := amps[k] * math.Exp(-(dx*dx+dy*dy)/(2*sigma*sigma))
			hh += g
			hx -= g * dx / (sigma * sigma)
			hy -= g * dy / (sigma * sigma)
		}
		return
	}
	// Six points per σ leave the spectrum of the products below 1e-16 at
	// the grid's Nyquist wavenumber.
	nx, err := balanceGridSize(6 * lx / sigma)
	if err != nil {
		return err
	}
	ny, err := balanceGridSize(6 * ly / sigma)
	if err != nil {
		return err
	}
	balancedDepth(m, p, h, nx, ny, func(x, y float64) float64 {
		b, _, _ := bumps(x, y)
		return p.G / p.F0 * b
	})
	setStreamfunction(m, u, func(x, y float64) float64 {
		b, _, _ := bumps(x, y)
		return p.G / p.F0 * b
	})
	return nil
}

func vortexPair() *Case {
	return &Case{
		Name: "vortex-pair",
		Doc:  "a cyclone and an anticyclone in nonlinear balance that drift together as a dipole",
		Params: []Param{
			{"amplitude", 15, "geostrophic depth anomaly of each vortex, m (low for the cyclone, high for the anticyclone); the depth adds the nonlinear-balance correction"},
			{"width", 0.06, "vortex radius σ as a fraction of the domain width"},
			{"separation", 0.16, "distance between the centres as a fraction of the domain width"},
		},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needRotation("vortex-pair", p); err != nil {
				return err
			}
			lx, ly := m.Surface.Lx, m.Surface.Ly
			s, d, a := prm["width"]*lx, prm["separation"]*lx/2, prm["amplitude"]
			if !(s > 0) {
				return fmt.Errorf("initial.width = %g: must be > 0", prm["width"])
			}
			if err := balancedBumps(m, p, h, u, s, []float64{lx/2 - d, lx/2 + d}, []float64{ly / 2, ly / 2}, []float64{-a, a}); err != nil {
				return fmt.Errorf("initial.width = %g: too narrow: %w", prm["width"], err)
			}
			return nil
		},
	}
}

func shearLayer() *Case {
	return &Case{
		Name: "shear-layer",
		Doc:  "two opposed jets in geostrophic balance whose flanks are barotropically unstable; a small unbalanced depth perturbation sets off their roll-up into vortices",
		Params: []Param{
			{"u_max", 20, "jet speed, m/s"},
			{"width", 0.04, "jet half-width as a fraction of the domain height"},
			{"perturbation", 0.5, "depth perturbation amplitude, m"},
			{"wavenumber", 4, "along-jet wavenumber of the perturbation"},
		},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needRotation("shear-layer", p); err != nil {
				return err
			}
			lx, ly := m.Surface.Lx, m.Surface.Ly
			w, um := prm["width"]*ly, prm["u_max"]
			if !(w > 0) {
				return fmt.Errorf("initial.width = %g: must be > 0", prm["width"])
			}
			y1, y2 := ly/4, 3*ly/4
			// Distances are taken from y in [0, Ly), not wrapped: erf is odd,
			// so erf of a wrapped distance jumps by 2 where the wrap flips
			// sign (y = 3Ly/4 for the first jet, Ly/4 for the second), a
			// depth step of 2·f·u_max·w·√π/(2g) = 29 m at the defaults.
			// Unwrapped, each jet's depth profile levels off to ±1 at the
			// domain edges: at the edges the arguments are at least
			// Ly/(4w) = 6.25 at the default width, where erfc(6.25) ≈ 1e-18,
			// so the profile is periodic to far below round-off.
			arg := func(y float64) (a, c float64) {
				y = inPeriod(y, ly)
				return (y - y1) / w, (y - y2) / w
			}
			jet := func(y float64) float64 {
				a, c := arg(y)
				return um * (math.Exp(-a*a) - math.Exp(-c*c))
			}
			// g ∂h/∂y = −f u, integrated in closed form: ∫ exp(−s²) = (√π/2) erf.
			// erf(a) − erf(c) is 2 between the jets and 0 outside, each over
			// half the domain, so subtracting 1 keeps the mean depth H.
			depth := func(y float64) float64 {
				a, c := arg(y)
				return -p.F0 * um * w * math.Sqrt(math.Pi) / 2 * (math.Erf(a) - math.Erf(c) - 1) / p.G
			}
			kx := 2 * math.Pi * prm["wavenumber"] / lx
			for i := range h {
				x, y := m.CellX[i], m.CellY[i]
				a, c := arg(y)
				bump := prm["perturbation"] * math.Sin(kx*x) * (math.Exp(-a*a) + math.Exp(-c*c))
				h[i] = p.Depth + depth(y) + bump
			}
			setVelocity(m, u, func(x, y float64) (float64, float64) { return jet(y), 0 })
			return nil
		},
	}
}

func turbulence() *Case {
	return &Case{
		Name: "turbulence",
		Doc:  "random-phase eddies with a spectrum peaked at one wavenumber and the depth of nonlinear balance, left to decay and merge; at their Rossby number of several the start is not slow and sheds some gravity waves",
		Params: []Param{
			{"seed", 1, "random seed"},
			{"k_peak", 6, "wavenumber of the energy peak, in waves per domain"},
			{"u_rms", 8, "root-mean-square speed, m/s"},
		},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needRotation("turbulence", p); err != nil {
				return err
			}
			kp := prm["k_peak"]
			if !(kp >= 1 && kp <= 64) {
				return fmt.Errorf("initial.k_peak = %g: must be between 1 and 64", kp)
			}
			lx, ly := m.Surface.Lx, m.Surface.Ly
			rng := rand.New(rand.NewPCG(uint64(prm["seed"]), 0x9e3779b97f4a7c15))
			type mode struct{ kx, ky, amp, phase float64 }
			var modes []mode
			kmax := int(3 * kp)
			for i := -kmax; i <= kmax; i++ {
				for j := 0; j <= kmax; j++ {
					if j == 0 && i <= 0 {
						continue
					}
					k := math.Hypot(float64(i), float64(j))
					if k > float64(kmax) {
						continue
					}
					// Mode energy ∝ r³ exp(−1.5 r²), r = k/k_p: peaked at k_p.
					r := k / kp
					spec := math.Pow(r, 3) * math.Exp(-1.5*r*r)
					amp := math.Sqrt(spec) / k // ψ amplitude from |u| = k|ψ|
					modes = append(modes, mode{2 * math.Pi * float64(i) / lx, 2 * math.Pi * float64(j) / ly, amp, 2 * math.Pi * rng.Float64()})
				}
			}
			psi := func(x, y float64) (s, sx, sy float64) {
				for _, md := range modes {
					ph := md.kx*x + md.ky*y + md.phase
					c, sn := math.Cos(ph), math.Sin(ph)
					s += md.amp * c
					sx -= md.amp * md.kx * sn
					sy -= md.amp * md.ky * sn
				}
				return
			}
			// Scale to the requested rms speed, measured on the edges.
			setStreamfunction(m, u, func(x, y float64) float64 {
				s, _, _ := psi(x, y)
				return s
			})
			ss := 0.0
			for _, v := range u {
				ss += v * v
			}
			// Each edge carries one of two components: ⟨|v|²⟩ = 2⟨u_e²⟩.
			scale := prm["u_rms"] / math.Sqrt(2*ss/float64(len(u)))
			for e := range u {
				u[e] *= scale
			}
			// The products in the balance equation reach wavenumber 2·kmax;
			// a grid with more than twice that many points per side holds
			// them without aliasing, so the depth is exact.
			nx, err := balanceGridSize(float64(4*kmax + 2))
			if err != nil {
				return fmt.Errorf("initial.k_peak = %g: %w", kp, err)
			}
			balancedDepth(m, p, h, nx, nx, func(x, y float64) float64 {
				s, _, _ := psi(x, y)
				return scale * s
			})
			return nil
		},
	}
}

func seamount() *Case {
	return &Case{
		Name: "seamount",
		Doc:  "the balanced zonal jet of geostrophic-steady flowing over a Gaussian seamount: a Taylor column and a lee wave train",
		Params: []Param{
			{"amplitude", 20, "free-surface anomaly of the jet, m (0 gives a lake at rest)"},
			{"height", 300, "seamount height above the flat bottom, m"},
			{"width", 0.06, "seamount e-folding radius as a fraction of the domain width"},
			{"x0", 0.5, "seamount centre x as a fraction of the domain width"},
			{"y0", 0.25, "seamount centre y as a fraction of the domain height (0.25 is under the jet's core)"},
		},
		init: func(m *mesh.Mesh, p Physics, prm map[string]float64, h, u, b []float64) error {
			if err := needRotation("seamount", p); err != nil {
				return err
			}
			lx, ly := m.Surface.Lx, m.Surface.Ly
			s := prm["width"] * lx
			if !(s > 0) {
				return fmt.Errorf("initial.width = %g: must be > 0", prm["width"])
			}
			if prm["height"] >= p.Depth-prm["amplitude"] {
				return fmt.Errorf("initial.height = %g: the seamount must stay below the surface (physics.depth − amplitude = %g)", prm["height"], p.Depth-prm["amplitude"])
			}
			a, k := prm["amplitude"], 2*math.Pi/ly
			x0, y0 := prm["x0"]*lx, prm["y0"]*ly
			for i := range h {
				dx, dy := wrap(m.CellX[i]-x0, lx), wrap(m.CellY[i]-y0, ly)
				b[i] = prm["height"] * math.Exp(-(dx*dx+dy*dy)/(2*s*s))
				// The free surface h + b is that of the steady jet.
				h[i] = p.Depth + a*math.Sin(k*m.CellY[i]) - b[i]
			}
			setVelocity(m, u, func(x, y float64) (float64, float64) {
				return -p.G / p.F0 * a * k * math.Cos(k*y), 0
			})
			return nil
		},
	}
}
