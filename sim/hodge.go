package sim

import (
	"fmt"
	"slices"
	"strings"

	"gyrebench/sim/diag"
	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
	"gyrebench/sim/scheme"
)

func validHodge(name string) error {
	if name == "" || slices.Contains(scheme.HodgeNames, name) {
		return nil
	}
	return fmt.Errorf("scheme.hodge = %q: unknown; allowed: %s", name, strings.Join(scheme.HodgeNames, ", "))
}

// HodgeGrid returns the grid (topology + metric) that schemes and
// diagnostics see on msh for the Hodge choice hodge (scheme.hodge): with
// "consistent" (or "") the mesh's general Hodge star, computed here once
// (mesh.EnsureHodge) where the dual is not orthogonal; with "diagonal" a
// copy of the metric without it, so that H = diag(l/d). On a grid whose
// dual is orthogonal both are the mesh's own metric.
func HodgeGrid(msh *mesh.Mesh, hodge string) (ops.Grid, error) {
	if err := validHodge(hodge); err != nil {
		return ops.Grid{}, err
	}
	if err := mesh.EnsureHodge(msh); err != nil {
		return ops.Grid{}, fmt.Errorf("scheme.hodge = %q: %w", hodge, err)
	}
	g := ops.Grid{Topology: &msh.Topology, Metric: &msh.Metric}
	if hodge == scheme.HodgeDiagonal && msh.Hodge != nil {
		mc := msh.Metric
		mc.Hodge = nil
		g.Metric = &mc
	}
	return g, nil
}

// SetHodge switches the edge Hodge star (scheme.hodge: "consistent" or
// "diagonal") on the same state, the way SetScheme switches the scheme:
// the scheme and the diagnostics are rebuilt on the new metric and the
// next step uses it. The energy of later diagnostics is measured with the
// new Hodge star, while drifts stay relative to the run's start (as after
// Regrid), so a switch can show as a step in the energy drift on a grid
// whose dual is not orthogonal.
func (m *Model) SetHodge(hodge string) error {
	g, err := HodgeGrid(m.mesh, hodge)
	if err != nil {
		return err
	}
	old, oldGrid := m.cfg.Scheme.Hodge, m.grid
	m.grid, m.cfg.Scheme.Hodge = g, hodge
	if err := m.setScheme(m.cfg.Scheme.Name); err != nil {
		m.grid, m.cfg.Scheme.Hodge = oldGrid, old
		return err
	}
	m.calc = diag.New(m.grid, m.cfg.Physics.G, m.phys.FVertex, m.phys.Bottom)
	m.integ.Restart()
	return nil
}

// Grid returns the topology and metric the model's scheme sees.
func (m *Model) Grid() ops.Grid { return m.grid }
