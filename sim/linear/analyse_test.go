package linear

import (
	"context"
	"errors"
	"math"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scheme"
)

func analyse(t *testing.T, kind string, n int, edit func(*sim.Config)) (*Result, sim.Config) {
	t.Helper()
	cfg := sim.DefaultConfig()
	cfg.Grid.Kind, cfg.Grid.N = kind, n
	if edit != nil {
		edit(&cfg)
	}
	r, err := Analyse(context.Background(), cfg, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return r, cfg
}

// On the quad f-plane every eigenvalue is a root of the C-grid dispersion
// relation derived in QuadCGrid (Arakawa & Lamb 1977, Methods in
// Computational Physics 17, 173–265, scheme C; recalled from memory and
// re-derived there for our operator) at the mode's dominant wavevector:
// inertia–gravity modes ω² = f² cos²(k dx/2) cos²(l dy/2) + 4gH[sin²(k dx/2)/dx²
// + sin²(l dy/2)/dy²], geostrophic modes ω = 0.
func TestQuadDispersionMatchesCGrid(t *testing.T) {
	for _, tc := range []struct {
		name string
		n    int
		edit func(*sim.Config)
	}{
		{"n=8", 8, nil},
		{"n=16", 16, nil},
		{"n=7 (odd: padded solver)", 7, nil},
		{"rectangular cells", 8, func(c *sim.Config) { c.Grid.Height = 0.9e6 }},
		{"al81", 8, func(c *sim.Config) { c.Scheme.Name = scheme.AL81 }},
		{"trisk-enstrophy", 8, func(c *sim.Config) { c.Scheme.Name = scheme.TRiSKEnstrophy }},
		{"apvm", 8, func(c *sim.Config) { c.Scheme.Name = scheme.APVM }},
		{"sadourny-energy", 8, func(c *sim.Config) { c.Scheme.Name = scheme.SadournyEnergy }},
		{"sadourny-enstrophy", 8, func(c *sim.Config) { c.Scheme.Name = scheme.SadournyEnstrophy }},
		{"no rotation", 8, func(c *sim.Config) { c.Physics.F0 = 0 }},
		{"deep, strong rotation", 8, func(c *sim.Config) { c.Physics.Depth, c.Physics.F0 = 4000, 1.4e-4 }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if tc.n > 8 && testing.Short() {
				t.Skip("the full suite runs n = 16; the short suite (run with -race) keeps to n ≤ 8")
			}
			r, cfg := analyse(t, "quad", tc.n, tc.edit)
			p := cfg.Physics
			rows := r.Cells / tc.n
			dx, dy := cfg.Grid.Length/float64(tc.n), cfg.Grid.Length/float64(rows)
			if cfg.Grid.Height != 0 {
				dy = cfg.Grid.Height / float64(rows)
			}
			if !r.SkewAdjoint {
				t.Fatalf("the linearised operator is not antisymmetric in the energy norm (defect %.3g)", r.SkewDefect)
			}
			if len(r.Modes) != r.Unknowns {
				t.Fatalf("%d modes for %d unknowns", len(r.Modes), r.Unknowns)
			}
			worst := 0.0
			for _, m := range r.Modes {
				switch m.Class {
				case Geostrophic:
					if math.Abs(m.Frequency) > 1e-9*r.MaxFrequency {
						t.Errorf("geostrophic mode with ω = %g", m.Frequency)
					}
				case InertiaGravity:
					want := math.Copysign(QuadCGrid(p.F0, p.G, p.Depth, dx, dy, m.Kx, m.Ky), m.Frequency)
					worst = max(worst, math.Abs(m.Frequency-want)/math.Abs(want))
				default:
					t.Errorf("class %s on the quad f-plane", m.Class)
				}
				if m.GrowthRate > r.GrowthTolerance {
					t.Errorf("mode grows at %g s⁻¹", m.GrowthRate)
				}
			}
			if worst > 1e-9 {
				t.Errorf("largest relative deviation from the C-grid relation %.3g", worst)
			}
			// The fastest wave sits at the corner (π/dx, π/dy) when both
			// counts of cells are even.
			if tc.n%2 == 0 && rows%2 == 0 {
				top := QuadCGrid(p.F0, p.G, p.Depth, dx, dy, math.Pi/dx, math.Pi/dy)
				if math.Abs(r.MaxFrequency-top) > 1e-12*top {
					t.Errorf("max |ω| = %.16g, the relation gives %.16g at the zone corner", r.MaxFrequency, top)
				}
			}
			// One geostrophic and two inertia–gravity modes per wavevector
			// (N_v = N_c on the quad grid), and two more steady modes, the
			// uniform flows, without rotation.
			geo := r.Cells
			if p.F0 == 0 {
				geo += 2
			}
			want := Counts{InertiaGravity: r.Unknowns - geo, Geostrophic: geo}
			if r.Counts != want || *r.Expected != want {
				t.Errorf("counts %+v (expected %+v), want %+v", r.Counts, *r.Expected, want)
			}
			if r.Growing != 0 || r.MaxGrowthRate > r.GrowthTolerance {
				t.Errorf("%d growing modes, max rate %g", r.Growing, r.MaxGrowthRate)
			}
		})
	}
}

