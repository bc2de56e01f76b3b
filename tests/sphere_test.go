package tests

import (
	"bytes"
	"context"
	"encoding/binary"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/coder/websocket"

	"gyrebench/server"
	"gyrebench/sim/timeline"
)

// geometry is a decoded geometry message (layout in server/doc.go).
type geometry struct {
	sphere               bool
	gen                  uint32
	nCells, nVertices    int
	cellStart, dualStart []uint32
	cellXY, dualXY       []float32
}

// currentGeometry connects a fresh watcher to run id and returns the
// geometry it is sent on joining.
func currentGeometry(t *testing.T, base, id string) geometry {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	c, _, err := websocket.Dial(ctx, "ws"+strings.TrimPrefix(base, "http")+"/run/"+id+"/ws", nil)
	if err != nil {
		t.Fatal(err)
	}
	defer c.CloseNow()
	c.SetReadLimit(64 << 20)
	for {
		typ, b, err := c.Read(ctx)
		if err != nil {
			t.Fatalf("reading the geometry: %v", err)
		}
		if typ != websocket.MessageBinary || b[0] != 1 {
			continue
		}
		le := binary.LittleEndian
		g := geometry{sphere: b[1] == 1, gen: le.Uint32(b[4:]), nCells: int(le.Uint32(b[8:])), nVertices: int(le.Uint32(b[12:]))}
		ncp, ndp := int(le.Uint32(b[16:])), int(le.Uint32(b[20:]))
		o := 48
		u32 := func(n int) []uint32 {
			s := make([]uint32, n)
			for i := range s {
				s[i] = le.Uint32(b[o+4*i:])
			}
			o += 4 * n
			return s
		}
		f32 := func(n int) []float32 {
			s := make([]float32, n)
			for i, w := range u32(n) {
				s[i] = math.Float32frombits(w)
			}
			return s
		}
		g.cellStart, g.dualStart = u32(g.nCells+1), u32(g.nVertices+1)
		g.cellXY, g.dualXY = f32(2*ncp), f32(2*ndp)
		if o != len(b) {
			t.Fatalf("geometry message: %d bytes, the header promises %d", len(b), o)
		}
		return g
	}
}

