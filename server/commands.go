package server

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scenario"
	"gyrebench/sim/step"
)

// gridKinds are the grid families of the grid menu. A run switches
// between the planar ones, or between the sphere ones (sphere.go).
var gridKinds = []string{string(mesh.Quad), string(mesh.Hex), string(mesh.Tri), string(mesh.Icosahedral), string(mesh.Cubed)}

// cmdError refuses a command: which field, the value given, and a message
// that says what is allowed.
type cmdError struct {
	field, value, msg string
}

func (e *cmdError) Error() string { return e.msg }

func refuse(field, value, format string, args ...any) *cmdError {
	return &cmdError{field: field, value: value, msg: fmt.Sprintf(format, args...)}
}

// refuseErr wraps an engine error, whose message already names the field,
// the value and what is allowed.
func refuseErr(field, value string, err error) *cmdError {
	return &cmdError{field: field, value: value, msg: err.Error()}
}

func errorReply(m clientMsg, err error) outMsg {
	var ce *cmdError
	if !errors.As(err, &ce) {
		ce = &cmdError{field: "cmd", value: m.Cmd, msg: err.Error()}
	}
	return outMsg{typ: textMsg, data: mustJSON(errorMsg{Type: "error", ID: m.ID, Cmd: m.Cmd, Field: ce.field, Value: ce.value, Message: ce.msg})}
}

// shown is a raw JSON value as text for messages, cut to a sensible length.
func shown(raw json.RawMessage) string {
	s := strings.TrimSpace(string(raw))
	if s == "" {
		s = "(missing)"
	}
	if len(s) > 64 {
		s = s[:61] + "..."
	}
	return s
}

// parseClient decodes a client message strictly: it must be a JSON object
// with the keys id, cmd and value only, and cmd must be a known command.
func parseClient(data []byte) (clientMsg, *cmdError) {
	var m clientMsg
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&m); err != nil {
		v := string(data)
		if len(v) > 64 {
			v = v[:61] + "..."
		}
		return m, refuse("message", v, "message %q is not a command: %v; want a JSON object such as {\"cmd\": \"play\"} with the keys id, cmd and value", v, err)
	}
	if dec.More() {
		return m, refuse("message", shown(data), "message holds more than one JSON value; send one command per message")
	}
	for _, c := range commands {
		if m.Cmd == c {
			return m, nil
		}
	}
	return m, refuse("cmd", m.Cmd, "cmd = %q: unknown command; allowed: %s", m.Cmd, strings.Join(commands, ", "))
}

func parseString(raw json.RawMessage, field string) (string, *cmdError) {
	var s string
	if err := json.Unmarshal(raw, &s); err != nil {
		return "", refuse(field, shown(raw), "%s = %s: must be a string", field, shown(raw))
	}
	return s, nil
}

// parseNumber accepts a JSON number or a string holding one, as typed in a
// text field.
func parseNumber(raw json.RawMessage, field, what string) (float64, *cmdError) {
	var x float64
	if err := json.Unmarshal(raw, &x); err != nil {
		var s string
		if json.Unmarshal(raw, &s) != nil {
			return 0, refuse(field, shown(raw), "%s = %s: must be %s", field, shown(raw), what)
		}
		x, err = strconv.ParseFloat(strings.TrimSpace(s), 64)
		if err != nil {
			return 0, refuse(field, s, "%s = %q: must be %s", field, s, what)
		}
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, refuse(field, shown(raw), "%s = %s: must be %s", field, shown(raw), what)
	}
	return x, nil
}

func parseInt(raw json.RawMessage, field, what string) (int, *cmdError) {
	x, err := parseNumber(raw, field, what)
	if err != nil {
		return 0, err
	}
	if x != math.Trunc(x) || math.Abs(x) > 1<<30 {
		return 0, refuse(field, shown(raw), "%s = %s: must be %s", field, shown(raw), what)
	}
	return int(x), nil
}

