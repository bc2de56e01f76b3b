package server

import (
	"time"

	"gyrebench/scenarios/timelines"
	"gyrebench/sim/session"
)

// point is one row of the invariant series on the wire (session.Point).
type point struct {
	T          num   `json:"t"`
	Steps      int64 `json:"steps"`
	Mass       num   `json:"mass"`
	Energy     num   `json:"energy"`
	Enstrophy  num   `json:"enstrophy"`
	MassAbs    num   `json:"mass_abs"`
	Courant    num   `json:"courant"`
	CourantAdv num   `json:"courant_adv"`
	HMin       num   `json:"h_min"`
	MaxSpeed   num   `json:"max_speed"`

	EnergyRateScheme         num `json:"energy_rate_scheme"`
	EnergyRateDissipation    num `json:"energy_rate_dissipation"`
	EnergyRateResidual       num `json:"energy_rate_residual"`
	EnstrophyRateScheme      num `json:"enstrophy_rate_scheme"`
	EnstrophyRateDissipation num `json:"enstrophy_rate_dissipation"`
	EnstrophyRateResidual    num `json:"enstrophy_rate_residual"`
}

func wirePoint(p session.Point) point {
	return point{num(p.T), p.Steps, num(p.Mass), num(p.Energy), num(p.Enstrophy), num(p.MassAbs), num(p.Courant), num(p.CourantAdv), num(p.HMin), num(p.MaxSpeed),
		num(p.EnergyRateScheme), num(p.EnergyRateDissipation), num(p.EnergyRateResidual), num(p.EnstrophyRateScheme), num(p.EnstrophyRateDissipation), num(p.EnstrophyRateResidual)}
}

func pointMsg(p session.Point) outMsg {
	return textOut(struct {
		Type string `json:"type"`
		point
	}{"point", wirePoint(p)})
}

func (v *view) historyMsg() outMsg {
	pts := []point{}
	for _, p := range v.s.Series() {
		pts = append(pts, wirePoint(p))
	}
	mks := append([]session.Marker{}, v.s.Markers()...)
	return textOut(struct {
		Type    string           `json:"type"`
		Points  []point          `json:"points"`
		Markers []session.Marker `json:"markers"`
	}{"history", pts, mks})
}

func (v *view) ringMsg() outMsg {
	type entry struct {
		T     num   `json:"t"`
		Steps int64 `json:"steps"`
	}
	entries, cursor := v.s.Ring()
	out := make([]entry, len(entries))
	for i, e := range entries {
		out[i] = entry{num(e.T), e.Steps}
	}
	return textOut(struct {
		Type    string  `json:"type"`
		Size    int     `json:"size"`
		Cursor  int     `json:"cursor"`
		Entries []entry `json:"entries"`
	}{"ring", v.s.RingSize(), cursor, out})
}

func (v *view) statusMsg() outMsg {
	now := time.Now()
	m := v.s.Model()
	rate := 0.0
	if v.s.State() == session.Running {
		if d := now.Sub(v.rateT); d >= rateWindow {
			v.rate = float64(m.Steps()-v.rateSteps) / d.Seconds()
			v.rateT, v.rateSteps = now, m.Steps()
		}
		rate = v.rate
	}
	return textOut(struct {
		Type        string    `json:"type"`
		State       string    `json:"state"`
		Steps       int64     `json:"steps"`
		T           num       `json:"t"`
		StepsPerSec num       `json:"steps_per_s"`
		WallS       num       `json:"wall_s"`
		Watchers    int       `json:"watchers"`
		Skipped     int64     `json:"frames_skipped"`
		BlowUp      *blowInfo `json:"blowup"`
	}{"status", string(v.s.State()), m.Steps(), num(m.Time()), num(rate), num(now.Sub(v.born).Seconds()), len(v.subs), v.skipped, v.blowInfo()})
}

// limits a client may ask for on the current grid.
type limits struct {
	DtMax    float64        `json:"dt_max"`
	NMax     map[string]int `json:"n_max"`
	NMin     int            `json:"n_min"`
	NMinKind map[string]int `json:"n_min_kind"` // per family: the level on the sphere
}

func (v *view) configMsg() outMsg {
	m := v.s.Model()
	cfg, msh := m.Config(), m.Mesh()
	nmin, nmax := v.s.GridLimits()
	type grid struct {
		Kind     string  `json:"kind"`
		N        int     `json:"n"`
		Lx       float64 `json:"lx"`
		Ly       float64 `json:"ly"`
		Cells    int     `json:"cells"`
		Edges    int     `json:"edges"`
		Vertices int     `json:"vertices"`
		Sphere   bool    `json:"sphere"`
		Optimize string  `json:"optimize"`
		// Orthogonal: the dual is orthogonal, so both Hodge stars are diag(l/d).
		Orthogonal bool `json:"orthogonal"`
	}
	return textOut(struct {
		Type       string `json:"type"`
		Scenario   string `json:"scenario"`
		Title      string `json:"title"`
		Grid       grid   `json:"grid"`
		Scheme     string `json:"scheme"`
		Hodge      string `json:"hodge"`
		Integrator string `json:"integrator"`
		Dt         num    `json:"dt"`
		Field      string `json:"field"`
		Limits     limits `json:"limits"`

		Dissipation dissipationInfo `json:"dissipation"`
	}{
		"config", v.s.Scenario(), v.s.Title(),
		grid{cfg.Grid.Kind, cfg.Grid.N, msh.Surface.Lx, msh.Surface.Ly, msh.NumCells, msh.NumEdges, msh.NumVertices, msh.Surface.Sphere, session.OptimizeName(cfg.Grid.Optimize), msh.Orthogonal},
		cfg.Scheme.Name, session.HodgeName(cfg.Scheme.Hodge), cfg.Time.Integrator, num(cfg.Time.Dt), v.field.Name,
		limits{DtMax: v.s.DtMax(), NMax: nmax, NMin: session.NMinLive("quad"), NMinKind: nmin},
		v.dissipationInfo(),
	})
}

// timelineMsg tells a client about the record and the replay.
func (v *view) timelineMsg() outMsg {
	type replay struct {
		Name    string `json:"name"`
		Next    int    `json:"next"`  // events applied
		Total   int    `json:"total"` // events in the timeline
		EndStep int64  `json:"end_step"`
		Mark    string `json:"mark"` // paused at this mark, or ""
	}
	in := v.s.Timeline()
	var rp *replay
	if in.Replaying {
		rp = &replay{Name: in.Name, Next: in.Next, Total: in.Total, EndStep: in.EndStep, Mark: in.Mark}
	}
	return textOut(struct {
		Type     string   `json:"type"`
		Events   int      `json:"events"`
		Full     bool     `json:"full"`
		Replay   *replay  `json:"replay"`
		Note     string   `json:"note"`
		Builtins []string `json:"builtins"`
	}{"timeline", in.Events, in.Full, rp, in.Note, timelines.Names()})
}
