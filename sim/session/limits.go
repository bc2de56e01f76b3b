package session

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scheme"
	"gyrebench/sim/step"
)

// Limits of a live run.
const (
	// MaxCourant bounds the Δt a live run may be given: the gravity-wave
	// Courant number it gives on the current state. Past about 3 every
	// explicit integrator offered is unstable (the imaginary-axis limits of
	// step.ImaginaryAxisLimit, at most 2√2 for rk4: Durran 2010, Numerical
	// Methods for Fluid Dynamics, 2nd ed., ch. 2, from memory), so 4 leaves
	// room to watch a blow-up without allowing nonsense.
	MaxCourant = 4.0
	// MaxLiveCells bounds the grid a live run may switch to, well below
	// the engine's own bound, so that it stays interactive.
	MaxLiveCells = 1 << 17
	// DefaultRingSize is the ring's length when Options.RingSize ≤ 0.
	DefaultRingSize = 64
	// MaxRingSize bounds Options.RingSize: each entry holds a whole state.
	MaxRingSize = 1024
	// MaxRingCells bounds one ring: recent states kept × cells of the
	// grid. A state holds a depth per cell and a velocity per edge (at
	// most three edges per cell), 8 bytes each, so the bound is about
	// 256 MiB of saved states. The default ring on the largest live grid
	// fits.
	MaxRingCells = DefaultRingSize * MaxLiveCells
	// noCourantDtMax is DtMax when the state has no gravity-wave Courant
	// number (a state at rest on a flat bottom has one; this is a guard).
	noCourantDtMax = 86400
)

// The sphere in a live run: the icosahedral grid's resolution is its
// refinement level n (10·4ⁿ + 2 cells), from minLevel up; the cubed
// sphere's is the number of cells along a cube edge (6n² cells), from
// minCubedN up. A run stays on the surface it was loaded on, since its
// initial case is written for the plane or for the sphere.
const (
	// minLevel: 162 cells, the coarsest grid on which the published cases
	// are recognisable.
	minLevel = 2
	// minCubedN: 96 cells, about the icosahedral level 2.
	minCubedN = 4
	// minPlaneN is the coarsest planar grid a live run may switch to.
	minPlaneN = 4
)

// GridKinds lists the grid families a live run switches between: the
// planar ones among themselves, the sphere ones among themselves.
func GridKinds() []string {
	out := make([]string, len(mesh.Kinds))
	for i, k := range mesh.Kinds {
		out[i] = string(k)
	}
	return out
}

// Schemes, Integrators and HodgeStars list the engine's choices, for menus.
func Schemes() []string     { return scheme.Names }
func Integrators() []string { return step.Names }
func HodgeStars() []string  { return scheme.HodgeNames }

// Conserves says in one line what scheme name conserves, for menus.
func Conserves(name string) string { return scheme.Conserves(name) }

// HodgeName is scheme.hodge with the default spelled out.
func HodgeName(h string) string {
	if h == "" {
		return scheme.HodgeConsistent
	}
	return h
}

// OptimizeName is grid.optimize for people: "none" when unset.
func OptimizeName(opt string) string {
	if opt == "" {
		return mesh.OptimizeNone
	}
	return opt
}

// GridName writes a grid for labels: "hex n = 64", "icosahedral level 5",
// "cubed n = 48".
func GridName(kind string, n int) string {
	if kind == string(mesh.Icosahedral) {
		return kind + " level " + strconv.Itoa(n)
	}
	return kind + " n = " + strconv.Itoa(n)
}

// IsSphereKind reports whether grid family kind lives on the sphere.
func IsSphereKind(kind string) bool { return mesh.Kind(kind).OnSphere() }

// NMinLive is the smallest resolution of grid family kind a live run may
// switch to.
func NMinLive(kind string) int {
	switch kind {
	case string(mesh.Icosahedral):
		return minLevel
	case string(mesh.Cubed):
		return minCubedN
	}
	return minPlaneN
}

// resolutionWhat says what grid.n is for kind, for messages.
func resolutionWhat(kind string) string {
	switch kind {
	case string(mesh.Icosahedral):
		return "a whole refinement level"
	case string(mesh.Cubed):
		return "a whole number of cells along a cube edge"
	}
	return "a whole number of cells per side"
}

// MaxLiveN is the largest n of grid family kind whose mesh, on the
// domain of a model with config cfg on mesh msh, has at most MaxLiveCells
// cells.
func MaxLiveN(kind string, cfg sim.Config, msh *mesh.Mesh) int {
	ok := func(n int) bool {
		c, err := liveSpec(kind, n, cfg, msh).Cells()
		return err == nil && c <= MaxLiveCells
	}
	lo, hi := minPlaneN, 1<<12 // ok(lo) holds for every planar family
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if ok(mid) || ok(mid+1) { // odd n is invalid for hex and tri
			lo = mid
		} else {
			hi = mid
		}
	}
	if !ok(lo) {
		lo--
	}
	return lo
}

// liveSpec is the mesh a switch to (kind, n) builds: Regrid keeps the
// domain, so the height is the current one.
func liveSpec(kind string, n int, cfg sim.Config, msh *mesh.Mesh) mesh.Spec {
	cfg.Grid.Kind, cfg.Grid.N = kind, n
	if kind != string(mesh.Icosahedral) {
		cfg.Grid.Optimize = "" // the icosahedral grid's alone
	}
	spec := cfg.MeshSpec()
	if !msh.Surface.Sphere {
		spec.Height = msh.Surface.Ly
	}
	return spec
}

