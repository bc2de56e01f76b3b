package linear

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"time"

	"gonum.org/v1/gonum/mat"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/step"
)

// Class is the kind of a normal mode (see the package documentation for
// the rule).
type Class string

// Mode classes.
const (
	InertiaGravity Class = "inertia_gravity"
	Geostrophic    Class = "geostrophic"
	Rossby         Class = "rossby"
	Spurious       Class = "spurious"
)

// Tolerances and limits.
const (
	// ZeroTol: a mode with |ω| ≤ ZeroTol·max|ω| has zero frequency. The
	// eigen-solvers resolve frequencies to about 10⁻¹³ of the largest.
	ZeroTol = 1e-9
	// GrowthTol: a mode grows when its growth rate exceeds
	// GrowthTol·max|ω|.
	GrowthTol = 1e-9
	// SkewTol: B = S J S⁻¹ counts as antisymmetric when
	// max|B + Bᵀ| ≤ SkewTol·max|B|; the assembly is exact to ~10⁻¹⁵.
	SkewTol = 1e-10
	// SpuriousScore: a mode whose score (the fraction of its field that
	// the grid's averaging cannot see) exceeds this is spurious.
	SpuriousScore = 0.5
	// MaxDenseUnknowns bounds the full (dense) analysis: about 40 s and
	// 0.4 GB at the limit, O(n³) and O(n²).
	MaxDenseUnknowns = 3072
	// denseValuesMax: below this size MaxFrequency uses exact dense
	// eigenvalues rather than Lanczos.
	denseValuesMax = 400
	// clusterTol: eigenvalues within clusterTol·max|ω| form one degenerate
	// eigenspace for the spurious-mode scoring; the solvers separate
	// distinct eigenvalues far better than this.
	clusterTol = 1e-11
	// lanczosMaxIter bounds the extreme-frequency iteration.
	lanczosMaxIter = 400
)

// Options tunes Analyse.
type Options struct {
	// ExtremeOnly computes only the largest |frequency| (Lanczos,
	// matrix-free, any size) and the Δt limits; Result.Modes then holds
	// the two extreme eigenvalues, without class or wavevector.
	ExtremeOnly bool
}

// Mode is one eigenvalue λ = GrowthRate + i·Frequency of the linearised
// operator; the perturbation evolves as e^{λt}, and with its dominant
// wavevector k it is ∝ e^{i(k·x + ωt)}. Fields that do not apply are NaN
// (JSON null).
type Mode struct {
	GrowthRate float64 // s⁻¹
	Frequency  float64 // angular frequency, rad s⁻¹
	Class      Class
	// Kx, Ky: dominant wavevector, rad m⁻¹ (planar grids).
	Kx, Ky float64
	// OmegaContinuous: continuous relation at (Kx, Ky), signed like
	// Frequency (ContinuousIG; ContinuousRossby for rossby; 0 for
	// geostrophic).
	OmegaContinuous float64
	// OmegaDiscrete: the quad C-grid relation QuadCGrid (quad grid only).
	OmegaDiscrete float64
	// Score: the fraction of the mode's vorticity (grids with more
	// vertices than cells) or depth (more cells than vertices) that the
	// grid's cell–vertex averaging does not see; 0 where not computed.
	Score float64
}

// Limit is the largest stable Δt of one integrator.
type Limit struct {
	Integrator string  `json:"integrator"`
	AxisBound  float64 `json:"imaginary_axis_bound"` // max |ωΔt| (step.ImaginaryAxisLimit)
	MaxDt      float64 `json:"max_stable_dt_s"`      // 0: no Δt is stable
	// AxisDt is the limit of the imaginary axis alone, AxisBound/max|ω|;
	// it equals MaxDt when the spectrum has no material real part.
	AxisDt float64 `json:"imaginary_axis_dt_s"`
	// Binding says which part of the spectrum sets MaxDt: "imaginary axis"
	// (undamped waves), "negative real axis" (pure damping, the
	// dissipation of balanced modes) or "damped waves" (complex
	// eigenvalues with a material real part); "" when none is stable.
	Binding string `json:"binding,omitempty"`
	// Eigenvalue is the binding eigenvalue λ (s⁻¹) as [Re, Im].
	Eigenvalue [2]float64 `json:"binding_eigenvalue_per_s"`
	Note       string     `json:"note,omitempty"`
}

