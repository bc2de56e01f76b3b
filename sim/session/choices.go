package session

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scenario"
	"gyrebench/sim/step"
	"gyrebench/sim/timeline"
)

// reset rebuilds the model from its current choices, which after a grid
// switch hold the domain height that Regrid kept.
func (s *Session) reset(res *Result) error {
	nm, err := sim.NewModel(s.m.Config(), s.opt.Workers)
	if err != nil {
		return refuseErr("reset", "", err)
	}
	if err := s.fits(nm); err != nil {
		nm.Close()
		return refuseErr("ring", strconv.Itoa(s.opt.RingSize), err)
	}
	s.install(nm, s.scenario, s.title, res)
	return nil
}

func (s *Session) load(c Load, res *Result) error {
	src, err := scenarios.Source(c.Scenario)
	if err != nil {
		return refuse("scenario", c.Scenario, "scenario = %q: not a built-in scenario; allowed: %s", c.Scenario, strings.Join(scenarios.Names(), ", "))
	}
	sc, err := scenario.Parse(src, c.Scenario)
	if err != nil {
		return refuseErr("scenario", c.Scenario, err)
	}
	nm, err := sim.NewModel(sc.Config, s.opt.Workers)
	if err != nil {
		return refuseErr("scenario", c.Scenario, err)
	}
	if err := s.fits(nm); err != nil {
		nm.Close()
		return refuseErr("scenario", c.Scenario, err)
	}
	s.install(nm, c.Scenario, sc.Config.Title, res)
	return nil
}

// switchName is a switch of a choice known by name (the scheme, the Hodge
// star, the integrator): nothing when name is the one in use (now),
// check's refusal when it refuses name, else the change that set makes,
// with a marker that reads label + name.
func (s *Session) switchName(res *Result, kind, label, name, now string, check, set func() error, event func() timeline.Event) error {
	if name == now {
		return nil
	}
	if err := check(); err != nil {
		return err
	}
	return s.change(res, kind, label+name, set, event)
}

func (s *Session) setScheme(c SetScheme, res *Result) error {
	cfg := s.m.Config()
	return s.switchName(res, "scheme", "scheme: ", c.Name, cfg.Scheme.Name,
		func() error {
			try := cfg
			try.Scheme.Name = c.Name
			return engine("scheme.name", c.Name, try.Validate())
		},
		func() error { return engine("scheme.name", c.Name, s.m.SetScheme(c.Name)) },
		func() timeline.Event {
			return timeline.Event{Cmd: timeline.SetScheme, Scheme: s.m.Config().Scheme.Name}
		})
}

// setHodge switches the edge Hodge star on the same state
// (sim.Model.SetHodge).
func (s *Session) setHodge(c SetHodge, res *Result) error {
	return s.switchName(res, "hodge", "Hodge star: ", c.Name, HodgeName(s.m.Config().Scheme.Hodge),
		func() error {
			if !contains(HodgeStars(), c.Name) {
				return refuse("scheme.hodge", c.Name, "scheme.hodge = %q: unknown Hodge star; allowed: %s (the two are the same where the dual is orthogonal)",
					c.Name, strings.Join(HodgeStars(), ", "))
			}
			return nil
		},
		func() error { return engine("scheme.hodge", c.Name, s.m.SetHodge(c.Name)) },
		func() timeline.Event {
			return timeline.Event{Cmd: timeline.SetHodge, Hodge: HodgeName(s.m.Config().Scheme.Hodge)}
		})
}

func (s *Session) setIntegrator(c SetIntegrator, res *Result) error {
	return s.switchName(res, "integrator", "integrator: ", c.Name, s.m.Config().Time.Integrator,
		func() error {
			_, err := step.New(c.Name, 0, step.Options{})
			return engine("time.integrator", c.Name, err)
		},
		func() error { return engine("time.integrator", c.Name, s.m.SetIntegrator(c.Name)) },
		func() timeline.Event {
			return timeline.Event{Cmd: timeline.SetIntegrator, Integrator: s.m.Config().Time.Integrator}
		})
}