// sphericalAreas returns the area, on the unit sphere, of each polygon of
// a set given in degrees of longitude and latitude: a fan of spherical
// triangles from the first corner (Eriksson 1990, Math. Mag. 63, 184–187:
// tan(E/2) = a·(b×c) / (1 + a·b + b·c + c·a)), positive for corners
// anticlockwise seen from outside.
func sphericalAreas(start []uint32, xy []float32) []float64 {
	unit := func(k uint32) [3]float64 {
		lon, lat := float64(xy[2*k])*math.Pi/180, float64(xy[2*k+1])*math.Pi/180
		return [3]float64{math.Cos(lat) * math.Cos(lon), math.Cos(lat) * math.Sin(lon), math.Sin(lat)}
	}
	dot := func(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
	out := make([]float64, len(start)-1)
	for i := range out {
		a := unit(start[i])
		for k := start[i] + 1; k+1 < start[i+1]; k++ {
			b, c := unit(k), unit(k+1)
			cross := [3]float64{b[1]*c[2] - b[2]*c[1], b[2]*c[0] - b[0]*c[2], b[0]*c[1] - b[1]*c[0]}
			out[i] += 2 * math.Atan2(dot(a, cross), 1+dot(a, b)+dot(b, c)+dot(c, a))
		}
	}
	return out
}

// TestSphereLive loads a built-in sphere scenario into a planar run and
// checks that the sphere's geometry and frames arrive, that the grid menu's
// limits on the sphere hold, that a plane ↔ sphere switch is refused, and
// that a switch between icosahedral levels keeps the mass.
func TestSphereLive(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "small-hex", smallHex)})
	cl := dial(t, base, "1")

	var cfg msg
	var geo *frameHdr
	cl.mustAck("load", "williamson-6", func(m msg) {
		switch m.Type {
		case "config":
			cfg = m
		case "geometry":
			geo = m.bin
		}
	})
	if cfg.Grid.Kind != "icosahedral" || cfg.Grid.N != 5 {
		t.Fatalf("config after loading williamson-6: grid %+v, want icosahedral level 5", cfg.Grid)
	}
	// 10·4ⁿ + 2 cells and twice as many vertices less 4 (Euler's formula
	// with three edges per vertex).
	const cells, vertices = 10*1024 + 2, 2*(10*1024+2) - 4
	if cfg.Grid.Cells != cells || cfg.Grid.Vertices != vertices {
		t.Errorf("config: %d cells, %d vertices; want %d and %d", cfg.Grid.Cells, cfg.Grid.Vertices, cells, vertices)
	}
	if geo == nil || geo.Count != cells {
		t.Fatalf("geometry after the load: %+v, want one with %d cells", geo, cells)
	}

	// The geometry: flagged as the sphere, in longitude and latitude, and
	// the cell polygons and the dual polygons each tile the whole sphere.
	g := currentGeometry(t, base, "1")
	if !g.sphere || g.nCells != cells || g.nVertices != vertices {
		t.Fatalf("geometry: sphere %v, %d cells, %d vertices", g.sphere, g.nCells, g.nVertices)
	}
	for i := 0; i < len(g.cellXY); i += 2 {
		if lat := g.cellXY[i+1]; lat < -90 || lat > 90 || math.Abs(float64(g.cellXY[i])) > 360 {
			t.Fatalf("cell corner %d at (%g, %g): not a longitude and latitude in degrees", i/2, g.cellXY[i], lat)
		}
	}
	for _, set := range []struct {
		name  string
		start []uint32
		xy    []float32
	}{{"cells", g.cellStart, g.cellXY}, {"dual polygons", g.dualStart, g.dualXY}} {
		total, negative := 0.0, 0
		for _, a := range sphericalAreas(set.start, set.xy) {
			total += a
			if !(a > 0) {
				negative++
			}
		}
		// Corners travel as float32 degrees: about 1e-7 relative per corner.
		if math.Abs(total-4*math.Pi)/(4*math.Pi) > 1e-5 || negative > 0 {
			t.Errorf("%s: total area %.9g on the unit sphere (want 4π = %.9g), %d not anticlockwise", set.name, total, 4*math.Pi, negative)
		}
	}

	// Frames arrive while it runs, one value per cell.
	var s segment
	cl.mustAck("play", nil, s.see)
	runFor(cl, &s, 20)
	if !s.advancing(3) {
		t.Fatalf("%d frames while running on the sphere, not advancing", len(s.frames))
	}
	for _, f := range s.frames {
		if f.Gen == geo.Gen && f.Count != cells {
			t.Fatalf("depth frame with %d values on a grid of %d cells", f.Count, cells)
		}
	}

	// Refusals name the field and change nothing.
	for _, c := range []struct {
		name, kind string
		n          int
		field      string
		says       string
	}{
		{"plane from the sphere", "hex", 32, "grid.kind", "on the sphere"},
		{"level 7, past the live limit", "icosahedral", 7, "grid.n", "2 ≤ n ≤ 6"},
		{"level 1", "icosahedral", 1, "grid.n", "2 ≤ n ≤ 6"},
	} {
		r := cl.reply(cl.send("set-grid", map[string]any{"kind": c.kind, "n": c.n}), nil)
		if r.Type != "error" || r.fieldName() != c.field || !strings.Contains(r.Message, c.says) {
			t.Errorf("%s: reply %s field %q %q; want an error on %s saying %q", c.name, r.Type, r.fieldName(), r.Message, c.field, c.says)
		}
	}

	// Level 5 → 4 remaps conservatively: the mass is the same to round-off
	// on either side of the switch.
	newGeo, before, after := cl.switchGrid(map[string]any{"kind": "icosahedral", "n": 4})
	if newGeo == nil || newGeo.Count != 10*256+2 {
		t.Fatalf("geometry after the switch to level 4: %+v, want 2562 cells", newGeo)
	}
	if before.Type == "" || after.Type == "" {
		t.Fatal("no invariant points on both sides of the level switch")
	}
	if rel := math.Abs(after.MassAbs-before.MassAbs) / before.MassAbs; rel > 1e-12 {
		t.Errorf("mass across the level 5 → 4 switch: %.17g → %.17g (relative %.2g), want round-off", before.MassAbs, after.MassAbs, rel)
	}
	cl.mustAck("pause", nil, nil)
}