// Counts on the hexagonal and triangular f-planes, derived in the package
// documentation ("Counts"):
//
//   - hex: N_v = 2N_c vertices, so 2N_c zero-frequency balanced modes;
//     the hexagonal C-grid's extra branch (Thuburn 2008, J. Comput. Phys.
//     227, 3715–3730, spurious Rossby modes, stationary on the f-plane;
//     from memory) takes N_c of them, except that for 3 | n the zone
//     corners K, K' move two smooth ones into it. 2N_c inertia–gravity
//     modes, none spurious.
//   - tri: N_c = 2N_v; N_v geostrophic modes and 4N_v inertia–gravity
//     modes, of which the extra mass points add 2N_v spurious ones (the
//     triangular C-grid's checkerboard branch; Danilov 2010, Gassmann
//     2011, from memory).
func TestClassCountsHexTri(t *testing.T) {
	for _, tc := range []struct {
		kind                          string
		n                             int
		inertiaGravity, geo, spurious int
	}{
		{"hex", 8, 128, 64, 64},    // N_c = 64
		{"hex", 12, 288, 142, 146}, // N_c = 144, 3 | n
		{"hex", 10, 200, 100, 100}, // N_c = 100
		{"tri", 8, 128, 64, 128},   // N_v = 64
		{"tri", 6, 72, 36, 72},     // N_v = 36, 3 | n
	} {
		if tc.n > 10 && testing.Short() {
			continue // the full suite runs it; the short suite runs with -race
		}
		r, _ := analyse(t, tc.kind, tc.n, nil)
		want := Counts{InertiaGravity: tc.inertiaGravity, Geostrophic: tc.geo, Spurious: tc.spurious}
		if r.Counts != want {
			t.Errorf("%s n=%d: counts %+v, want %+v", tc.kind, tc.n, r.Counts, want)
		}
		if r.Expected == nil || *r.Expected != want {
			t.Errorf("%s n=%d: derived counts %+v, want %+v", tc.kind, tc.n, r.Expected, want)
		}
		if r.Growing != 0 || !r.SkewAdjoint {
			t.Errorf("%s n=%d: %d growing modes, antisymmetric %v", tc.kind, tc.n, r.Growing, r.SkewAdjoint)
		}
		for _, m := range r.Modes {
			switch {
			case tc.kind == "hex" && m.Class == Spurious && m.Score < 1-1e-9,
				tc.kind == "hex" && m.Class == Geostrophic && m.Score > 1e-9:
				// On the f-plane each wavevector's balanced pair splits
				// exactly into a smooth and an alternating mode.
				t.Errorf("hex n=%d: %s mode with score %g", tc.n, m.Class, m.Score)
			case tc.kind == "tri" && m.Class == InertiaGravity && math.Hypot(m.Kx, m.Ky)*1e6/float64(tc.n) < 1:
				// The physical branch converges to ω² = f² + gH|k|² (a few
				// per cent at k·dx < 1 on this coarse grid).
				if d := math.Abs(m.Frequency-m.OmegaContinuous) / math.Abs(m.OmegaContinuous); d > 0.02 {
					t.Errorf("tri n=%d: physical mode at k·dx < 1 off the continuous relation by %.3g", tc.n, d)
				}
			case tc.kind == "tri" && m.Class == Spurious && math.Hypot(m.Kx, m.Ky)*1e6/float64(tc.n) < 1:
				// The spurious branch is the near-flat top of the spectrum.
				if math.Abs(m.Frequency) < 0.9*r.MaxFrequency {
					t.Errorf("tri n=%d: spurious mode at k·dx < 1 with |ω| = %.3g of the maximum", tc.n, math.Abs(m.Frequency)/r.MaxFrequency)
				}
			}
		}
	}
}

