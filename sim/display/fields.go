package display

import (
	"fmt"
	"strings"

	"gyrebench/sim"
)

// Location says where a field lives: on cells (primal polygons) or on
// vertices (drawn on the dual polygons).
type Location uint8

// Locations of fields.
const (
	OnCells    Location = 0
	OnVertices Location = 1
)

// MarshalText names the location: "cells" or "vertices".
func (l Location) MarshalText() ([]byte, error) {
	if l == OnVertices {
		return []byte("vertices"), nil
	}
	return []byte("cells"), nil
}

// Field is one displayable field. The values come from the engine (state
// or diagnostics, FieldScratch.Values); a display only copies them. Its
// JSON is the entry of the field menu the browser is sent.
type Field struct {
	ID    uint8    `json:"id"`
	Name  string   `json:"name"`  // wire name
	Label string   `json:"label"` // for people
	Units string   `json:"units"`
	Loc   Location `json:"location"`
	// Map is "sequential" for fields that are positive by nature,
	// "diverging" for signed fields (centred on zero), and "auto" for a
	// field that is usually one-signed but need not be (a drawer picks
	// diverging when the values straddle zero).
	Map string `json:"map"`
}

// Fields lists the displayable fields in menu order; ID is the index.
func Fields() []Field {
	return []Field{
		{0, "depth", "fluid depth h", "m", OnCells, "sequential"},
		{1, "vorticity", "relative vorticity ζ", "s⁻¹", OnVertices, "diverging"},
		{2, "pv", "potential vorticity q", "m⁻¹ s⁻¹", OnVertices, "auto"},
		{3, "divergence", "divergence δ", "s⁻¹", OnCells, "diverging"},
		{4, "ke", "kinetic energy K", "m² s⁻²", OnCells, "sequential"},
	}
}

// LookupField returns the field called name, or an error naming the
// value and the fields there are.
func LookupField(name string) (Field, error) {
	var names []string
	for _, f := range Fields() {
		if f.Name == name {
			return f, nil
		}
		names = append(names, f.Name)
	}
	return Field{}, fmt.Errorf("field = %q: unknown; allowed: %s", name, strings.Join(names, ", "))
}

// FieldScratch holds the buffers for derived fields on one mesh.
type FieldScratch struct {
	zeta, pv []float64 // vertices
	cell     []float64 // cells
}

// NewFieldScratch makes the buffers for the model's mesh.
func NewFieldScratch(m *sim.Model) *FieldScratch {
	msh := m.Mesh()
	return &FieldScratch{
		zeta: make([]float64, msh.NumVertices),
		pv:   make([]float64, msh.NumVertices),
		cell: make([]float64, msh.NumCells),
	}
}

// Values returns the field's values for the model's current state. The
// slice is the model's own or scratch; it is valid until the next call.
func (s *FieldScratch) Values(f Field, m *sim.Model) []float64 {
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