// surfaceSwitch refuses a grid switch between the plane and the sphere.
func surfaceSwitch(kind string, cfg sim.Config, msh *mesh.Mesh) *Error {
	if IsSphereKind(kind) == msh.Surface.Sphere {
		return nil
	}
	if msh.Surface.Sphere {
		return refuse("grid.kind", kind, "grid.kind = %q: this run is on the sphere (initial case %q is written for it); "+
			"it can switch between sphere grids only (icosahedral, cubed). To run on the plane, load a planar scenario",
			kind, cfg.Initial.Case)
	}
	return refuse("grid.kind", kind, "grid.kind = %q: this run is on the plane (initial case %q is written for it); "+
		"it can switch between quad, hex and tri grids only. To run on the sphere, load a sphere scenario",
		kind, cfg.Initial.Case)
}

// resolutionRange refuses a resolution outside the live limits of kind.
func resolutionRange(kind string, n, nmax int) *Error {
	nmin := NMinLive(kind)
	if n >= nmin && n <= nmax {
		return nil
	}
	switch kind {
	case string(mesh.Icosahedral):
		return refuse("grid.n", strconv.Itoa(n), "grid.n = %d: allowed icosahedral levels for a live run: %d ≤ n ≤ %d (level n has 10·4ⁿ+2 cells, at most %d in a live run)",
			n, nmin, nmax, MaxLiveCells)
	case string(mesh.Cubed):
		return refuse("grid.n", strconv.Itoa(n), "grid.n = %d: allowed cells along a cube edge for a live run: %d ≤ n ≤ %d (the cubed sphere has 6n² cells, at most %d in a live run)",
			n, nmin, nmax, MaxLiveCells)
	}
	even := ""
	if kind != string(mesh.Quad) {
		even = ", even"
	}
	what := "too large for a live run"
	if n < nmin {
		what = "too small"
	}
	return refuse("grid.n", strconv.Itoa(n), "grid.n = %d: %s; allowed on the %s grid: %d ≤ n ≤ %d%s (at most %d cells)",
		n, what, kind, nmin, nmax, even, MaxLiveCells)
}

// RingFits refuses a grid whose states a ring of ringSize entries could
// not keep within MaxRingCells.
func RingFits(ringSize, cells int) error {
	if cells <= 0 || ringSize <= MaxRingCells/cells {
		return nil
	}
	return fmt.Errorf("ring: %d recent states of a %d-cell grid are %d cell-states, more than a run may keep (%d, about %d MiB); allowed on this grid: a ring of at most %d (serve --ring), or a grid of at most %d cells with this ring",
		ringSize, cells, ringSize*cells, MaxRingCells, MaxRingCells*32>>20, MaxRingCells/cells, MaxRingCells/ringSize)
}

// dtMax is the largest Δt a live run may be given on model m: the one
// that makes the gravity-wave Courant number of the current state
// MaxCourant. The Courant number is linear in Δt, so it scales from the
// engine's value.
func dtMax(m *sim.Model) float64 {
	inv := m.Invariants()
	if !(inv.CourantGravity > 0) || math.IsInf(inv.CourantGravity, 0) {
		return noCourantDtMax
	}
	return m.Config().Time.Dt * MaxCourant / inv.CourantGravity
}

// CheckLiveConfig checks what a live run allows of a config beyond the
// engine: the size of its grid.
func CheckLiveConfig(cfg sim.Config) error {
	cells, err := cfg.MeshSpec().Cells()
	if err != nil {
		return err
	}
	if cells > MaxLiveCells {
		return fmt.Errorf("grid.n = %d gives %d cells, more than a live run allows (%d)", cfg.Grid.N, cells, MaxLiveCells)
	}
	return nil
}

// checkLiveTimeline checks what a live run allows of a timeline beyond
// the engine: the grid sizes and the families it switches between.
func checkLiveTimeline(events []eventGrid, cfg sim.Config) error {
	cells, err := cfg.MeshSpec().Cells()
	if err != nil {
		return err
	}
	if cells > MaxLiveCells {
		return fmt.Errorf("grid: %d cells, more than a live run allows (%d); replay it headless with 'gyrebench run'", cells, MaxLiveCells)
	}
	kinds := GridKinds()
	for _, e := range events {
		if !contains(kinds, e.kind) {
			return fmt.Errorf("event %d of %d: kind = %q: not a grid the workbench can switch to; allowed: %s", e.index, e.total, e.kind, strings.Join(kinds, ", "))
		}
		c := cfg
		c.Grid.Kind, c.Grid.N = e.kind, e.n
		if cells, err := c.MeshSpec().Cells(); err == nil && cells > MaxLiveCells {
			return fmt.Errorf("event %d of %d: grid %s n = %d has %d cells, more than a live run allows (%d)", e.index, e.total, e.kind, e.n, cells, MaxLiveCells)
		}
	}
	return nil
}

// eventGrid is a grid change of a timeline, for checkLiveTimeline.
type eventGrid struct {
	index, total int
	kind         string
	n            int
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// FmtTime writes a simulated time for labels: seconds, hours or days.
func FmtTime(t float64) string {
	switch a := math.Abs(t); {
	case a < 3600:
		return fmt.Sprintf("%.4g s", t)
	case a < 2*86400:
		return fmt.Sprintf("%.4g h", t/3600)
	}
	return fmt.Sprintf("%.4g d", t/86400)
}

// CheckDt refuses the Δt in effect when a live run could not be given it
// (above DtMax): a session built from a form rather than by SetDt.
func (s *Session) CheckDt() error {
	if dt, limit := s.m.Config().Time.Dt, dtMax(s.m); !s.opt.Headless && dt > limit {
		return fmt.Errorf("time.dt = %g s: allowed 0 < Δt ≤ %.4g s on this grid (gravity-wave Courant number up to %g)", dt, limit, MaxCourant)
	}
	return nil
}
