// Package structure measures, for one grid, Hodge-star choice and scheme,
// the discrete conditions behind each conservation law of the
// shallow-water C-grid discretisation and reports what follows from them:
//
//   - mass and vorticity: the incidence matrices form exact sequences,
//     D2·D1 = 0 and D̄2·D̄1 = 0 in integers;
//   - energy: the Hodge star H is symmetric positive definite and the
//     Coriolis operator W is antisymmetric (Thuburn & Cotter 2012, SIAM J.
//     Sci. Comput. 34, B203–B225; Ringler, Thuburn, Klemp & Skamarock 2010,
//     J. Comput. Phys. 229, 3065–3090, §4); measured directly as the
//     semi-discrete dE/dt of the scheme on random states;
//   - potential enstrophy: measured as dZ/dt on random states (only the
//     enstrophy-conserving schemes keep it);
//   - steady geostrophic modes: D̄2 W = R D2 (Thuburn, Ringler, Skamarock &
//     Klemp 2009, J. Comput. Phys. 228, 8321–8335), and the linearised
//     tendency of a discrete geostrophic state built from a vertex stream
//     function vanishes on an f-plane (f-sphere);
//   - consistency: H applied to a known flow against its exact fluxes.
//
// Each boolean of a Report is derived from the measured numbers with the
// thresholds the Report carries. The package sees the grid's topology and
// metric, and the coordinates only to build the known flow.
package structure

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
	"gyrebench/sim/scheme"
)

// Thresholds are the bounds the booleans of a Report are derived from.
type Thresholds struct {
	// RoundOff bounds the relative rates and defects that must vanish:
	// energy_conserving is energy_rate_relative ≤ RoundOff, and so on.
	RoundOff float64 `json:"round_off"`
	// Geostrophic bounds the relative linearised tendency of the discrete
	// geostrophic state (it passes through a conjugate-gradient solve).
	Geostrophic float64 `json:"geostrophic"`
	// ConsistencyPlane bounds hodge_consistency_error on the plane, where
	// a consistent H is exact for uniform flow.
	ConsistencyPlane float64 `json:"consistency_plane"`
	// ConsistencySphere bounds hodge_consistency_error_l2 on the sphere,
	// where the flow is solid rotation and the reference fluxes midpoint
	// values: there a consistent H converges (on the cubed sphere the
	// relative l2 error falls from 0.021 at n = 8 to 0.00097 at n = 64,
	// the max error at first order, seams and corners) while the diagonal
	// one stays near 0.15–0.18 (measured).
	ConsistencySphere float64 `json:"consistency_sphere"`
}

// DefaultThresholds are the thresholds Measure uses.
var DefaultThresholds = Thresholds{RoundOff: 1e-12, Geostrophic: 1e-10, ConsistencyPlane: 1e-10, ConsistencySphere: 0.05}

