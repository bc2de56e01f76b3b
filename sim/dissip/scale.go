package dissip

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gyrebench/sim/ops"
)

// GridScale is what a user needs to choose a coefficient by time scale:
// the grid's mean spacing d and the largest eigenvalue κ²_max of −∇² (the
// discrete Laplacian's largest wavenumber squared; 8/d² on the uniform
// square grid, where the symbol is (4/d²)[sin²(kd/2) + sin²(ld/2)]). A
// mode at the grid scale decays as exp(−t/τ) with
//
//	1/τ = ν₂ κ²_max + ν₄ κ⁴_max
//
// (plus ν_δ κ²_max for a divergent mode). Common practice chooses
// ν₄ = C d⁴/τ for a wanted grid-scale e-folding time τ; with the measured
// κ_max, C = 1/(κ_max d)⁴.
type GridScale struct {
	Spacing   float64 `json:"spacing_m"`      // mean dual-edge length d, m
	Kappa2Max float64 `json:"kappa2_max_m-2"` // largest eigenvalue of −∇², m⁻²
}

// MeasureGridScale finds κ²_max of g's vector Laplacian by power iteration
// in the energy inner product Σ l_e d_e u_e v_e, in which −∇² is symmetric
// positive semi-definite; the Rayleigh quotient approaches κ²_max from
// below, within about 1 % after the fixed number of iterations used (the
// top of the spectrum is a continuum, so more buy little). run runs the
// loops as in New. It allocates a few edge fields.
func MeasureGridScale(g ops.Grid, star ops.EdgeHodge, run func(n int, body func(lo, hi int))) GridScale {
	lap := ops.NewVectorLaplacian(g, star)
	ne := g.NumEdges
	v, w := make([]float64, ne), make([]float64, ne)
	rng := rand.New(rand.NewPCG(1, 2))
	for e := range v {
		v[e] = rng.NormFloat64()
	}
	dot := func(a, b []float64) float64 {
		s := 0.0
		for e := range a {
			s += g.EdgeLength[e] * g.DualLength[e] * a[e] * b[e]
		}
		return s
	}
	var lambda float64
	for range 60 {
		lap.Apply(w, v, -1, -1, run)
		lambda = dot(v, w) / dot(v, v)
		n := math.Sqrt(dot(w, w))
		if n == 0 {
			break
		}
		for e := range v {
			v[e] = w[e] / n
		}
	}
	return GridScale{Spacing: g.Spacing(), Kappa2Max: lambda}
}

// Rate returns the grid-scale damping rate 1/τ = ν₂κ²_max + ν₄κ⁴_max, s⁻¹.
func (s GridScale) Rate(c Coefficients) float64 {
	return c.Viscosity*s.Kappa2Max + c.Hyperviscosity*s.Kappa2Max*s.Kappa2Max
}

// EFoldingTime returns τ = 1/Rate, s; +Inf without dissipation.
func (s GridScale) EFoldingTime(c Coefficients) float64 {
	r := s.Rate(c)
	if r == 0 {
		return math.Inf(1)
	}
	return 1 / r
}

// HyperviscosityFor returns the ν₄ that alone damps the grid scale with
// e-folding time tau (s): 1/(κ⁴_max τ).
func (s GridScale) HyperviscosityFor(tau float64) float64 {
	return 1 / (s.Kappa2Max * s.Kappa2Max * tau)
}

// ViscosityFor returns the ν₂ that alone damps the grid scale with
// e-folding time tau (s): 1/(κ²_max τ).
func (s GridScale) ViscosityFor(tau float64) float64 { return 1 / (s.Kappa2Max * tau) }

// Hint is one line for people next to the dissipation controls: the
// common-practice scaling and the grid-scale e-folding time now.
func (s GridScale) Hint(c Coefficients) string {
	k4d4 := s.Kappa2Max * s.Kappa2Max * math.Pow(s.Spacing, 4)
	now := "no dissipation: the grid scale is not damped"
	if tau := s.EFoldingTime(c); !math.IsInf(tau, 1) {
		now = "grid-scale e-folding time now " + Duration(tau)
	}
	return fmt.Sprintf("%s. Common practice: ν₄ = C·d⁴/τ for e-folding time τ at the grid scale; here d = %.4g m, C = 1/(κ_max d)⁴ = %.3g, so τ = 1 h needs ν₄ = %.3g m⁴/s (or ν₂ = %.3g m²/s)",
		now, s.Spacing, 1/k4d4, s.HyperviscosityFor(3600), s.ViscosityFor(3600))
}

// Duration writes a time span in seconds for people.
func Duration(t float64) string {
	switch {
	case t < 120:
		return fmt.Sprintf("%.3g s", t)
	case t < 2*3600:
		return fmt.Sprintf("%.3g min", t/60)
	case t < 2*86400:
		return fmt.Sprintf("%.3g h", t/3600)
	}
	return fmt.Sprintf("%.3g d", t/86400)
}
