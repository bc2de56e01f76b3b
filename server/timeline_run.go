package server

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"strings"

	"gyrebench/scenarios/timelines"
	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/timeline"
)

// Recorded timelines in a run (package sim/timeline).
//
// Recording: every run writes down, from its install (first build, reset,
// load, replay) on, each command that changed it: scheme, integrator, Δt
// and grid changes, scrubs back (rewinds; consecutive scrubs before the
// run moves on are one rewind), blow-ups, play and pause, and marks. The
// events are worked out in applyRecorded from the run before and after
// the command, so the record is exactly what took effect. A reset or load
// starts a new record, from the scenario it installs.
//
// Replay: the command "replay" installs a timeline's scenario and plays its
// events as the run steps. Choice changes go through the same command
// handlers as a user's (set-scheme, set-grid, ...), rewinds and blow-ups
// through timeline.Player, so every sim.Model call is the live run's. The
// replay pauses at each mark and at each recorded blow-up, and stops at
// the timeline's end step. A user's own change or scrub ends the replay;
// play, pause, step and the field menu do not.

// maxEvents bounds a run's record; past it the record is marked full and
// cannot be saved (a partial timeline would not reproduce the run).
const maxEvents = 20000

// timelineState is a run's record and replay.
type timelineState struct {
	rec     timeline.Timeline
	full    bool
	player  *timeline.Player
	name    string // the timeline being (or last) replayed
	driving bool   // the replay is applying a command itself
	mark    string // label of the mark the replay is paused at
	note    string // how the last replay ended, for people
}

// startTimeline begins a new record from the model just installed and
// ends any replay (install calls it).
func (r *Run) startTimeline() {
	t := &r.tl
	t.rec = timeline.Timeline{Config: r.m.Config()}
	t.full, t.player, t.mark, t.driving = false, nil, "", false
	r.emitTimeline()
}

// record appends an event at the model's current step and time.
func (r *Run) record(e timeline.Event) {
	t := &r.tl
	if t.full {
		return
	}
	if len(t.rec.Events) >= maxEvents {
		t.full = true
		r.emitTimeline()
		return
	}
	e.Step, e.Time = r.m.Steps(), r.m.Time()
	t.rec.Events = append(t.rec.Events, e)
	r.emitTimeline()
}

// recordBlowUp notes that the step from the current step failed
// (blownUp calls it).
func (r *Run) recordBlowUp() { r.record(timeline.Event{Cmd: timeline.BlowUp}) }

// before is what applyRecorded compares against.
type before struct {
	cfg     sim.Config
	steps   int64
	t       float64
	state   string
	rewound bool
}

// applyRecorded applies a client command and records what it changed.
func (r *Run) applyRecorded(m clientMsg) error {
	b := before{r.m.Config(), r.m.Steps(), r.m.Time(), r.state, r.rewound}
	if err := r.apply(m); err != nil {
		return err
	}
	cfg := r.m.Config()
	changed := true
	switch m.Cmd {
	case "set-scheme":
		changed = cfg.Scheme.Name != b.cfg.Scheme.Name
		if changed {
			r.record(timeline.Event{Cmd: timeline.SetScheme, Scheme: cfg.Scheme.Name})
		}
	case "set-hodge":
		changed = hodgeName(cfg.Scheme.Hodge) != hodgeName(b.cfg.Scheme.Hodge)
		if changed {
			r.record(timeline.Event{Cmd: timeline.SetHodge, Hodge: hodgeName(cfg.Scheme.Hodge)})
		}
	case "set-integrator":
		changed = cfg.Time.Integrator != b.cfg.Time.Integrator
		if changed {
			r.record(timeline.Event{Cmd: timeline.SetIntegrator, Integrator: cfg.Time.Integrator})
		}
	case "set-dt":
		changed = cfg.Time.Dt != b.cfg.Time.Dt
		if changed {
			r.record(timeline.Event{Cmd: timeline.SetDt, Dt: cfg.Time.Dt})
		}
	case "set-grid":
		changed = cfg.Grid.Kind != b.cfg.Grid.Kind || cfg.Grid.N != b.cfg.Grid.N ||
			optimizeName(cfg.Grid.Optimize) != optimizeName(b.cfg.Grid.Optimize)
		if changed {
			e := timeline.Event{Cmd: timeline.SetGrid, Kind: cfg.Grid.Kind, N: cfg.Grid.N}
			if mesh.Kind(cfg.Grid.Kind) == mesh.Icosahedral {
				e.Optimize = optimizeName(cfg.Grid.Optimize)
			}
			r.record(e)
		}
	case "scrub":
		r.recordRewind(b)
	case "play", "pause":
		if now := r.state == StateRunning; now != (b.state == StateRunning) {
			c := timeline.Pause
			if now {
				c = timeline.Play
			}
			r.record(timeline.Event{Cmd: c})
		}
		return nil
	default:
		return nil
	}
	if changed && !r.tl.driving && r.tl.player != nil {
		r.stopReplay(fmt.Sprintf("replay of %s stopped at step %d: the run was changed by hand (%s); the record goes on", r.tl.name, r.m.Steps(), m.Cmd))
	}
	return nil
}