// Where f varies the balanced branch has non-zero, slow frequencies: on the
// β-plane they stay far below f₀ while every inertia–gravity frequency is
// near or above it, the gap the count rule relies on.
func TestBetaPlaneRossbyBranch(t *testing.T) {
	r, cfg := analyse(t, "hex", 8, func(c *sim.Config) { c.Physics.Beta = 1.6e-11 })
	if r.Counts.Rossby == 0 || r.Counts.Geostrophic+r.Counts.Rossby+r.Counts.Spurious != r.Vertices {
		t.Fatalf("counts %+v: want a Rossby branch and one balanced mode per vertex (%d)", r.Counts, r.Vertices)
	}
	slow, fast := 0.0, math.Inf(1)
	for _, m := range r.Modes {
		if m.Class == InertiaGravity {
			fast = min(fast, math.Abs(m.Frequency))
		} else {
			slow = max(slow, math.Abs(m.Frequency))
		}
	}
	f0 := cfg.Physics.F0
	if slow > 0.1*f0 || fast < 0.9*f0 {
		t.Errorf("balanced modes up to %.3g, inertia–gravity from %.3g, f₀ = %.3g", slow, fast, f0)
	}
	if r.Growing != 0 {
		t.Errorf("trisk-energy on the β-plane: %d growing modes", r.Growing)
	}
}

// The icosahedral sphere: rest with f = 2Ω sin(latitude); the scheme
// conserves the linear energy, so the operator is antisymmetric and
// nothing grows, and the balanced branch has one mode per vertex.
func TestSphere(t *testing.T) {
	r, _ := analyse(t, "icosahedral", 1, nil)
	if !r.SkewAdjoint || r.Growing != 0 {
		t.Errorf("antisymmetric %v (defect %.3g), %d growing", r.SkewAdjoint, r.SkewDefect, r.Growing)
	}
	if bal := r.Counts.Geostrophic + r.Counts.Rossby + r.Counts.Spurious; bal != r.Vertices || r.Counts.Rossby == 0 {
		t.Errorf("counts %+v, want %d balanced modes", r.Counts, r.Vertices)
	}
	if r.Expected != nil || !math.IsNaN(r.Modes[0].Kx) {
		t.Errorf("the sphere has no planar wavevector or derived counts")
	}
}

// The enstrophy-conserving PV flux f_e C is not antisymmetric once f
// varies (exactJacobian): the general solver takes over and reports the
// real parts it finds.
func TestNonConservingOperatorUsesGeneralSolver(t *testing.T) {
	r, _ := analyse(t, "quad", 6, func(c *sim.Config) {
		c.Scheme.Name = scheme.TRiSKEnstrophy
		c.Physics.Beta = 1.6e-11
	})
	if r.SkewAdjoint || r.Method != "dense-general" || r.SkewDefect < 1e-6 {
		t.Errorf("method %s, antisymmetric %v, defect %.3g", r.Method, r.SkewAdjoint, r.SkewDefect)
	}
	if len(r.Modes) != r.Unknowns {
		t.Errorf("%d modes for %d unknowns", len(r.Modes), r.Unknowns)
	}
}