func (s *Session) setDt(c SetDt, res *Result) error {
	dt, shown := c.Seconds, fmtNumber(c.Seconds)
	if !(dt > 0) {
		return refuse("time.dt", shown, "time.dt = %s s: must be a positive number of seconds", shown)
	}
	if limit := dtMax(s.m); !s.opt.Headless && dt > limit {
		return refuse("time.dt", shown, "time.dt = %s s: allowed 0 < Δt ≤ %.4g s on this grid (gravity-wave Courant number up to %g)", shown, limit, MaxCourant)
	}
	if dt == s.m.Config().Time.Dt {
		return nil
	}
	return s.change(res, "dt", "Δt = "+strconv.FormatFloat(dt, 'g', 4, 64)+" s",
		func() error { return engine("time.dt", shown, s.m.SetDt(dt)) },
		func() timeline.Event { return timeline.Event{Cmd: timeline.SetDt, Dt: s.m.Config().Time.Dt} })
}

func (s *Session) setGrid(c SetGrid, res *Result) error {
	cfg, msh := s.m.Config(), s.m.Mesh()
	kind, n := c.Kind, c.N
	if kind == "" {
		kind = cfg.Grid.Kind
	}
	if n == 0 {
		n = cfg.Grid.N
	}
	if !contains(GridKinds(), kind) {
		return refuse("grid.kind", kind, "grid.kind = %q: not a grid the workbench can switch to; allowed: %s", kind, strings.Join(GridKinds(), ", "))
	}
	if ce := surfaceSwitch(kind, cfg, msh); ce != nil {
		return ce
	}
	ico := kind == string(mesh.Icosahedral)
	opt := cfg.Grid.Optimize
	if !ico {
		opt = "" // the relaxation is the icosahedral grid's; it does not carry to another family
	}
	if c.Optimize != "" {
		switch {
		case !ico:
			return refuse("grid.optimize", c.Optimize, "grid.optimize = %q: only icosahedral grids are optimised; leave it out for %s", c.Optimize, kind)
		case c.Optimize != mesh.OptimizeNone && c.Optimize != mesh.OptimizeLloyd:
			return refuse("grid.optimize", c.Optimize, "grid.optimize = %q: allowed: %q (the bisected icosahedron) or %q (centroidal Lloyd relaxation)", c.Optimize, mesh.OptimizeNone, mesh.OptimizeLloyd)
		}
		opt = c.Optimize
	}
	if n == cfg.Grid.N && kind == cfg.Grid.Kind && OptimizeName(opt) == OptimizeName(cfg.Grid.Optimize) {
		return nil
	}
	if !s.opt.Headless {
		if ce := resolutionRange(kind, n, MaxLiveN(kind, cfg, msh)); ce != nil {
			return ce
		}
		cells, err := liveSpec(kind, n, cfg, msh).Cells()
		if err != nil {
			return refuseErr("grid.n", strconv.Itoa(n), err)
		}
		if err := RingFits(s.opt.RingSize, cells); err != nil {
			return refuseErr("grid.n", strconv.Itoa(n), err)
		}
	}
	label := "grid: " + GridName(kind, n)
	if ico && (OptimizeName(opt) != OptimizeName(cfg.Grid.Optimize) || opt == mesh.OptimizeLloyd && cfg.Grid.Kind != kind) {
		label += ", " + OptimizeName(opt)
	}
	return s.change(res, "grid", label, func() error {
		nm, err := s.m.RegridOptimize(kind, n, opt)
		if err != nil {
			return refuseErr("grid", GridName(kind, n), err)
		}
		s.m.Close()
		s.m = nm
		s.ring.reset()
		s.ring.push(nm)
		s.rewound, s.blow = false, nil
		res.Effects |= MeshChanged | RingChanged | StateMoved
		return nil
	}, func() timeline.Event {
		g := s.m.Config().Grid
		e := timeline.Event{Cmd: timeline.SetGrid, Kind: g.Kind, N: g.N}
		if g.Kind == string(mesh.Icosahedral) { // the only family with grid.optimize
			e.Optimize = OptimizeName(g.Optimize)
		}
		return e
	})
}