// Report is the structure report of one grid, Hodge choice and scheme.
type Report struct {
	Grid     string `json:"grid"`
	N        int    `json:"n"`
	Cells    int    `json:"cells"`
	Edges    int    `json:"edges"`
	Vertices int    `json:"vertices"`
	Scheme   string `json:"scheme"`
	Hodge    string `json:"hodge"` // the choice, scheme.hodge
	// HodgeMatrix is "diagonal" when H = diag(l/d) is applied (orthogonal
	// dual, or the diagonal choice), "general" for a sparse matrix.
	HodgeMatrix string `json:"hodge_matrix"`
	// DualNonOrthogonality is the largest angle (radians) between a dual
	// edge and the normal of its primal edge (0 on an orthogonal dual).
	DualNonOrthogonality float64 `json:"dual_non_orthogonality"`

	// IncidenceDefect is the largest |entry| of D2·D1 and of D̄2·D̄1, an
	// integer that must be 0.
	IncidenceDefect int `json:"incidence_defect"`
	// HodgeSymmetryDefect is max |H − Hᵀ| / max |H|.
	HodgeSymmetryDefect float64 `json:"hodge_symmetry_defect"`
	// HodgeMinEigenvalue and HodgeMaxEigenvalue are the extreme
	// eigenvalues of H (dimensionless: H maps circulations to fluxes per
	// unit thickness), by HodgeEigenMethod: "diagonal" (exact), "dense"
	// (gonum EigenSym, to round-off) or "lanczos" (Ritz values after
	// HodgeEigenSteps steps with full reorthogonalisation; they lie inside
	// the spectrum and the change over the last ten steps is below
	// HodgeEigenTolerance).
	HodgeMinEigenvalue  float64 `json:"hodge_min_eigenvalue"`
	HodgeMaxEigenvalue  float64 `json:"hodge_max_eigenvalue"`
	HodgeEigenMethod    string  `json:"hodge_eigen_method"`
	HodgeEigenSteps     int     `json:"hodge_eigen_steps,omitempty"`
	HodgeEigenTolerance float64 `json:"hodge_eigen_tolerance,omitempty"`
	// HodgeConsistencyError is max_e |(H v)_e − flux_e| / max |flux| on
	// HodgeConsistencyFlow: uniform flow on the plane (exact fluxes), solid
	// rotation on the sphere (midpoint fluxes).
	// HodgeConsistencyErrorL2 is the relative l2 norm of the same error.
	HodgeConsistencyError   float64 `json:"hodge_consistency_error"`
	HodgeConsistencyErrorL2 float64 `json:"hodge_consistency_error_l2"`
	HodgeConsistencyFlow    string  `json:"hodge_consistency_flow"`

	// CoriolisAntisymmetryDefect is max |W + Wᵀ| / max |W| for the TRiSK
	// weights.
	CoriolisAntisymmetryDefect float64 `json:"coriolis_antisymmetry_defect"`
	// CoriolisConsistencyError and its _l2 compare W F, for the fluxes F
	// of the same known flow, with the circulations of k × w along the
	// dual edges: the accuracy of the PV flux, which no conservation law
	// needs (with kite-area R it does not converge in max at the seams of
	// the cubed sphere).
	CoriolisConsistencyError   float64 `json:"coriolis_consistency_error"`
	CoriolisConsistencyErrorL2 float64 `json:"coriolis_consistency_error_l2"`
	// GeostrophicCompatibilityDefect is max |D̄2 W F − R D2 F| over the
	// larger of the two terms, on random fluxes F.
	GeostrophicCompatibilityDefect float64 `json:"geostrophic_compatibility_defect"`
	// GeostrophicResidual is the largest linearised tendency of a discrete
	// geostrophic state (F = D1 ψ, g h' = −(f/H₀) Rᵀψ) on an f-plane
	// (f-sphere), relative to its Coriolis and pressure terms.
	GeostrophicResidual float64 `json:"geostrophic_residual"`

	// Semi-discrete rates on random states, each over the sum of the
	// absolute values of its terms (largest of three states).
	MassRateRelative      float64 `json:"mass_rate_relative"`
	EnergyRateRelative    float64 `json:"energy_rate_relative"`
	EnstrophyRateRelative float64 `json:"enstrophy_rate_relative"`

	EnergyConserving       bool `json:"energy_conserving"`
	EnstrophyConserving    bool `json:"enstrophy_conserving"`
	SteadyGeostrophicModes bool `json:"steady_geostrophic_modes"`
	Consistent             bool `json:"consistent"`

	Thresholds Thresholds `json:"thresholds"`
}

// denseLimit is the number of edges up to which the eigenvalues of H come
// from a dense decomposition.
const denseLimit = 3000

// FromConfig builds the mesh of cfg and measures it with cfg's scheme and
// Hodge choice. The initial condition plays no part.
func FromConfig(cfg sim.Config) (Report, error) {
	// Every field but the case is checked by the rules of a run.
	c := cfg.Clone()
	c.Initial.Params = nil
	c.Initial.Case = "gaussian-bump"
	if err := c.Validate(); err != nil {
		c.Initial.Case = "williamson-2"
		if c.Validate() != nil {
			return Report{}, err
		}
	}
	msh, err := mesh.New(cfg.MeshSpec())
	if err != nil {
		return Report{}, err
	}
	return Measure(msh, cfg)
}

// Of measures the grid and scheme of a running model.
func Of(m *sim.Model) (Report, error) {
	return Measure(m.Mesh(), m.Config())
}

