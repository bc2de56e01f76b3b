package server

import (
	"strconv"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
)

// The sphere in a live run. The icosahedral grid's resolution is its
// refinement level n (10·4ⁿ + 2 cells); the workbench offers levels from
// minLevel up to the largest within MaxLiveCells. The cubed sphere's
// resolution is the number of cells along a cube edge (6n² cells), from
// minCubedN up. A run switches between the two families and their
// resolutions (the state is remapped conservatively, package sim/remap).
// A run stays on the
// surface it was loaded on: its initial case is written for the plane or
// for the sphere (sim.Config.Validate), so a switch between the plane and
// the sphere is refused, and another surface is reached by loading a
// scenario written for it.

// minLevel is the coarsest icosahedral level a live run may switch to: 162
// cells, the coarsest grid on which the published cases are recognisable.
const minLevel = 2

// minCubedN is the coarsest cubed sphere a live run may switch to: 96
// cells, about the icosahedral level 2.
const minCubedN = 4

// isSphereKind reports whether grid family kind lives on the sphere.
func isSphereKind(kind string) bool { return mesh.Kind(kind).OnSphere() }

// nMinLive is the smallest resolution of grid family kind a live run may
// switch to.
func nMinLive(kind string) int {
	switch {
	case kind == string(mesh.Icosahedral):
		return minLevel
	case kind == string(mesh.Cubed):
		return minCubedN
	}
	return 4
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

// gridName writes a grid for labels: "hex n = 64", "icosahedral level 5",
// "cubed n = 48".
func gridName(kind string, n int) string {
	if kind == string(mesh.Icosahedral) {
		return kind + " level " + strconv.Itoa(n)
	}
	return kind + " n = " + strconv.Itoa(n)
}

// surfaceSwitch refuses a grid switch between the plane and the sphere.
func surfaceSwitch(kind string, cfg sim.Config, msh *mesh.Mesh) *cmdError {
	if isSphereKind(kind) == msh.Surface.Sphere {
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
func resolutionRange(kind string, n, nmax int) *cmdError {
	nmin := nMinLive(kind)
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

// nMinByKind lists nMinLive for every family, for the config message.
func nMinByKind() map[string]int {
	m := map[string]int{}
	for _, k := range gridKinds {
		m[k] = nMinLive(k)
	}
	return m
}

// optimizeName is grid.optimize for people: "none" when unset. Only
// icosahedral grids are optimised.
func optimizeName(opt string) string {
	if opt == "" {
		return mesh.OptimizeNone
	}
	return opt
}
