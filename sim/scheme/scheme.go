// Package scheme computes shallow-water tendencies on C-grids.
//
// The prognostic state is one flat vector x = [h | u]: the fluid depth h_i
// on the NumCells cells followed by the normal velocity u_e on the NumEdges
// edges. A Scheme sets dst = dx/dt for the vector-invariant equations
//
//	∂h/∂t = −∇·(h u)
//	∂u/∂t = −q (h u)⊥ − ∇(K + g(h + b))
//
// with q = (ζ + f)/h the potential vorticity. Schemes differ only in how q
// is brought to the edges for the PV flux, which decides what they
// conserve:
//
//   - trisk-energy: TRiSK with q_{ee'} = (q_e + q_{e'})/2, which makes the
//     Coriolis operator antisymmetric and so conserves total energy
//     (Ringler, Thuburn, Klemp & Skamarock 2010, J. Comput. Phys. 229, §4).
//   - trisk-enstrophy: TRiSK with q_{ee'} = q_e, which conserves potential
//     enstrophy but not energy (same paper, §5).
//   - apvm: trisk-energy with the anticipated potential vorticity method,
//     q̂_e = q_e − c Δt (u_e ∂q/∂n + v_e ∂q/∂t), c = 1/2 by default
//     (Sadourny & Basdevant 1985, J. Atmos. Sci. 42; as used by Ringler et
//     al. 2010, §5: from memory). It adds potential-enstrophy
//     dissipation; it does not guarantee dZ/dt ≤ 0, because the
//     energy-conserving PV flux it starts from does not conserve potential
//     enstrophy, and that change has either sign.
//   - al81: Arakawa & Lamb (1981, Mon. Wea. Rev. 109, 18–36), conserving
//     energy and potential enstrophy on the square grid only.
//   - sadourny-energy, sadourny-enstrophy: the two schemes of Sadourny
//     (1975, J. Atmos. Sci. 32, 680–689), square grid only, conserving
//     energy and potential enstrophy respectively.
//
// On grids whose dual is not orthogonal the metric may carry a general
// edge Hodge star H (mesh.Hodge, Metric.Hodge; nil means diag(l_e/d_e)).
// The state keeps u_e along the dual edge, so v_e = d_e u_e is the
// circulation, and every scheme uses H in the Hamiltonian form (Thuburn &
// Cotter 2012, SIAM J. Sci. Comput. 34(3), B203–B225, from memory):
// E = ½ Σ_e h_e v_e (H v)_e + Σ_i A_i g (h_i²/2 + h_i b_i), mass flux
// F = δE/δv = ½[h_e (H v)_e + (H (h v))_e] in the continuity equation and
// the PV flux, and K_i = (1/4A_i) Σ_{e∈i} v_e (H v)_e in the Bernoulli
// function. With H = diag(l/d) these are today's l_e h_e u_e and
// (1/4A_i) Σ l_e d_e u_e², computed by the same single edge pass; a
// general H adds one pass (circulations) and one sparse row per edge.
// Energy is conserved for any symmetric H (TestSemiDiscreteConservation).
//
// A scheme sees topology and metric (ops.Grid), never coordinates.
// Tendency allocates nothing; its loops run on a par.Pool and give
// bit-identical results for any number of workers. The TRiSK schemes also
// have Stage (the step.Stager contract), which finishes a Runge–Kutta
// stage in the tendency's own last passes, so that rk3 stores no tendency
// and makes no separate sweep over the state to apply it.
package scheme

import (
	"fmt"
	"strings"

	"gyrebench/sim/ops"
	"gyrebench/sim/par"
)

// Scheme names.
const (
	TRiSKEnergy       = "trisk-energy"
	TRiSKEnstrophy    = "trisk-enstrophy"
	APVM              = "apvm"
	AL81              = "al81"
	SadournyEnergy    = "sadourny-energy"
	SadournyEnstrophy = "sadourny-enstrophy"
)

// Hodge-star choices (scheme.hodge). On a grid whose dual is orthogonal
// both are the diagonal l_e/d_e; elsewhere "consistent" uses the grid's
// general Hodge star (mesh.ConsistentHodge), exact for uniform flow, and
// "diagonal" keeps l_e/d_e, which still conserves energy but is not
// consistent there.
const (
	HodgeConsistent = "consistent"
	HodgeDiagonal   = "diagonal"
)