// recordRewind records a scrub. Scrubs in a row, before anything runs,
// are one rewind from where the first began: the live run keeps every
// state of its ring until it moves on.
func (r *Run) recordRewind(b before) {
	t := &r.tl
	if n := len(t.rec.Events); b.rewound && n > 0 && t.rec.Events[n-1].Cmd == timeline.Rewind && !t.full {
		e := &t.rec.Events[n-1]
		e.ToStep, e.ToTime = r.m.Steps(), r.m.Time()
		r.emitTimeline()
		return
	}
	if t.full {
		return
	}
	e := timeline.Event{Cmd: timeline.Rewind, ToStep: r.m.Steps(), ToTime: r.m.Time()}
	e.Step, e.Time = b.steps, b.t
	if len(t.rec.Events) >= maxEvents {
		t.full = true
	} else {
		t.rec.Events = append(t.rec.Events, e)
	}
	r.emitTimeline()
}

// saveTimeline returns the record as a timeline file ending at the current
// step.
func (r *Run) saveTimeline() ([]byte, error) {
	t := &r.tl
	if t.full {
		return nil, fmt.Errorf("this run's record holds more than %d events and is incomplete; reset the run to start a new one", maxEvents)
	}
	tl := t.rec
	tl.Events = append([]timeline.Event(nil), t.rec.Events...)
	tl.EndStep, tl.EndTime = r.m.Steps(), r.m.Time()
	tl.Description = "recorded in the workbench: run " + r.id + " (" + r.scenario + ")"
	for _, e := range tl.Events {
		if e.Cmd == timeline.SetGrid || e.Cmd == timeline.Rewind {
			// A live run writes no snapshots; a replay could not either.
			tl.Config.Output.Snapshots = false
		}
	}
	if err := tl.Validate(); err != nil {
		return nil, fmt.Errorf("the record does not make a valid timeline (a bug; please report it): %w", err)
	}
	return tl.Format(), nil
}

// replayValue is the value of the command "replay": a built-in timeline
// by name, or a timeline file's text.
type replayValue struct {
	Builtin string `json:"builtin"`
	Name    string `json:"name"`
	TOML    string `json:"toml"`
}

// applyTimeline carries out the commands of this file: mark, replay and
// stop-replay.
func (r *Run) applyTimeline(m clientMsg) error {
	switch m.Cmd {
	case "mark":
		label, ce := parseString(m.Value, "label")
		if ce != nil {
			return ce
		}
		label = strings.TrimSpace(label)
		if label == "" {
			label = "mark at t = " + fmtTime(r.m.Time())
		}
		if err := timeline.CheckLabel(label); err != nil {
			return refuse("label", shown(m.Value), "label: %v", err)
		}
		r.record(timeline.Event{Cmd: timeline.Mark, Label: label})
		r.addMarker("mark", label)
	case "replay":
		return r.startReplay(m.Value)
	case "stop-replay":
		if r.tl.player == nil {
			return refuse("replay", "", "stop-replay: no timeline is being replayed")
		}
		r.stopReplay(fmt.Sprintf("replay of %s stopped at step %d; the run goes on from here", r.tl.name, r.m.Steps()))
	}
	return nil
}