// TestSphereOptimizeSwitch: mid-run, the icosahedral grid switches between
// the bisected icosahedron and its Lloyd-relaxed (centroidal) form at the
// same level; the switch moves the cell corners, keeps the mass to
// round-off, is marked, is refused for a planar grid or an unknown value,
// and is recorded so that a headless replay of the saved timeline ends on
// the live run's final.nc byte for byte.
func TestSphereOptimizeSwitch(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "small-hex", smallHex)})
	cl := dial(t, base, "1")

	if r := cl.reply(cl.send("set-grid", map[string]any{"kind": "hex", "n": 16, "optimize": "lloyd"}), nil); r.Type != "error" || r.fieldName() != "grid.optimize" {
		t.Errorf("optimize on the hex grid: %s on %q %q; want an error on grid.optimize", r.Type, r.fieldName(), r.Message)
	}
	var cfg msg
	cl.mustAck("load", "williamson-2", func(m msg) {
		if m.Type == "config" {
			cfg = m
		}
	})
	cl.mustAck("set-grid", map[string]any{"kind": "icosahedral", "n": 3}, func(m msg) {
		if m.Type == "config" {
			cfg = m
		}
	})
	if cfg.Grid.N != 3 || cfg.Grid.Optimize != "lloyd" {
		t.Fatalf("after a level change: grid %+v; want level 3, still lloyd (williamson-2's)", cfg.Grid)
	}
	lloyd := currentGeometry(t, base, "1")
	if r := cl.reply(cl.send("set-grid", map[string]any{"kind": "icosahedral", "n": 3, "optimize": "spring"}), nil); r.Type != "error" || r.fieldName() != "grid.optimize" || !strings.Contains(r.Message, `"lloyd"`) {
		t.Errorf("optimize = spring: %s on %q %q; want an error on grid.optimize listing none and lloyd", r.Type, r.fieldName(), r.Message)
	}

	for k, opt := range []string{"none", "lloyd"} {
		for range 3 {
			cl.mustAck("step", nil, nil)
		}
		var before, after, mark msg
		cl.mustAck("set-grid", map[string]any{"kind": "icosahedral", "n": 3, "optimize": opt}, func(m msg) {
			switch {
			case m.Type == "config":
				cfg = m
			case m.Type == "marker":
				mark = m
			case m.Type == "point" && mark.Type == "":
				before = m
			case m.Type == "point" && after.Type == "":
				after = m
			}
		})
		if cfg.Grid.Optimize != opt || cfg.Grid.N != 3 {
			t.Fatalf("after set-grid optimize = %s: grid %+v", opt, cfg.Grid)
		}
		if mark.Kind != "grid" || !strings.Contains(mark.Label, opt) {
			t.Errorf("marker of the switch to %s: %+v; want a grid marker naming it", opt, mark)
		}
		if before.Type == "" || after.Type == "" {
			t.Fatalf("switch to %s: no invariant points on both sides", opt)
		}
		if rel := math.Abs(after.MassAbs-before.MassAbs) / before.MassAbs; rel > 1e-12 {
			t.Errorf("mass across the switch to %s: %.17g → %.17g (relative %.2g), want round-off", opt, before.MassAbs, after.MassAbs, rel)
		}
		g := currentGeometry(t, base, "1")
		moved := 0.0
		for i := range g.cellXY {
			if i%2 == 1 { // latitude, degrees
				moved = max(moved, math.Abs(float64(g.cellXY[i]-lloyd.cellXY[i])))
			}
		}
		// Lloyd relaxation moves the corners by a fraction of a cell
		// (level 3: cells about 7.5° across); it does not renumber them.
		if k == 0 && !(moved > 0.01) {
			t.Errorf("bisected against Lloyd-relaxed level 3: corners moved at most %g° in latitude; want them to differ", moved)
		}
		if k == 1 && moved != 0 {
			t.Errorf("back to Lloyd: corners %g° from the first Lloyd grid's; want the same grid", moved)
		}
	}
	for range 3 {
		cl.mustAck("step", nil, nil)
	}

	data, live, tl := savedRun(t, base)
	var grids []string
	for _, e := range tl.Events {
		if e.Cmd == timeline.SetGrid {
			grids = append(grids, fmt.Sprintf("%d %s", e.N, e.Optimize))
		}
	}
	if got, want := strings.Join(grids, ", "), "3 lloyd, 3 none, 3 lloyd"; got != want {
		t.Errorf("recorded set-grid events (level, optimize): %s; want %s", got, want)
	}
	headless := replayHeadless(t, data)
	if !bytes.Equal(headless, live) {
		t.Errorf("the headless replay's final.nc (%d bytes) differs from the live run's (%d bytes)", len(headless), len(live))
	}
}