// HodgeNames lists the Hodge-star choices, the default first.
var HodgeNames = []string{HodgeConsistent, HodgeDiagonal}

// Names lists every scheme.
var Names = []string{TRiSKEnergy, TRiSKEnstrophy, APVM, AL81, SadournyEnergy, SadournyEnstrophy}

// SquareOnly reports whether the named scheme is written for the square
// grid only.
func SquareOnly(name string) bool {
	return name == AL81 || name == SadournyEnergy || name == SadournyEnstrophy
}

// Conserves says which integrals the named scheme conserves exactly in
// semi-discrete form, as TestSemiDiscreteConservation checks, and where
// it runs; "" for an unknown name.
func Conserves(name string) string {
	switch name {
	case TRiSKEnergy:
		return "conserves mass and energy"
	case TRiSKEnstrophy:
		return "conserves mass and potential enstrophy"
	case APVM:
		return "conserves mass and energy; adds potential-enstrophy dissipation"
	case AL81:
		return "conserves mass, energy and potential enstrophy; quad grid only"
	case SadournyEnergy:
		return "conserves mass and energy; quad grid only"
	case SadournyEnstrophy:
		return "conserves mass and potential enstrophy; quad grid only"
	}
	return ""
}

// Physics holds the fields a tendency needs besides the state.
type Physics struct {
	G       float64   // gravity, m s⁻²
	FVertex []float64 // Coriolis parameter at vertices, s⁻¹
	Bottom  []float64 // bottom height at cells, m; nil means flat
}

// Options tunes a scheme.
type Options struct {
	// APVMFactor is c in q̂ = q − c Δt u·∇q; 0 means the default 1/2.
	APVMFactor float64
}

// Scheme computes the tendency of a state.
type Scheme interface {
	// Name returns the scheme's name, one of Names.
	Name() string
	// Tendency sets dst = dx/dt for x = [h | u]. dst and x must not alias.
	Tendency(dst, x []float64)
	// SetDt tells the scheme the time step, for schemes that anticipate.
	SetDt(dt float64)
}

// Available returns the schemes that can run on the grid.
func Available(g ops.Grid) []string {
	if isSquare(g) {
		return Names
	}
	return Anywhere()
}

// Anywhere returns the schemes that run on every grid.
func Anywhere() []string {
	var out []string
	for _, n := range Names {
		if !SquareOnly(n) {
			out = append(out, n)
		}
	}
	return out
}

// isSquare reports whether every cell has four edges and every vertex four
// edges: the topology the Arakawa–Lamb stencil is written for.
func isSquare(g ops.Grid) bool {
	for i := 0; i < g.NumCells; i++ {
		if g.CellEdgeStart[i+1]-g.CellEdgeStart[i] != 4 {
			return false
		}
	}
	for v := 0; v < g.NumVertices; v++ {
		if g.VertexEdgeStart[v+1]-g.VertexEdgeStart[v] != 4 {
			return false
		}
	}
	return true
}

// New builds the named scheme on the grid.
func New(name string, g ops.Grid, phys Physics, pool *par.Pool, opt Options) (Scheme, error) {
	if len(phys.FVertex) != g.NumVertices {
		return nil, fmt.Errorf("scheme: %d Coriolis values for %d vertices", len(phys.FVertex), g.NumVertices)
	}
	if phys.Bottom != nil && len(phys.Bottom) != g.NumCells {
		return nil, fmt.Errorf("scheme: %d bottom heights for %d cells", len(phys.Bottom), g.NumCells)
	}
	if opt.APVMFactor < 0 {
		return nil, fmt.Errorf("scheme.apvm_factor = %g: must be ≥ 0", opt.APVMFactor)
	}
	if opt.APVMFactor == 0 {
		opt.APVMFactor = 0.5
	}
	switch name {
	case TRiSKEnergy, TRiSKEnstrophy, APVM:
		return newTRiSK(name, g, phys, pool, opt), nil
	case AL81, SadournyEnergy, SadournyEnstrophy:
		if !isSquare(g) {
			return nil, fmt.Errorf("scheme.name = %q needs the quad grid; available on this grid: %s", name, strings.Join(Available(g), ", "))
		}
		return newSquare(name, g, phys, pool), nil
	}
	return nil, fmt.Errorf("scheme.name = %q: unknown; allowed: %s", name, strings.Join(Names, ", "))
}
