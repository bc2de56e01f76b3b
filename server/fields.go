package server

import (
	"fmt"
	"strings"

	"gyrebench/sim"
	"gyrebench/web"
)

// Location says where a field lives: on cells (primal polygons) or on
// vertices (drawn on the dual polygons).
type Location uint8

// Locations of fields.
const (
	OnCells    Location = 0
	OnVertices Location = 1
)

// fieldDef is one displayable field. The values come from the engine
// (state or diagnostics); the server only copies them.
type fieldDef struct {
	ID    uint8
	Name  string // wire name
	Label string // for people
	Units string
	Loc   Location
	// Map is "sequential" for fields that are positive by nature,
	// "diverging" for signed fields (centred on zero), and "auto" for a
	// field that is usually one-signed but need not be (the browser picks
	// diverging when the frame straddles zero).
	Map string
}

// fieldDefs lists the fields in menu order; ID is the index.
var fieldDefs = [...]fieldDef{
	{0, "depth", "fluid depth h", "m", OnCells, "sequential"},
	{1, "vorticity", "relative vorticity ζ", "s⁻¹", OnVertices, "diverging"},
	{2, "pv", "potential vorticity q", "m⁻¹ s⁻¹", OnVertices, "auto"},
	{3, "divergence", "divergence δ", "s⁻¹", OnCells, "diverging"},
	{4, "ke", "kinetic energy K", "m² s⁻²", OnCells, "sequential"},
}

// fieldOptions is the menu of fields.
func fieldOptions(selected string) []web.Option {
	var opts []web.Option
	for _, f := range fieldDefs {
		opts = append(opts, web.Option{Value: f.Name, Label: f.Label + " (" + f.Units + ")", Title: f.Name, Selected: f.Name == selected})
	}
	return opts
}

func lookupField(name string) (*fieldDef, error) {
	var names []string
	for i := range fieldDefs {
		if fieldDefs[i].Name == name {
			return &fieldDefs[i], nil
		}
		names = append(names, fieldDefs[i].Name)
	}
	return nil, fmt.Errorf("field = %q: unknown; allowed: %s", name, strings.Join(names, ", "))
}

// fieldScratch holds the buffers for derived fields on one mesh.
type fieldScratch struct {
	zeta, pv []float64 // vertices
	cell     []float64 // cells
}

func newFieldScratch(m *sim.Model) *fieldScratch {
	msh := m.Mesh()
	return &fieldScratch{
		zeta: make([]float64, msh.NumVertices),
		pv:   make([]float64, msh.NumVertices),
		cell: make([]float64, msh.NumCells),
	}
}

// values returns the field's values for the model's current state. The
// slice is the model's own or scratch; it is valid until the next call.
func (s *fieldScratch) values(f *fieldDef, m *sim.Model) []float64 {
	x := m.State()
	d := m.Diagnostics()
	switch f.Name {
	case "vorticity":
		d.Vorticity(s.zeta, nil, x)
		return s.zeta
	case "pv":
		d.Vorticity(s.zeta, s.pv, x)
		return s.pv
	case "divergence":
		d.Divergence(s.cell, x)
		return s.cell
	case "ke":
		d.KineticEnergy(s.cell, x)
		return s.cell
	}
	return m.Depth()
}