func (r *Run) startReplay(raw json.RawMessage) error {
	var v replayValue
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&v); err != nil || (v.Builtin == "") == (v.TOML == "") {
		return refuse("timeline", shown(raw), "timeline = %s: want {\"builtin\": one of %s} or {\"name\": file name, \"toml\": the file's text}", shown(raw), strings.Join(timelines.Names(), ", "))
	}
	name, src := v.Name, []byte(v.TOML)
	if v.Builtin != "" {
		var err error
		if src, err = timelines.Source(v.Builtin); err != nil {
			return refuse("timeline", v.Builtin, "timeline = %q: not a built-in timeline; allowed: %s", v.Builtin, strings.Join(timelines.Names(), ", "))
		}
		name = v.Builtin
	}
	if name == "" {
		name = "uploaded timeline"
	}
	tl, err := timeline.Parse(src, name)
	if err != nil {
		return refuseErr("timeline", name, err)
	}
	if err := liveLimits(tl); err != nil {
		return refuseErr("timeline", name, err)
	}
	nm, err := sim.NewModel(tl.Config, r.workers)
	if err != nil {
		return refuseErr("timeline", name, err)
	}
	r.install(nm, "timeline "+strings.TrimSuffix(name, ".toml"), tl.Config.Title)
	r.tl.player, r.tl.name, r.tl.note = timeline.NewPlayer(tl), name, ""
	r.afterInstall()
	r.emitTimeline()
	return nil
}