// Measure measures msh with the scheme, Hodge choice and physics of cfg.
func Measure(msh *mesh.Mesh, cfg sim.Config) (Report, error) {
	g, err := sim.HodgeGrid(msh, cfg.Scheme.Hodge)
	if err != nil {
		return Report{}, err
	}
	hodge := cfg.Scheme.Hodge
	if hodge == "" {
		hodge = scheme.HodgeConsistent
	}
	r := Report{Grid: string(msh.Kind), N: msh.N, Cells: msh.NumCells, Edges: msh.NumEdges, Vertices: msh.NumVertices,
		Scheme: cfg.Scheme.Name, Hodge: hodge, HodgeMatrix: "diagonal", Thresholds: DefaultThresholds}
	if g.Hodge != nil {
		r.HodgeMatrix = "general"
	}
	r.DualNonOrthogonality = msh.NonOrthogonality()
	r.IncidenceDefect = incidenceDefect(g)
	r.HodgeSymmetryDefect = symmetryDefect(g)
	if err := r.eigenvalues(g); err != nil {
		return r, err
	}
	r.HodgeConsistencyError, r.HodgeConsistencyErrorL2, r.HodgeConsistencyFlow = consistencyError(msh, g)
	r.CoriolisAntisymmetryDefect = antisymmetryDefect(msh)
	r.CoriolisConsistencyError, r.CoriolisConsistencyErrorL2 = coriolisConsistency(msh, g)
	r.GeostrophicCompatibilityDefect = compatibilityDefect(g)

	pool := par.New(1)
	defer pool.Close()
	depth := cfg.Physics.Depth
	f0 := cfg.Physics.F0
	if msh.Surface.Sphere {
		f0 = 2 * cfg.Physics.Omega
	}
	if f0 == 0 {
		f0 = 1e-4
	}
	r.GeostrophicResidual, err = geostrophicResidual(g, cfg, pool, f0, depth)
	if err != nil {
		return r, err
	}
	for seed := uint64(1); seed <= 3; seed++ {
		m, e, z, err := rates(g, cfg, pool, seed)
		if err != nil {
			return r, err
		}
		r.MassRateRelative = max(r.MassRateRelative, m)
		r.EnergyRateRelative = max(r.EnergyRateRelative, e)
		r.EnstrophyRateRelative = max(r.EnstrophyRateRelative, z)
	}
	t := r.Thresholds
	r.EnergyConserving = r.IncidenceDefect == 0 && r.EnergyRateRelative <= t.RoundOff && r.HodgeMinEigenvalue > 0
	r.EnstrophyConserving = r.IncidenceDefect == 0 && r.EnstrophyRateRelative <= t.RoundOff
	r.SteadyGeostrophicModes = r.IncidenceDefect == 0 && r.GeostrophicCompatibilityDefect <= t.RoundOff &&
		r.CoriolisAntisymmetryDefect <= t.RoundOff && r.GeostrophicResidual <= t.Geostrophic
	r.Consistent = r.HodgeConsistencyError <= t.ConsistencyPlane
	if msh.Surface.Sphere {
		r.Consistent = r.HodgeConsistencyErrorL2 <= t.ConsistencySphere
	}
	return r, nil
}

// incidenceDefect returns the largest |entry| of D2·D1 (cells × vertices)
// and of D̄2·D̄1 (vertices × cells), with (D1 ψ)_e = ψ_{v1} − ψ_{v0},
// (D2 F)_i = Σ_e n_{e,i} F_e, (D̄1 φ)_e = φ_{c1} − φ_{c0} and
// (D̄2 x)_v = Σ_e t_{e,v} x_e, in integer arithmetic.
func incidenceDefect(g ops.Grid) int {
	return max(productDefect(g.CellEdgeStart, g.CellEdges, g.CellEdgeSign, g.EdgeVertices),
		productDefect(g.VertexEdgeStart, g.VertexEdges, g.VertexEdgeSign, g.EdgeCells))
}

// productDefect returns the largest |entry| of the product of two
// incidence matrices, in integers: the signed edges of each row (start,
// edges, sign in CSR layout) times the edges' ends (2 per edge, −1 at the
// first, +1 at the second).
func productDefect(start, edges []int32, sign []int8, end []int32) int {
	worst := 0
	acc := map[int32]int{}
	for i := 0; i+1 < len(start); i++ {
		for k := start[i]; k < start[i+1]; k++ {
			e, s := edges[k], int(sign[k])
			acc[end[2*e+1]] += s
			acc[end[2*e]] -= s
		}
		for k, v := range acc {
			if v < 0 {
				v = -v
			}
			worst = max(worst, v)
			delete(acc, k)
		}
	}
	return worst
}

func symmetryDefect(g ops.Grid) float64 {
	h := g.Hodge
	if h == nil {
		return 0
	}
	var worst, big float64
	for e := 0; e < g.NumEdges; e++ {
		for k := h.Start[e]; k < h.Start[e+1]; k++ {
			worst = max(worst, math.Abs(h.Val[k]-h.At(int(h.Col[k]), e)))
			big = max(big, math.Abs(h.Val[k]))
		}
	}
	return worst / big
}

// applyHodge sets dst = H v for the grid's Hodge star (diag(l/d) when
// the grid has none).
func applyHodge(g ops.Grid, dst, v []float64) {
	if g.Hodge != nil {
		g.Hodge.Apply(dst, v, 0, g.NumEdges)
		return
	}
	for e := range dst {
		dst[e] = g.EdgeLength[e] / g.DualLength[e] * v[e]
	}
}