// Counts are the numbers of modes (eigenvalues) per class.
type Counts struct {
	InertiaGravity int `json:"inertia_gravity"`
	Geostrophic    int `json:"geostrophic"`
	Rossby         int `json:"rossby"`
	Spurious       int `json:"spurious"`
}

func (c *Counts) add(cl Class, k int) {
	switch cl {
	case InertiaGravity:
		c.InertiaGravity += k
	case Geostrophic:
		c.Geostrophic += k
	case Rossby:
		c.Rossby += k
	case Spurious:
		c.Spurious += k
	}
}

// Result is a linear analysis of one configuration.
type Result struct {
	Grid                   string
	N                      int
	Scheme                 string
	Cells, Edges, Vertices int
	Unknowns               int
	F0, Beta, G, Depth     float64
	Sphere                 bool
	Method                 string  // dense-skew, dense-general, lanczos, arnoldi, dense-values
	SkewAdjoint            bool    // B = S J S⁻¹ antisymmetric: the scheme conserves the linear energy
	SkewDefect             float64 // max|B + Bᵀ| / max|B| (dense) or the probe's ratio (extreme only)
	Modes                  []Mode  // one per eigenvalue; the two extreme ones with Options.ExtremeOnly
	Counts                 Counts
	Expected               *Counts // derived counts (plane with uniform f), else nil
	MaxFrequency           float64 // max |Im λ|, rad s⁻¹
	SpectralRadius         float64 // max |λ|, which sets the Δt limits
	Growing                int     // modes with growth rate > GrowthTolerance
	MaxGrowthRate          float64
	ZeroTolerance          float64 // s⁻¹, absolute
	GrowthTolerance        float64 // s⁻¹, absolute
	Iterations             int     // Lanczos or Arnoldi steps (extreme only)
	Limits                 []Limit
	WallSeconds            float64
	Rule                   string // the classification rule, in words
}

// TooLargeError reports a grid too large for the dense analysis.
type TooLargeError struct {
	Kind     string
	N        int
	Unknowns int
}

func (e *TooLargeError) Error() string {
	return fmt.Sprintf("grid.n = %d: the %s grid has %d unknowns (cells + edges); the full spectrum is computed densely for at most %d",
		e.N, e.Kind, e.Unknowns, MaxDenseUnknowns)
}

// Analyse computes the normal modes of the linearised operator of cfg (or,
// with opt.ExtremeOnly, only the extreme frequency) and the per-integrator
// Δt limits. The initial condition of cfg plays no part.
func Analyse(ctx context.Context, cfg sim.Config, opt Options) (*Result, error) {
	t0 := time.Now()
	op, err := NewOperator(cfg)
	if err != nil {
		return nil, err
	}
	defer op.Close()
	m := op.Mesh
	res := &Result{
		Grid: string(m.Kind), N: m.N, Scheme: cfg.Scheme.Name,
		Cells: m.NumCells, Edges: m.NumEdges, Vertices: m.NumVertices, Unknowns: op.Len(),
		F0: cfg.Physics.F0, Beta: cfg.Physics.Beta, G: cfg.Physics.G, Depth: cfg.Physics.Depth,
		Sphere: m.Surface.Sphere,
	}
	if opt.ExtremeOnly {
		if err := res.extreme(ctx, op); err != nil {
			return nil, err
		}
	} else {
		if op.Len() > MaxDenseUnknowns {
			return nil, &TooLargeError{Kind: string(m.Kind), N: m.N, Unknowns: op.Len()}
		}
		if err := res.full(ctx, op, cfg); err != nil {
			return nil, err
		}
	}
	cands := res.candidates(op)
	res.Limits = limits(cands, res.MaxFrequency, res.SpectralRadius, res.Growing, cfg.Time.Asselin)
	res.WallSeconds = time.Since(t0).Seconds()
	return res, nil
}