// setDissipation changes the explicit dissipation mid-run, with a marker
// like a scheme or Δt change.
func (s *Session) setDissipation(c SetDissipation, res *Result) error {
	d := s.m.Dissipation()
	for _, f := range []struct{ src, dst *float64 }{
		{c.Viscosity, &d.Viscosity}, {c.Hyperviscosity, &d.Hyperviscosity}, {c.DivergenceDamping, &d.DivergenceDamping},
	} {
		if f.src != nil {
			*f.dst = *f.src
		}
	}
	if err := d.Validate(); err != nil {
		return refuseErr("dissipation", d.String(), err)
	}
	if d == s.m.Dissipation() {
		return nil
	}
	label := "dissipation: off"
	if t := d.String(); t != "" {
		label = "dissipation: " + t
	}
	return s.change(res, "dissipation", label,
		func() error { return engine("dissipation", d.String(), s.m.SetDissipation(d)) },
		func() timeline.Event {
			return timeline.Event{Cmd: timeline.SetDissipation, Dissipation: s.m.Dissipation()}
		})
}

// engine turns a refusal of the engine (or of the check of a choice)
// into an *Error; nil stays nil.
func engine(field, value string, err error) error {
	if err == nil {
		return nil
	}
	return refuseErr(field, value, err)
}

func (s *Session) scrub(c Scrub, res *Result) error {
	if s.state == Running {
		return refuse("scrub", strconv.Itoa(c.Index), "scrub: the run is running; pause it first, then pick a recent state")
	}
	i, n := c.Index, s.ring.n
	if i < 0 || i >= n {
		return refuse("scrub", strconv.Itoa(i), "scrub = %d: no such recent state; allowed 0 (oldest) to %d (newest)", i, n-1)
	}
	from, fromT, wasRewound := s.m.Steps(), s.m.Time(), s.rewound
	snap := s.ring.at(i)
	if err := s.m.SetState(snap.x, snap.t, snap.steps); err != nil {
		return refuseErr("scrub", strconv.Itoa(i), err)
	}
	s.ring.cursor, s.rewound, s.state = i, true, Paused
	res.point(s.RecordPoint())
	res.Effects |= StateMoved | StateChanged | RingChanged
	s.recordRewind(from, fromT, wasRewound, res)
	return nil
}

// rewind sets the state to one kept for step c.ToStep: by a replay, or in
// the ring. The history forgets what came after it at once.
func (s *Session) rewind(c Rewind, res *Result) error {
	from, fromT := s.m.Steps(), s.m.Time()
	var snap *snapshot
	if s.replay != nil {
		snap = s.replay.snaps[c.ToStep]
	}
	if snap == nil {
		snap = s.ring.find(c.ToStep)
	}
	var err error
	switch {
	case c.ToStep == from:
		err = s.m.SetState(s.m.State(), s.m.Time(), from)
	case snap == nil || len(snap.x) != len(s.m.State()):
		err = fmt.Errorf("to_step = %d: the replay has no state of that step on this grid; allowed: a step the replay kept or one in the ring", c.ToStep)
	default:
		err = s.m.SetState(snap.x, snap.t, snap.steps)
	}
	if err != nil {
		return refuseErr("to_step", strconv.FormatInt(c.ToStep, 10), err)
	}
	s.rewound = false
	s.ring.dropAfterStep(s.m.Steps())
	s.ring.push(s.m)
	s.cutHistory(res)
	res.Effects |= StateMoved | StateChanged
	s.recordRewind(from, fromT, false, res)
	return nil
}

func (s *Session) mark(c Mark, res *Result) error {
	label := strings.TrimSpace(c.Label)
	if label == "" {
		label = "mark at t = " + FmtTime(s.m.Time())
	}
	if err := timeline.CheckLabel(label); err != nil {
		return refuse("label", label, "label: %v", err)
	}
	s.record(timeline.Event{Cmd: timeline.Mark, Label: label}, res)
	s.addMarker("mark", label, res)
	return nil
}

// expectBlowUp takes the step that a recorded blow-up says failed.
func (s *Session) expectBlowUp(res *Result) error {
	err := s.m.Step()
	var bu *sim.BlowUpError
	if !errors.As(err, &bu) {
		if err == nil {
			err = fmt.Errorf("the live run blew up taking step %d, the replay did not: it has diverged from the recording", s.m.Steps())
		}
		return refuseErr("blow-up", "", err)
	}
	s.blownUp(bu, err, res)
	return nil
}