// maxLiveN is the largest n of grid family kind whose mesh, on the current
// domain, has at most MaxLiveCells cells.
func maxLiveN(kind string, cfg sim.Config, msh *mesh.Mesh) int {
	ok := func(n int) bool {
		c, err := liveSpec(kind, n, cfg, msh).Cells()
		return err == nil && c <= MaxLiveCells
	}
	lo, hi := 4, 1<<12 // ok(lo) holds for every planar family
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

// apply carries out one client command. On error nothing has changed.
func (r *Run) apply(m clientMsg) error {
	cfg := r.m.Config()
	switch m.Cmd {
	case "play":
		if r.state != StateRunning {
			r.state = StateRunning
			r.blow = nil
			r.rateT, r.rateSteps, r.rate = time.Now(), r.m.Steps(), 0
			r.emitStatus()
			r.publishInfo()
		}
	case "pause":
		r.pause()
	case "step":
		r.pause()
		r.blow = nil
		if r.step() {
			r.ring.push(r.m)
			r.emitPoint()
			r.emitFrame()
			r.emitStatus()
			r.emitRing()
			r.publishInfo()
		}
	case "reset":
		// The model's config holds the current choices, and after a grid
		// switch the domain height that Regrid kept.
		nm, err := sim.NewModel(cfg, r.workers)
		if err != nil {
			return refuseErr("reset", "", err)
		}
		if err := ringFits(r.ringSize, nm.Mesh().NumCells); err != nil {
			nm.Close()
			return refuseErr("ring", strconv.Itoa(r.ringSize), err)
		}
		r.install(nm, r.scenario, r.title)
		r.afterInstall()
	case "load":
		name, ce := parseString(m.Value, "scenario")
		if ce != nil {
			return ce
		}
		src, err := scenarios.Source(name)
		if err != nil {
			return refuse("scenario", name, "scenario = %q: not a built-in scenario; allowed: %s", name, strings.Join(scenarios.Names(), ", "))
		}
		sc, err := scenario.Parse(src, name)
		if err != nil {
			return refuseErr("scenario", name, err)
		}
		nm, err := sim.NewModel(sc.Config, r.workers)
		if err != nil {
			return refuseErr("scenario", name, err)
		}
		if err := ringFits(r.ringSize, nm.Mesh().NumCells); err != nil {
			nm.Close()
			return refuseErr("scenario", name, err)
		}
		r.install(nm, name, sc.Config.Title)
		r.afterInstall()
	case "set-dt":
		return r.setDt(m.Value)
	case "set-dissipation":
		return r.setDissipation(m.Value)
	case "set-integrator":
		name, ce := parseString(m.Value, "time.integrator")
		if ce != nil {
			return ce
		}
		if name == cfg.Time.Integrator {
			return nil
		}
		if _, err := step.New(name, 0, step.Options{}); err != nil {
			return refuseErr("time.integrator", name, err)
		}
		return r.change("integrator", "integrator: "+name, func() error {
			if err := r.m.SetIntegrator(name); err != nil {
				return refuseErr("time.integrator", name, err)
			}
			return nil
		})
	case "set-scheme":
		name, ce := parseString(m.Value, "scheme.name")
		if ce != nil {
			return ce
		}
		if name == cfg.Scheme.Name {
			return nil
		}
		try := cfg
		try.Scheme.Name = name
		if err := try.Validate(); err != nil {
			return refuseErr("scheme.name", name, err)
		}
		return r.change("scheme", "scheme: "+name, func() error {
			if err := r.m.SetScheme(name); err != nil {
				return refuseErr("scheme.name", name, err)
			}
			return nil
		})
	case "set-grid":
		return r.setGrid(m.Value)
	case "set-hodge":
		return r.setHodge(m.Value)
	case "structure":
		return r.structureOn(m.Value)
	case "mark", "replay", "stop-replay":
		return r.applyTimeline(m)
	case "linear":
		return r.linearOn(m.Value)
	case "set-field":
		name, ce := parseString(m.Value, "field")
		if ce != nil {
			return ce
		}
		f, err := lookupField(name)
		if err != nil {
			return refuseErr("field", name, err)
		}
		r.field = f
		r.broadcast(r.configMsg())
		r.emitFrame()
		r.publishInfo()
	case "scrub":
		if r.state == StateRunning {
			return refuse("scrub", shown(m.Value), "scrub: the run is running; pause it first, then pick a recent state")
		}
		i, ce := parseInt(m.Value, "scrub", fmt.Sprintf("a whole number from 0 (oldest) to %d (newest)", r.ring.n-1))
		if ce != nil {
			return ce
		}
		if i < 0 || i >= r.ring.n {
			return refuse("scrub", strconv.Itoa(i), "scrub = %d: no such recent state; allowed 0 (oldest) to %d (newest)", i, r.ring.n-1)
		}
		s := r.ring.at(i)
		if err := r.m.SetState(s.x, s.t, s.steps); err != nil {
			return refuseErr("scrub", strconv.Itoa(i), err)
		}
		r.ring.cursor, r.rewound = i, true
		r.state = StatePaused
		r.emitPoint()
		r.emitFrame()
		r.emitStatus()
		r.emitRing()
		r.publishInfo()
	}
	return nil
}

func (r *Run) setDt(raw json.RawMessage) error {
	const what = "a positive number of seconds"
	dt, ce := parseNumber(raw, "time.dt", what)
	if ce != nil {
		return ce
	}
	limit := r.dtMax()
	if !(dt > 0) || dt > limit {
		return refuse("time.dt", shown(raw), "time.dt = %s s: allowed 0 < Δt ≤ %.4g s on this grid (gravity-wave Courant number up to %g)", shown(raw), limit, MaxCourant)
	}
	if dt == r.m.Config().Time.Dt {
		return nil
	}
	return r.change("dt", "Δt = "+strconv.FormatFloat(dt, 'g', 4, 64)+" s", func() error {
		if err := r.m.SetDt(dt); err != nil {
			return refuseErr("time.dt", shown(raw), err)
		}
		return nil
	})
}

func (r *Run) setGrid(raw json.RawMessage) error {
	var g gridValue
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&g); err != nil {
		return refuse("grid", shown(raw), "grid = %s: want {\"kind\": one of %s, \"n\": cells per side, the level (icosahedral) or cells along a cube edge (cubed), \"optimize\" (icosahedral only): \"none\" or \"lloyd\"}", shown(raw), strings.Join(gridKinds, ", "))
	}
	cfg := r.m.Config()
	msh := r.m.Mesh()
	if g.Kind == "" {
		g.Kind = cfg.Grid.Kind
	}
	known := false
	for _, k := range gridKinds {
		known = known || k == g.Kind
	}
	if !known {
		return refuse("grid.kind", g.Kind, "grid.kind = %q: not a grid the workbench can switch to; allowed: %s", g.Kind, strings.Join(gridKinds, ", "))
	}
	if ce := surfaceSwitch(g.Kind, cfg, msh); ce != nil {
		return ce
	}
	n := cfg.Grid.N
	if len(g.N) > 0 {
		var ce *cmdError
		if n, ce = parseInt(g.N, "grid.n", resolutionWhat(g.Kind)); ce != nil {
			return ce
		}
	}
	opt := cfg.Grid.Optimize
	if g.Kind != string(mesh.Icosahedral) {
		opt = "" // the relaxation is the icosahedral grid's; it does not carry to another family
	}
	if g.Optimize != nil {
		switch {
		case g.Kind != string(mesh.Icosahedral):
			return refuse("grid.optimize", *g.Optimize, "grid.optimize = %q: only icosahedral grids are optimised; leave it out for %s", *g.Optimize, g.Kind)
		case *g.Optimize != mesh.OptimizeNone && *g.Optimize != mesh.OptimizeLloyd:
			return refuse("grid.optimize", *g.Optimize, "grid.optimize = %q: allowed: %q (the bisected icosahedron) or %q (centroidal Lloyd relaxation)", *g.Optimize, mesh.OptimizeNone, mesh.OptimizeLloyd)
		}
		opt = *g.Optimize
	}
	if n == cfg.Grid.N && g.Kind == cfg.Grid.Kind && optimizeName(opt) == optimizeName(cfg.Grid.Optimize) {
		return nil
	}
	if ce := resolutionRange(g.Kind, n, maxLiveN(g.Kind, cfg, msh)); ce != nil {
		return ce
	}
	cells, err := liveSpec(g.Kind, n, cfg, msh).Cells()
	if err != nil {
		return refuseErr("grid.n", strconv.Itoa(n), err)
	}
	if err := ringFits(r.ringSize, cells); err != nil {
		return refuseErr("grid.n", strconv.Itoa(n), err)
	}
	label := "grid: " + gridName(g.Kind, n)
	if g.Kind == string(mesh.Icosahedral) && (optimizeName(opt) != optimizeName(cfg.Grid.Optimize) || opt == mesh.OptimizeLloyd && cfg.Grid.Kind != g.Kind) {
		label += ", " + optimizeName(opt)
	}
	return r.change("grid", label, func() error {
		nm, err := r.m.RegridOptimize(g.Kind, n, opt)
		if err != nil {
			return refuseErr("grid", shown(raw), err)
		}
		r.m.Close()
		r.m = nm
		r.newMesh()
		r.ring.reset()
		r.ring.push(nm)
		r.rewound = false
		r.blow = nil
		r.broadcast(r.geom)
		r.emitRing()
		r.emitFrame()
		return nil
	})
}