func (r *Report) eigenvalues(g ops.Grid) error {
	ne := g.NumEdges
	if g.Hodge == nil {
		r.HodgeEigenMethod = "diagonal"
		r.HodgeMinEigenvalue, r.HodgeMaxEigenvalue = math.Inf(1), math.Inf(-1)
		for e := 0; e < ne; e++ {
			x := g.EdgeLength[e] / g.DualLength[e]
			r.HodgeMinEigenvalue = min(r.HodgeMinEigenvalue, x)
			r.HodgeMaxEigenvalue = max(r.HodgeMaxEigenvalue, x)
		}
		return nil
	}
	if ne <= denseLimit {
		a := mat.NewSymDense(ne, nil)
		h := g.Hodge
		for e := 0; e < ne; e++ {
			for k := h.Start[e]; k < h.Start[e+1]; k++ {
				if f := int(h.Col[k]); f >= e {
					a.SetSym(e, f, h.Val[k])
				}
			}
		}
		var eig mat.EigenSym
		if !eig.Factorize(a, false) {
			return fmt.Errorf("structure: eigen-decomposition of H failed")
		}
		ev := eig.Values(nil)
		r.HodgeEigenMethod = "dense"
		r.HodgeMinEigenvalue, r.HodgeMaxEigenvalue = ev[0], ev[len(ev)-1]
		return nil
	}
	lo, hi, steps, change := lanczosExtremes(g, lanczosSteps(ne))
	r.HodgeEigenMethod, r.HodgeEigenSteps, r.HodgeEigenTolerance = "lanczos", steps, change
	r.HodgeMinEigenvalue, r.HodgeMaxEigenvalue = lo, hi
	return nil
}

// lanczosSteps bounds the Lanczos steps so that the stored basis stays
// within 32 M values (256 MB): 300 steps up to about 100 000 edges, fewer
// (at least 20) beyond, where the reported change tells how far the
// extremes had settled.
func lanczosSteps(ne int) int {
	return max(20, min(300, 32<<20/max(ne, 1)))
}

// lanczosExtremes returns the extreme Ritz values of H after at most
// maxSteps Lanczos steps with full reorthogonalisation (two Gram–Schmidt
// passes: one loses orthogonality on these spectra), stopping when both
// have changed by less than 1e-10 relative over ten steps; it returns the
// steps taken and that last relative change.
func lanczosExtremes(g ops.Grid, maxSteps int) (lo, hi float64, steps int, change float64) {
	ne := g.NumEdges
	rng := rand.New(rand.NewPCG(1, 2))
	q := make([]float64, ne)
	for e := range q {
		q[e] = rng.NormFloat64()
	}
	normalise(q)
	var basis [][]float64
	var alpha, beta []float64
	w := make([]float64, ne)
	prevLo, prevHi := math.NaN(), math.NaN()
	change = math.Inf(1)
	for k := 0; k < maxSteps && k < ne; k++ {
		basis = append(basis, append([]float64(nil), q...))
		applyHodge(g, w, q)
		a := dot(w, q)
		alpha = append(alpha, a)
		for pass := 0; pass < 2; pass++ { // full reorthogonalisation, twice
			for _, b := range basis {
				c := dot(w, b)
				for e := range w {
					w[e] -= c * b[e]
				}
			}
		}
		bn := math.Sqrt(dot(w, w))
		steps = k + 1
		if steps%10 == 0 || bn < 1e-14 {
			lo, hi = tridiagExtremes(alpha, beta)
			if !math.IsNaN(prevLo) {
				change = max(math.Abs(lo-prevLo)/math.Abs(hi), math.Abs(hi-prevHi)/math.Abs(hi))
				if change < 1e-10 {
					return lo, hi, steps, change
				}
			}
			prevLo, prevHi = lo, hi
		}
		if bn < 1e-14 {
			return lo, hi, steps, 0
		}
		beta = append(beta, bn)
		for e := range q {
			q[e] = w[e] / bn
		}
	}
	lo, hi = tridiagExtremes(alpha, beta)
	return lo, hi, steps, change
}

func tridiagExtremes(alpha, beta []float64) (float64, float64) {
	n := len(alpha)
	t := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		t.SetSym(i, i, alpha[i])
		if i+1 < n {
			t.SetSym(i, i+1, beta[i])
		}
	}
	var eig mat.EigenSym
	eig.Factorize(t, false)
	ev := eig.Values(nil)
	return ev[0], ev[n-1]
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

func normalise(a []float64) {
	n := math.Sqrt(dot(a, a))
	for i := range a {
		a[i] /= n
	}
}