// The extreme-frequency iteration agrees with the C-grid relation at the
// zone corner (the largest frequency on the quad f-plane) for sizes far
// beyond the dense analysis.
func TestExtremeFrequency(t *testing.T) {
	for _, n := range []int{12, 64} {
		cfg := sim.DefaultConfig()
		cfg.Grid.Kind, cfg.Grid.N = "quad", n
		r, err := Analyse(context.Background(), cfg, Options{ExtremeOnly: true})
		if err != nil {
			t.Fatal(err)
		}
		p := cfg.Physics
		d := cfg.Grid.Length / float64(n)
		want := QuadCGrid(p.F0, p.G, p.Depth, d, d, math.Pi/d, math.Pi/d)
		if r.Method != "lanczos" || math.Abs(r.MaxFrequency-want) > 1e-8*want {
			t.Errorf("n=%d: %s gives %.12g after %d steps, want %.12g", n, r.Method, r.MaxFrequency, r.Iterations, want)
		}
		if len(r.Modes) != 2 || r.Modes[0].Frequency != r.MaxFrequency || r.Modes[0].Class != "" {
			t.Errorf("n=%d: extreme rows %+v", n, r.Modes)
		}
	}
}

func TestAnalyseBadInput(t *testing.T) {
	ctx := context.Background()
	big := sim.DefaultConfig() // hex n = 64: 16 384 unknowns
	_, err := Analyse(ctx, big, Options{})
	var tl *TooLargeError
	if !errors.As(err, &tl) || tl.Unknowns != 16384 {
		t.Errorf("hex n=64 dense: error %v, want a TooLargeError for 16384 unknowns", err)
	}
	for _, tc := range []struct {
		edit func(*sim.Config)
		want string
	}{
		{func(c *sim.Config) { c.Grid.Kind = "pentagon" }, "grid.kind"},
		{func(c *sim.Config) { c.Grid.Kind, c.Grid.N = "hex", 5 }, "grid.n"},
		{func(c *sim.Config) { c.Physics.Depth = -1 }, "physics.depth"},
		{func(c *sim.Config) { c.Scheme.Name = "upwind" }, "scheme.name"},
		{func(c *sim.Config) { c.Grid.Kind, c.Scheme.Name = "hex", scheme.AL81 }, "scheme.name"},
	} {
		cfg := sim.DefaultConfig()
		cfg.Grid.N = 8
		tc.edit(&cfg)
		if _, err := Analyse(ctx, cfg, Options{}); err == nil || !contains(err.Error(), tc.want) {
			t.Errorf("want an error naming %s, got %v", tc.want, err)
		}
	}
	if _, err := StableDt(ctx, sim.DefaultConfig(), "rk5"); err == nil || !contains(err.Error(), "time.integrator") {
		t.Errorf("StableDt with rk5: %v", err)
	}
}

func contains(s, sub string) bool {
	for i := 0; i+len(sub) <= len(s); i++ {
		if s[i:i+len(sub)] == sub {
			return true
		}
	}
	return false
}

// The predicted limit against the nonlinear scheme: 10 % below it a small
// perturbation of rest survives VerifySteps steps, 10 % above it blows up
// (bounds of step.ImaginaryAxisLimit, checked in sim/step).
func TestStableDtMatchesEmpirical(t *testing.T) {
	ctx := context.Background()
	for _, kind := range []mesh.Kind{mesh.Quad, mesh.Hex} {
		cfg := sim.DefaultConfig()
		cfg.Grid.Kind, cfg.Grid.N = string(kind), 8
		for _, in := range []string{"rk3", "rk4", "leapfrog"} {
			dt, err := StableDt(ctx, cfg, in)
			if err != nil {
				t.Fatal(err)
			}
			below, err := VerifyDt(ctx, cfg, in, 0.9*dt)
			if err != nil {
				t.Fatal(err)
			}
			above, err := VerifyDt(ctx, cfg, in, 1.1*dt)
			if err != nil {
				t.Fatal(err)
			}
			if below.BlewUp || below.Steps != VerifySteps || below.Growth > 1 {
				t.Errorf("%s %s at 0.9 × %.4g s: %+v, want it to survive", kind, in, dt, below)
			}
			if !above.BlewUp {
				t.Errorf("%s %s at 1.1 × %.4g s: %+v, want it to blow up", kind, in, dt, above)
			}
		}
		if dt, err := StableDt(ctx, cfg, "euler"); err != nil || dt != 0 {
			t.Errorf("euler: Δt %g, %v; want 0 (no stable Δt)", dt, err)
		}
	}
}