// candidates returns the eigenvalues that can bind the Δt limits, one of
// each conjugate pair: every computed one that is not growing (dense), or
// for the extreme analysis the corners of the box that holds the
// spectrum, iω_max, −r and −r + iω_max, with r the dissipation's largest
// grid-scale damping rate (Operator.DampingBound). nil when the spectrum
// has no material real part, so that the limits are those of the
// imaginary axis exactly.
func (res *Result) candidates(op *Operator) []complex128 {
	tol := GrowthTol * max(res.MaxFrequency, res.SpectralRadius)
	if res.Method == "dense-skew" || res.Method == "dense-general" {
		damped := false
		var out []complex128
		for _, m := range res.Modes {
			if m.Frequency < 0 || m.GrowthRate > res.GrowthTolerance {
				continue
			}
			// Round-off real or imaginary parts (a steady mode's 1e-18) are
			// snapped to zero: a positive one would otherwise leave the
			// stability region of rk3 at once.
			re, im := m.GrowthRate, m.Frequency
			if math.Abs(re) <= tol {
				re = 0
			}
			if math.Abs(im) <= tol {
				im = 0
			}
			if re == 0 && im == 0 {
				continue
			}
			damped = damped || re < 0
			out = append(out, complex(re, im))
		}
		if !damped {
			return nil
		}
		return out
	}
	r := op.DampingBound()
	if r == 0 {
		return nil
	}
	w := res.MaxFrequency
	res.SpectralRadius = math.Hypot(r, w)
	return []complex128{complex(0, w), complex(-r, 0), complex(-r, w)}
}

// limits returns the largest stable Δt of each integrator. Without a
// material real part in the spectrum (cands nil) it is bound / max|λ|,
// with the imaginary-axis bounds of step.ImaginaryAxisLimit (rk3 √3, rk4
// 2√2, filtered leapfrog just below 1, euler none; Durran 2010, Numerical Methods for Fluid Dynamics, 2nd ed., ch. 2, from memory).
// Otherwise each candidate eigenvalue λ bounds Δt where its ray λΔt leaves
// the integrator's stability region in the complex plane
// (step.RayLimit), and the smallest bound holds: with explicit
// dissipation a damping rate r alone limits rk3 to Δt ≤ 2.51/r, rk4 to
// 2.79/r and filtered leapfrog to 2ν/((1 + ν) r), whatever the waves.
func limits(cands []complex128, omegaMax, radius float64, growing int, asselin float64) []Limit {
	var out []Limit
	opt := step.Options{Asselin: asselin}
	for _, name := range step.Names {
		b := step.ImaginaryAxisLimit(name, opt)
		l := Limit{Integrator: name, AxisBound: b}
		if b > 0 && omegaMax > 0 {
			l.AxisDt = b / omegaMax
		}
		switch {
		case b == 0:
			l.Note = "unstable for any Δt: forward Euler amplifies every oscillation by √(1 + ω²Δt²) per step"
		case cands != nil:
			l.MaxDt = math.Inf(1)
			for _, lam := range cands {
				if dt := step.RayLimit(name, opt, lam); dt < l.MaxDt {
					l.MaxDt, l.Eigenvalue = dt, [2]float64{real(lam), imag(lam)}
				}
			}
			if math.IsInf(l.MaxDt, 1) {
				l.MaxDt = 0
			}
			re, im := l.Eigenvalue[0], l.Eigenvalue[1]
			switch a := math.Hypot(re, im); {
			case math.Abs(re) <= 1e-9*a:
				l.Binding = "imaginary axis"
			case math.Abs(im) <= 1e-9*a:
				l.Binding = "negative real axis"
			default:
				l.Binding = "damped waves"
			}
		case radius > 0:
			l.MaxDt = b / radius
			l.Binding, l.Eigenvalue = "imaginary axis", [2]float64{0, radius}
		}
		if growing > 0 && b > 0 {
			l.Note = "the operator has growing modes: they grow for any Δt; the limit bounds the rest"
		}
		out = append(out, l)
	}
	return out
}

