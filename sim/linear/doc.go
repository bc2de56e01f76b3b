// Package linear computes the normal modes of the shallow-water schemes
// linearised about a state of rest, and from them the dispersion of
// inertia–gravity waves, the spurious modes of a grid, and the largest
// stable time step of each integrator.
//
// # The operator
//
// The state of rest x₀ = [H | 0] (depth H on every cell, no motion, flat
// bottom, the run's Coriolis parameter: f₀ + β(y − Ly/2) on the plane,
// 2Ω sin(latitude) on the sphere) is steady for every scheme. Operator
// obtains J = ∂F/∂x at x₀ from the very tendency F the nonlinear run uses
// (scheme.New(...).Tendency), one column per unknown, so no stencil is
// written twice. The differences are exact, not approximate: along a
// depth direction F is linear (with u = 0 every term but −g∇h vanishes);
// along a velocity direction F is a polynomial in the step s, of degree 2
// (fluxes and q = (ζ + f)/h are linear in u, their products and the
// kinetic energy quadratic) or 3 for apvm (q̂ carries u·∇q), so the central
// difference [F(x₀ + s e) − F(x₀ − s e)]/2s is exact up to rounding, with
// one Richardson step for apvm. TestAssembledMatchesHandDerived checks the
// result against J written out by hand from the mesh arrays, to 10⁻¹⁵ of
// each block's scale.
//
// # Energy scaling and the eigen-solvers
//
// The energy of a small perturbation is ½ Σ w_k x'_k² with w = g A_i on
// cells and H l_e d_e on edges (Operator.EnergyWeights). In the scaled
// coordinates of S = diag(√w), B = S J S⁻¹ is antisymmetric exactly when
// the linearised scheme conserves that energy, which the energy-conserving
// schemes do (Ringler et al. 2010, J. Comput. Phys. 229, 3065–3090): then
// every eigenvalue is ±iω with ω real, and a real algorithm for
// antisymmetric matrices computes them and their vectors (skewEigen:
// Hessenberg reduction, which is tridiagonal for antisymmetric input; the
// tridiagonal's eigenproblem is a bidiagonal SVD of half the size). The
// measured defect max|B + Bᵀ|/max|B| decides (SkewTol); otherwise the
// general real eigen-solver is used (gonum mat.Eigen). The growth rate of
// a mode is the real part of its eigenvalue; on the antisymmetric route it
// is the Rayleigh quotient of the assembled, unsymmetrised B, which is the
// first-order real part for a normal matrix.
//
// Dense analysis handles up to MaxDenseUnknowns. For larger grids, and for
// StableDt, the extreme frequency comes from the Lanczos process for
// antisymmetric matrices, matrix-free (Operator.Apply), O(n) memory:
// extreme Ritz values converge first and from inside (Arnoldi when B is
// not antisymmetric).
//
// # Classification
//
// Each eigenvalue is a row of the result, with a class:
//
//   - geostrophic: zero frequency, |ω| ≤ ZeroTol·max|ω| (and not
//     growing). On the plane with uniform f these are exactly the steady
//     geostrophic modes.
//   - rossby: where f varies (β-plane, sphere), the slowest non-zero modes
//     up to one balanced mode per vertex, the balanced branch's degrees of
//     freedom (the stream function lives on vertices).
//   - inertia_gravity: the rest.
//   - spurious: modes of the branch that the grid's degrees of freedom add
//     to the continuum's two velocity components per mass point
//     (Staniforth & Thuburn 2012, Q. J. R. Meteorol. Soc. 138, 1–26, from
//     memory). Where vertices outnumber cells (hex: N_v = 2N_c; the
//     icosahedral grid, N_v = 2N_c − 4) the extra branch is balanced
//     (Thuburn 2008, J. Comput. Phys. 227, 3715–3730, finds spurious Rossby
//     modes on the hexagonal C-grid, stationary on the f-plane; from
//     memory): a balanced mode is spurious when more than half of its
//     vorticity (area-weighted) lies outside the range of the scheme's
//     cell-to-vertex kite averaging, that is, averages to zero over every
//     cell. Where cells outnumber vertices (tri: N_c = 2N_v) the extra
//     branch is of inertia–gravity type (the triangular C-grid's
//     checkerboard branch; Danilov 2010, Ocean Dynamics 60, and
//     Gassmann 2011, J. Comput. Phys. 230, from memory): the
//     score is the part of the depth that the averaging to vertices does
//     not see. On a lattice plane with uniform f each wavevector carries
//     four inertia–gravity modes, two of each branch, and the two with the
//     larger score are spurious: near the edge of the Brillouin zone a
//     physical wave is itself sign-alternating and the scores of the two
//     branches meet at ½, so a fixed threshold would split them by chance
//     there. Elsewhere the threshold SpuriousScore applies.
//
// Degenerate eigenspaces (equal frequencies, abundant on symmetric grids)
// are rotated before scoring: to Bloch modes by the lattice translations,
// which commute with J on a uniform-f plane, and to the extremal
// directions of the score (rotateZero, rotatePairs). Mode.Score carries the
// score; CSV output does not.
//
// # Counts (plane, uniform f ≠ 0)
//
// The steady modes satisfy D u = 0 and g G h = f C u (D divergence, G
// gradient, C the TRiSK Coriolis operator). On the doubly periodic plane
// N_c − N_e + N_v = 0. Divergence-free u are the curls of a vertex stream
// function (N_v − 1 independent) plus two uniform (harmonic) flows. The
// TRiSK weights are built so that f C maps the curl of ψ to a gradient and
// each ψ is balanced by an h (Thuburn, Ringler, Skamarock & Klemp 2009,
// J. Comput. Phys. 228, 8321–8335: stationary geostrophic modes on the
// f-plane, from memory; the count below is checked numerically), while
// f C applied to a uniform flow is uniform and no gradient.
// With the uniform h (u = 0), the zero-frequency count is
//
//	N_geo = N_v   (N_v + 2 with f = 0, when the uniform flows are steady).
//
// Quad: N_v = N_c, so N_c geostrophic and 2N_c inertia–gravity modes, one
// and two per wavevector. Hex: N_v = 2N_c, of which N_c are smooth (one
// per wavevector) and N_c spurious, except that for n divisible by 3 the
// corners K, K' of the Brillouin zone are on the lattice, where every cell
// field averages to zero on the vertices, and two smooth modes count as
// spurious. Tri: N_geo = N_v, and 4N_v inertia–gravity modes, 2N_v
// physical and 2N_v spurious. Result.Expected holds these numbers and the
// tests compare the classification with them.
//
// # Theory
//
// For planar grids each row carries the dominant wavevector (largest
// power among the discrete Fourier modes of the periodic domain, per
// sublattice), the continuous relation ω² = f² + gH(k² + l²) and, on the
// quad grid, the C-grid relation QuadCGrid, which the computed spectrum
// matches to round-off on the f-plane (derived in its comment; Arakawa &
// Lamb 1977 from memory). On the β-plane they are evaluated with f₀, and
// rossby rows carry the continuous Rossby relation.
//
// # Time steps
//
// An integrator with stability interval |ωΔt| ≤ b on the imaginary axis
// (step.ImaginaryAxisLimit: rk3 √3, rk4 2√2, leapfrog just below 1 with
// the Robert–Asselin filter, euler none; Durran 2010, Numerical Methods for Fluid Dynamics, 2nd ed., ch. 2, from memory) is stable for
// Δt ≤ b / max|λ|. With explicit dissipation (scheme.viscosity,
// hyperviscosity, divergence_damping: package dissip) the operator
// includes D(u), the spectrum moves into the left half-plane and its
// real part can bind on its own: each eigenvalue λ bounds Δt where its
// ray λΔt leaves the integrator's stability region (step.RayLimit,
// |R(z)| ≤ 1 on the complex plane), the smallest bound holds, and
// Limit.Binding names the part of the spectrum that sets it (imaginary
// axis, negative real axis, damped waves). The damping rates are the
// growth_rate column of modes.csv; modes damped without a frequency
// (balanced modes, and gravity waves when overdamped) count as
// geostrophic. The extreme analysis bounds the spectrum by the box of
// iω_max and the grid-scale damping rate (Operator.DampingBound) and
// checks its corners. VerifyDt checks a prediction with the nonlinear scheme:
// VerifySteps steps from rest plus a random perturbation of relative size
// VerifyAmplitude; it "blew up" when the perturbation's energy norm grows
// by more than BlowUpFactor, a value becomes non-finite or a depth
// non-positive.
//
// # Cost
//
// The dense analysis is O(n³) time and O(n²) memory in the number of
// unknowns n = N_c + N_e: hex n = 16 (1024 unknowns) takes about 2–3 s and
// 50 MB on one core (BenchmarkAnalyseHex16). StableDt on hex n = 64 (16 384
// unknowns) takes about a second.
package linear