// liveLimits checks what a live run allows beyond the engine: the grid
// sizes and the families the workbench switches between.
func liveLimits(tl *timeline.Timeline) error {
	cells, err := tl.Config.MeshSpec().Cells()
	if err != nil {
		return err
	}
	if cells > MaxLiveCells {
		return fmt.Errorf("grid: %d cells, more than a live run allows (%d); replay it headless with 'gyrebench run'", cells, MaxLiveCells)
	}
	for i, e := range tl.Events {
		if e.Cmd != timeline.SetGrid {
			continue
		}
		if !contains(gridKinds, e.Kind) {
			return fmt.Errorf("event %d of %d: kind = %q: not a grid the workbench can switch to; allowed: %s", i+1, len(tl.Events), e.Kind, strings.Join(gridKinds, ", "))
		}
		cfg := tl.Config
		cfg.Grid.SetKind(e.Kind)
		cfg.Grid.N = e.N
		if c, err := cfg.MeshSpec().Cells(); err == nil && c > MaxLiveCells {
			return fmt.Errorf("event %d of %d: grid %s n = %d has %d cells, more than a live run allows (%d)", i+1, len(tl.Events), e.Kind, e.N, c, MaxLiveCells)
		}
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// stopReplay ends a replay, saying why.
func (r *Run) stopReplay(note string) {
	r.tl.player, r.tl.mark, r.tl.note = nil, "", note
	r.emitTimeline()
}

// replayBeforeStep plays the events due at the current step before the
// run steps (step calls it while a replay is on). It reports false when
// the run must not step now: a mark or a blow-up paused it, the replay
// ended, or an event failed.
func (r *Run) replayBeforeStep() bool {
	p := r.tl.player
	if r.tl.mark != "" { // moving on from a mark
		r.tl.mark = ""
		r.emitTimeline()
	}
	for e := p.Next(r.m); e != nil; e = p.Next(r.m) {
		switch e.Cmd {
		case timeline.SetScheme, timeline.SetHodge, timeline.SetIntegrator, timeline.SetDt, timeline.SetGrid:
			// Through the user's own command path: the same validation,
			// the same Model calls, the same markers and messages.
			msg := clientMsg{Cmd: string(e.Cmd), Value: eventValue(*e)}
			r.tl.driving = true
			err := r.applyRecorded(msg)
			r.tl.driving = false
			if err != nil {
				return r.replayFailed(p, err)
			}
			p.Skip(r.m)
		case timeline.Rewind:
			from, fromT := r.m.Steps(), r.m.Time()
			if _, err := p.Apply(r.m); err != nil {
				return r.replayFailed(p, err)
			}
			r.replayRewound(from, fromT)
		case timeline.BlowUp:
			a, err := p.Apply(r.m)
			if err != nil {
				return r.replayFailed(p, err)
			}
			r.blownUp(a.BlowUp, a.BlowUp)
			r.emitTimeline()
			return false
		case timeline.Mark:
			label := e.Label
			p.Skip(r.m)
			r.record(timeline.Event{Cmd: timeline.Mark, Label: label})
			r.addMarker("mark", label)
			r.tl.mark = label
			r.pause()
			r.emitTimeline()
			return false
		default: // play, pause: recorded for the record, nothing to do
			p.Skip(r.m)
		}
	}
	if p.Done(r.m) {
		r.stopReplay(fmt.Sprintf("replay of %s finished at step %d, t = %s", r.tl.name, r.m.Steps(), fmtTime(r.m.Time())))
		r.pause()
		return false
	}
	p.Keep(r.m)
	return true
}

func (r *Run) replayFailed(p *timeline.Player, err error) bool {
	var ce *cmdError
	msg := err.Error()
	if errors.As(err, &ce) {
		msg = ce.msg
	}
	r.stopReplay(fmt.Sprintf("replay of %s stopped at event %d of %d: %s", r.tl.name, p.Position()+1, len(p.Timeline().Events), msg))
	r.pause()
	return false
}

// eventValue is the command value that makes a choice change.
func eventValue(e timeline.Event) json.RawMessage {
	switch e.Cmd {
	case timeline.SetScheme:
		return mustJSON(e.Scheme)
	case timeline.SetHodge:
		return mustJSON(e.Hodge)
	case timeline.SetIntegrator:
		return mustJSON(e.Integrator)
	case timeline.SetDt:
		return mustJSON(e.Dt)
	}
	return mustJSON(gridJSON{Kind: e.Kind, N: e.N, Optimize: e.Optimize})
}

type gridJSON struct {
	Kind     string `json:"kind"`
	N        int    `json:"n"`
	Optimize string `json:"optimize,omitempty"`
}

// replayRewound brings the run's history in line after the replay set the
// state back: the ring, the series and the markers forget what came after
// it, as after a scrub.
func (r *Run) replayRewound(from int64, fromT float64) {
	steps := r.m.Steps()
	r.ring.dropAfterStep(steps)
	r.ring.push(r.m)
	pts := r.series[:0]
	for _, p := range r.series {
		if p.Steps <= steps {
			pts = append(pts, p)
		}
	}
	r.series = pts
	mks := r.markers[:0]
	for _, m := range r.markers {
		if m.Steps <= steps {
			mks = append(mks, m)
		}
	}
	r.markers = append(mks, marker{T: num(r.m.Time()), Steps: steps, Kind: "rewind", Label: "rewound to t = " + fmtTime(r.m.Time())})
	r.addPoint(r.pointNow())
	e := timeline.Event{Cmd: timeline.Rewind, ToStep: steps, ToTime: r.m.Time()}
	if !r.tl.full {
		e.Step, e.Time = from, fromT
		r.tl.rec.Events = append(r.tl.rec.Events, e)
	}
	r.emitHistory()
	r.emitRing()
	r.emitFrame()
	r.emitStatus()
	r.emitTimeline()
	r.publishInfo()
}

// dropAfterStep forgets the entries newer than step.
func (g *ring) dropAfterStep(step int64) {
	for g.n > 0 && g.at(g.n-1).steps > step {
		g.n--
	}
	g.cursor = -1
}

// markerLen bounds a mark's label in the series plot; the whole label is
// in the timeline message (and the page's banner).
const markerLen = 32

// addMarker adds a labelled marker at the current step and tells every
// watcher.
func (r *Run) addMarker(kind, label string) {
	if rs := []rune(label); len(rs) > markerLen {
		label = string(rs[:markerLen-1]) + "…"
	}
	mk := marker{T: num(r.m.Time()), Steps: r.m.Steps(), Kind: kind, Label: label}
	r.markers = append(r.markers, mk)
	r.broadcast(outMsg{typ: textMsg, data: mustJSON(struct {
		Type string `json:"type"`
		marker
	}{"marker", mk})})
}

// timelineMsg tells a client about the record and the replay.
func (r *Run) timelineMsg() outMsg {
	type replay struct {
		Name    string `json:"name"`
		Next    int    `json:"next"`  // events applied
		Total   int    `json:"total"` // events in the timeline
		EndStep int64  `json:"end_step"`
		Mark    string `json:"mark"` // paused at this mark, or ""
	}
	var rp *replay
	if p := r.tl.player; p != nil {
		tl := p.Timeline()
		rp = &replay{Name: r.tl.name, Next: p.Position(), Total: len(tl.Events), EndStep: tl.EndStep, Mark: r.tl.mark}
	}
	return outMsg{typ: textMsg, data: mustJSON(struct {
		Type     string   `json:"type"`
		Events   int      `json:"events"`
		Full     bool     `json:"full"`
		Replay   *replay  `json:"replay"`
		Note     string   `json:"note"`
		Builtins []string `json:"builtins"`
	}{"timeline", len(r.tl.rec.Events), r.tl.full, rp, r.tl.note, timelines.Names()})}
}

func (r *Run) emitTimeline() { r.broadcast(r.timelineMsg()) }