// extreme fills the extreme frequency only.
func (res *Result) extreme(ctx context.Context, op *Operator) error {
	rng := rand.New(rand.NewPCG(0x6779, 0x7265))
	skew, defect := op.probeSkew(rng)
	res.SkewAdjoint, res.SkewDefect = skew, defect
	var err error
	switch {
	case op.Len() <= denseValuesMax && skew:
		b := op.Scaled(op.Assemble()).Dense()
		res.MaxFrequency = skewValues(b, op.Len())[0]
		res.Method = "dense-values"
	case skew:
		res.MaxFrequency, res.Iterations, err = op.lanczosMax(ctx, rng, lanczosMaxIter)
		res.Method = "lanczos"
	default:
		res.Iterations = min(150, op.Len())
		res.MaxFrequency, err = op.arnoldiMax(ctx, rng, res.Iterations)
		res.Method = "arnoldi"
	}
	res.SpectralRadius = res.MaxFrequency
	// The two extreme eigenvalues ±i·max|ω|, unclassified.
	nan := math.NaN()
	for _, s := range []float64{1, -1} {
		res.Modes = append(res.Modes, Mode{Frequency: s * res.MaxFrequency, Kx: nan, Ky: nan, OmegaContinuous: nan, OmegaDiscrete: nan})
	}
	return err
}

// mode is a computed eigenvector: a pair λ, λ̄ with Im λ > 0 and
// eigenvector a + ib for λ, or a real eigenvalue with b == nil.
type mode struct {
	lam   complex128
	a, b  []float64
	class Class
	score float64
	kx    float64
	ky    float64
}

func (md *mode) count() int {
	if md.b != nil {
		return 2
	}
	return 1
}

func (res *Result) full(ctx context.Context, op *Operator, cfg sim.Config) error {
	n := op.Len()
	bs := op.Scaled(op.Assemble())
	dense := bs.Dense()
	big, asym := 0.0, 0.0
	for r := 0; r < n; r++ {
		for c := 0; c < n; c++ {
			big = max(big, math.Abs(dense[r*n+c]))
			asym = max(asym, math.Abs(dense[r*n+c]+dense[c*n+r]))
		}
	}
	res.SkewDefect = asym / big
	res.SkewAdjoint = res.SkewDefect <= SkewTol
	if err := ctx.Err(); err != nil {
		return err
	}

	var zero, other []*mode
	var omegaMax float64
	if res.SkewAdjoint {
		res.Method = "dense-skew"
		sp, err := skewEigen(dense, n, ZeroTol)
		if err != nil {
			return err
		}
		bx := make([]float64, n)
		rayleigh := func(v []float64) float64 { bs.MulVec(bx, v); return dot(v, bx) }
		for j, s := range sp.Sigma {
			a, b := mat.Col(nil, j, sp.A), mat.Col(nil, j, sp.B)
			// First-order perturbation theory: for a normal matrix, the real
			// part of the eigenvalue moved by the symmetric defect E is
			// w*Ew/w*w to first order.
			g := 0.5 * (rayleigh(a) + rayleigh(b))
			other = append(other, &mode{lam: complex(g, s), a: a, b: b})
			omegaMax = max(omegaMax, s)
		}
		if sp.Kernel != nil {
			_, k0 := sp.Kernel.Dims()
			for j := 0; j < k0; j++ {
				v := mat.Col(nil, j, sp.Kernel)
				zero = append(zero, &mode{lam: complex(rayleigh(v), 0), a: v})
			}
		}
	} else {
		res.Method = "dense-general"
		gs, err := generalEigen(dense, n)
		if err != nil {
			return err
		}
		for j, l := range gs.Pairs {
			omegaMax = max(omegaMax, imag(l))
			other = append(other, &mode{lam: l, a: mat.Col(nil, j, gs.A), b: mat.Col(nil, j, gs.B)})
		}
		for j, l := range gs.Real {
			other = append(other, &mode{lam: complex(l, 0), a: mat.Col(nil, j, gs.RealV)})
		}
		tol := ZeroTol * omegaMax
		keep := other[:0]
		for _, md := range other {
			// Explicit dissipation damps the steady modes without giving
			// them a frequency: zero frequency, not zero λ, makes them
			// geostrophic then.
			steady := cmplxAbs(md.lam) <= tol
			if op.dis != nil {
				steady = math.Abs(imag(md.lam)) <= tol && real(md.lam) <= tol
			}
			if steady {
				if md.b != nil {
					zero = append(zero, &mode{lam: complex(real(md.lam), 0), a: md.a}, &mode{lam: complex(real(md.lam), 0), a: md.b})
				} else {
					zero = append(zero, md)
				}
				continue
			}
			keep = append(keep, md)
		}
		other = keep
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	res.MaxFrequency = omegaMax
	res.ZeroTolerance = ZeroTol * omegaMax
	res.GrowthTolerance = GrowthTol * omegaMax
	for _, md := range append(append([]*mode(nil), zero...), other...) {
		res.SpectralRadius = max(res.SpectralRadius, cmplxAbs(md.lam))
		if g := real(md.lam); g > res.GrowthTolerance {
			res.Growing += md.count()
		}
		res.MaxGrowthRate = max(res.MaxGrowthRate, real(md.lam))
	}

	fr, err := newFourier(op.Mesh)
	if err != nil {
		return err
	}
	if err := res.classify(op, fr, zero, other); err != nil {
		return err
	}
	res.tabulate(op, fr, cfg, zero, other)
	return nil
}

func cmplxAbs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// classify applies the rule of the package documentation.
func (res *Result) classify(op *Operator, fr *fourier, zero, other []*mode) error {
	m := op.Mesh
	fmin, fmax := math.Inf(1), math.Inf(-1)
	for _, f := range op.fv {
		fmin, fmax = min(fmin, f), max(fmax, f)
	}
	fVaries := fmax > fmin
	for _, md := range zero {
		md.class = Geostrophic
	}
	// The balanced branch has one mode per vertex (the stream function's
	// degrees of freedom); where f varies its non-zero members are the
	// slowest modes.
	sort.SliceStable(other, func(i, j int) bool { return cmplxAbs(other[i].lam) < cmplxAbs(other[j].lam) })
	left := 0
	if fVaries {
		left = m.NumVertices - len(zero)
	}
	for _, md := range other {
		if left > 0 {
			md.class = Rossby
			left -= md.count()
			continue
		}
		md.class = InertiaGravity
	}
	res.Rule = "geostrophic: |ω| ≤ the zero tolerance; rossby (where f varies): the slowest non-zero modes, up to one balanced mode per vertex; inertia_gravity: the rest; " +
		"spurious, where vertices outnumber cells: balanced modes whose vorticity lies mostly (score > 0.5) outside the range of the cell-to-vertex averaging; " +
		"where cells outnumber vertices: inertia-gravity modes whose depth lies in the null space of that averaging, the half with the larger score at each wavevector (plane, uniform f) or score > 0.5 (elsewhere)"

	switch {
	case m.NumVertices > m.NumCells:
		pr, err := newRangeProj(m, true)
		if err != nil {
			return err
		}
		if len(zero) > 0 {
			if err := rotateZero(op, pr, zero); err != nil {
				return err
			}
		}
		res.scoreBranch(op, pr, other, Rossby)
		for _, md := range append(append([]*mode(nil), zero...), other...) {
			if (md.class == Geostrophic || md.class == Rossby) && md.score > SpuriousScore {
				md.class = Spurious
			}
		}
	case m.NumCells > m.NumVertices:
		pr, err := newRangeProj(m, false)
		if err != nil {
			return err
		}
		if fr != nil && !fVaries {
			tr, err := newTranslations(m, fr)
			if err != nil {
				return err
			}
			res.rankByWavevector(op, pr, fr, tr, other)
			break
		}
		res.scoreBranch(op, pr, other, InertiaGravity)
		for _, md := range other {
			if md.class == InertiaGravity && md.score > SpuriousScore {
				md.class = Spurious
			}
		}
	}
	for _, md := range zero {
		res.Counts.add(md.class, 1)
	}
	for _, md := range other {
		res.Counts.add(md.class, md.count())
	}
	if !fVaries && !m.Surface.Sphere {
		res.Expected = expectedCounts(m, op.Len(), fmax == 0)
	}
	return nil
}

// scoreBranch scores the modes of one class, rotating each cluster of
// equal eigenvalues to its extremal directions first (rotatePairs).
func (res *Result) scoreBranch(op *Operator, pr *rangeProj, other []*mode, cl Class) {
	var sel []*mode
	for _, md := range other {
		if md.class != cl {
			continue
		}
		if md.b == nil {
			md.score = pr.score(op, md)
			continue
		}
		sel = append(sel, md)
	}
	sort.SliceStable(sel, func(i, j int) bool { return cmplxAbs(sel[i].lam) < cmplxAbs(sel[j].lam) })
	for _, c := range clusters(sel, clusterTol*res.MaxFrequency) {
		rotatePairs(op, pr, c)
	}
}

// expectedCounts derives the class counts on a doubly periodic plane with
// uniform f (package documentation, "Counts").
func expectedCounts(m *mesh.Mesh, n int, noRotation bool) *Counts {
	c := &Counts{Geostrophic: m.NumVertices}
	if noRotation {
		c.Geostrophic += 2
	}
	switch {
	case m.NumVertices > m.NumCells:
		c.Spurious = m.NumVertices - m.NumCells
		if m.Kind == mesh.Hex && m.N%3 == 0 && regularCells(m) {
			// The corners K, K' of the Brillouin zone lie on the lattice of
			// wavevectors when 3 | n. There the three cells around a vertex
			// carry the phases 1, e^{2πi/3}, e^{4πi/3}, so every cell field
			// averages to zero on the vertices of a regular hexagonal grid:
			// both balanced modes at K and at K' have all their vorticity
			// outside the range of the averaging, and two of the N_c smooth
			// ones become spurious.
			c.Spurious += 2
		}
		c.Geostrophic -= c.Spurious
	case m.NumCells > m.NumVertices:
		c.Spurious = 2 * (m.NumCells - m.NumVertices)
	}
	c.InertiaGravity = n - c.Geostrophic - c.Spurious
	return c
}

// regularCells reports whether every cell's kites are equal (regular
// polygons).
func regularCells(m *mesh.Mesh) bool {
	for i := 0; i < m.NumCells; i++ {
		lo, hi := m.EdgesOfCell(i)
		for k := lo; k < hi; k++ {
			if math.Abs(m.CellKiteArea[k]-m.CellKiteArea[lo]) > 1e-9*m.CellKiteArea[lo] {
				return false
			}
		}
	}
	return true
}

// tabulate fills Modes: wavevectors, theory, one row per eigenvalue.
func (res *Result) tabulate(op *Operator, fr *fourier, cfg sim.Config, zero, other []*mode) {
	var fs fscratch
	p := cfg.Physics
	nan := math.NaN()
	row := func(md *mode, sign float64) Mode {
		out := Mode{GrowthRate: real(md.lam), Frequency: sign * imag(md.lam), Class: md.class,
			Kx: nan, Ky: nan, OmegaContinuous: nan, OmegaDiscrete: nan, Score: md.score}
		if fr == nil {
			return out
		}
		out.Kx, out.Ky = sign*md.kx, sign*md.ky
		sg := 1.0
		if out.Frequency < 0 {
			sg = -1
		}
		switch md.class {
		case Geostrophic:
			out.OmegaContinuous = 0
			if op.Mesh.Kind == mesh.Quad {
				out.OmegaDiscrete = 0
			}
		case InertiaGravity:
			out.OmegaContinuous = sg * ContinuousIG(p.F0, p.G, p.Depth, out.Kx, out.Ky)
			if op.Mesh.Kind == mesh.Quad {
				out.OmegaDiscrete = sg * QuadCGrid(p.F0, p.G, p.Depth, fr.dx, fr.dy, out.Kx, out.Ky)
			}
		case Rossby:
			out.OmegaContinuous = ContinuousRossby(p.F0, p.Beta, p.G, p.Depth, out.Kx, out.Ky)
		}
		return out
	}
	for _, md := range zero {
		if fr != nil {
			md.kx, md.ky = fr.dominant(md.a, nil, &fs)
		}
		res.Modes = append(res.Modes, row(md, 1))
	}
	for _, md := range other {
		if fr != nil {
			md.kx, md.ky = fr.dominant(md.a, md.b, &fs)
		}
		res.Modes = append(res.Modes, row(md, 1))
		if md.b != nil {
			res.Modes = append(res.Modes, row(md, -1))
		}
	}
}
