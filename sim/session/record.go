package session

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"gyrebench/scenarios/timelines"
	"gyrebench/sim"
	"gyrebench/sim/timeline"
)

// Recording: from its install (first build, reset, load, replay) on, a
// session writes down each command that changed it, with the choice then
// in effect: scheme, Hodge star, integrator, Δt, dissipation and grid
// changes, scrubs and rewinds (scrubs in a row, before the run moves on,
// are one rewind), blow-ups, play and pause, and marks.
//
// Replay: Replay installs a timeline's scenario and plays its events as
// the session steps, each through Apply as the command it records
// (CommandOf). It pauses at each mark and at each recorded blow-up, and
// stops at the timeline's end step. A change or scrub by hand ends it;
// play, pause and step do not.

// record appends an event at the current step and time.
func (s *Session) record(e timeline.Event, res *Result) {
	if s.full {
		return
	}
	res.Effects |= TimelineChanged
	if len(s.rec.Events) >= maxEvents {
		s.full = true
		return
	}
	e.Step, e.Time = s.m.Steps(), s.m.Time()
	s.rec.Events = append(s.rec.Events, e)
	res.Event = &s.rec.Events[len(s.rec.Events)-1]
}

// recordRewind records a rewind from step from. A scrub right after a
// scrub moves that rewind's target: the live run keeps every state of its
// ring until it moves on.
func (s *Session) recordRewind(from int64, fromT float64, again bool, res *Result) {
	if s.full {
		return
	}
	res.Effects |= TimelineChanged
	if n := len(s.rec.Events); again && n > 0 && s.rec.Events[n-1].Cmd == timeline.Rewind {
		e := &s.rec.Events[n-1]
		e.ToStep, e.ToTime = s.m.Steps(), s.m.Time()
		res.Event = e
		return
	}
	if len(s.rec.Events) >= maxEvents {
		s.full = true
		return
	}
	s.rec.Events = append(s.rec.Events, timeline.Event{Step: from, Time: fromT, Cmd: timeline.Rewind, ToStep: s.m.Steps(), ToTime: s.m.Time()})
	res.Event = &s.rec.Events[len(s.rec.Events)-1]
}

// SaveTimeline returns the record as a timeline file ending at the
// current step, with the description given.
func (s *Session) SaveTimeline(description string) ([]byte, error) {
	if s.full {
		return nil, fmt.Errorf("this run's record holds more than %d events and is incomplete; reset the run to start a new one", maxEvents)
	}
	tl := s.rec
	tl.Events = append([]timeline.Event(nil), s.rec.Events...)
	tl.EndStep, tl.EndTime = s.m.Steps(), s.m.Time()
	tl.Description = description
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

// TimelineInfo is the record and the replay, for people.
type TimelineInfo struct {
	Events int  // events recorded
	Full   bool // the record overflowed and cannot be saved
	// The replay, when one is on: its name, the events applied of the
	// total, its end step and the mark it is paused at ("" none).
	Replaying   bool
	Name        string
	Next, Total int
	EndStep     int64
	Mark        string
	Note        string // how the last replay ended
}

// Timeline describes the record and the replay.
func (s *Session) Timeline() TimelineInfo {
	in := TimelineInfo{Events: len(s.rec.Events), Full: s.full, Note: s.note}
	if p := s.replay; p != nil {
		in.Replaying, in.Name, in.Next, in.Total, in.EndStep, in.Mark = true, p.name, p.next, len(p.tl.Events), p.tl.EndStep, p.mark
	}
	return in
}

func (s *Session) startReplay(c Replay, res *Result) error {
	name, src := c.Name, c.Text
	if (c.Builtin == "") == (len(c.Text) == 0) {
		return refuse("timeline", c.Builtin+c.Name, "timeline: want a built-in timeline (one of %s) or a timeline file's text", strings.Join(timelines.Names(), ", "))
	}
	if c.Builtin != "" {
		var err error
		if src, err = timelines.Source(c.Builtin); err != nil {
			return refuse("timeline", c.Builtin, "timeline = %q: not a built-in timeline; allowed: %s", c.Builtin, strings.Join(timelines.Names(), ", "))
		}
		name = c.Builtin
	}
	if name == "" {
		name = "uploaded timeline"
	}
	tl, err := timeline.Parse(src, name)
	if err != nil {
		return refuseErr("timeline", name, err)
	}
	if !s.opt.Headless {
		var grids []eventGrid
		for i, e := range tl.Events {
			if e.Cmd == timeline.SetGrid {
				grids = append(grids, eventGrid{i + 1, len(tl.Events), e.Kind, e.N})
			}
		}
		if err := checkLiveTimeline(grids, tl.Config); err != nil {
			return refuseErr("timeline", name, err)
		}
	}
	nm, err := sim.NewModel(tl.Config, s.opt.Workers)
	if err != nil {
		return refuseErr("timeline", name, err)
	}
	if err := s.fits(nm); err != nil {
		nm.Close()
		return refuseErr("timeline", name, err)
	}
	s.install(nm, "timeline "+strings.TrimSuffix(name, ".toml"), tl.Config.Title, res)
	s.replay, s.note = NewPlayer(tl), ""
	s.replay.name, s.replay.s = name, s
	res.Effects |= TimelineChanged
	return nil
}

// stopReplay ends a replay, saying why.
func (s *Session) stopReplay(note string, res *Result) {
	s.replay, s.note = nil, note
	res.Effects |= TimelineChanged
}

// replayBefore plays the events due at the current step before the
// session steps. It reports false when the session must not step now: a
// mark or a blow-up paused it, the replay ended, or an event failed.
func (s *Session) replayBefore(res *Result) bool {
	p := s.replay
	if p.mark != "" { // moving on from a mark
		p.mark = ""
		res.Effects |= TimelineChanged
	}
	for e := p.Next(s.m); e != nil; e = p.Next(s.m) {
		cmd := e.Cmd
		r, err := p.apply(s, *e)
		merge(res, r)
		if err != nil {
			msg := err.Error()
			var se *Error
			if errors.As(err, &se) {
				msg = se.Message
			}
			s.stopReplay(fmt.Sprintf("replay of %s stopped at event %d of %d: %s", p.name, p.next+1, len(p.tl.Events), msg), res)
			s.halt(res)
			return false
		}
		switch cmd {
		case timeline.BlowUp:
			return false
		case timeline.Mark:
			p.mark = e.Label
			s.halt(res)
			return false
		}
	}
	if p.Done(s.m) {
		s.stopReplay(fmt.Sprintf("replay of %s finished at step %d, t = %s", p.name, s.m.Steps(), FmtTime(s.m.Time())), res)
		s.halt(res)
		return false
	}
	p.Keep(s.m)
	return true
}

// merge adds the effects, points and markers of b to a.
func merge(a *Result, b Result) {
	a.Effects |= b.Effects
	a.Added = append(a.Added, b.Added...)
	if b.Event != nil {
		a.Event = b.Event
	}
}

// Player replays a timeline. A driver calls, before every step: Next and
// Apply while an event is due, then Done, then Keep, then steps the
// model. Before does all of that for headless runs (it is a
// batch.Schedule); a live session drives the same calls as it steps.
// Every event is applied by Session.Apply's path as the command it
// records (CommandOf).
type Player struct {
	tl      *timeline.Timeline
	next    int
	targets map[int64]bool      // steps some rewind goes back to
	snaps   map[int64]*snapshot // their states, as last left
	s       *Session            // the session the events go to
	name    string              // for people
	mark    string              // label of the mark a live replay is paused at
}

// Applied is what Apply did.
type Applied struct {
	Event timeline.Event
	// Model is the model to go on with: a new one after a grid change
	// (the one replaced is closed), else the one given.
	Model *sim.Model
	// BlowUp is the failure a blow-up event reproduced.
	BlowUp *sim.BlowUpError
	// Noop is true when the event changed nothing: a choice already in
	// effect, a mark, a play or a pause.
	Noop bool
}

// NewPlayer returns a player at the start of tl, which must be valid
// (Validate). The model it drives starts from tl.Config.
func NewPlayer(tl *timeline.Timeline) *Player {
	p := &Player{tl: tl, targets: map[int64]bool{}, snaps: map[int64]*snapshot{}, name: "timeline"}
	for _, e := range tl.Events {
		if e.Cmd == timeline.Rewind {
			p.targets[e.ToStep] = true
		}
	}
	return p
}

// Timeline returns the timeline being played.
func (p *Player) Timeline() *timeline.Timeline { return p.tl }

// Position returns the index of the next event to apply (len(Events) when
// all are applied).
func (p *Player) Position() int { return p.next }

// Next returns the next event if it is due at m's step, or nil.
func (p *Player) Next(m *sim.Model) *timeline.Event {
	if p.next < len(p.tl.Events) && p.tl.Events[p.next].Step == m.Steps() {
		return &p.tl.Events[p.next]
	}
	return nil
}

// session returns the session that drives m: the player's own, or a
// headless one made for m.
func (p *Player) session(m *sim.Model) *Session {
	if p.s == nil || p.s.m != m {
		p.s = attach(m)
		p.s.replay = p
	}
	return p.s
}

// Apply applies the next event, which must be due (Next), to m. On error
// the event stays pending.
func (p *Player) Apply(m *sim.Model) (Applied, error) {
	e := p.Next(m)
	if e == nil {
		return Applied{}, errors.New("timeline: no event is due at this step")
	}
	s := p.session(m)
	a := Applied{Event: *e, Noop: e.Noop(m.Config()) || e.Cmd == timeline.Mark}
	if _, err := p.apply(s, *e); err != nil {
		return Applied{}, err
	}
	a.Model = s.m
	if e.Cmd == timeline.BlowUp && s.blow != nil {
		a.BlowUp = s.blow.BlowUpError
	}
	return a, nil
}

// apply applies event e, the next one, to s.
func (p *Player) apply(s *Session, e timeline.Event) (Result, error) {
	var res Result
	if c := CommandOf(e); c != nil {
		var err error
		if res, err = s.apply(c, true); err != nil {
			return res, fmt.Errorf("event %d of %d (cmd = %s, step %d): %w", p.next+1, len(p.tl.Events), strconv.Quote(string(e.Cmd)), e.Step, err)
		}
	}
	p.next++
	return res, nil
}

// Done reports whether every event has been applied and m has reached the
// timeline's end step.
func (p *Player) Done(m *sim.Model) bool {
	return p.next == len(p.tl.Events) && m.Steps() >= p.tl.EndStep
}

// Keep saves m's state if a rewind will go back to its step. Call it just
// before stepping, after the step's events.
func (p *Player) Keep(m *sim.Model) {
	if !p.targets[m.Steps()] {
		return
	}
	s := p.snaps[m.Steps()]
	if s == nil {
		s = &snapshot{}
		p.snaps[m.Steps()] = s
	}
	s.x = append(s.x[:0], m.State()...)
	s.t, s.steps = m.Time(), m.Steps()
}

// Before applies every event due at m's step and reports whether the
// replay ends here; it returns the model to go on with (after a grid
// change a new one; the one it replaced is closed). Marks, plays and
// pauses pass without stopping. It implements batch.Schedule.
func (p *Player) Before(m *sim.Model) (*sim.Model, bool, error) {
	for p.Next(m) != nil {
		a, err := p.Apply(m)
		if err != nil {
			return m, false, err
		}
		m = a.Model
	}
	if p.Done(m) {
		return m, true, nil
	}
	p.Keep(m)
	return m, false, nil
}

// MaxStep returns the largest step count the replay reaches, for progress
// lines.
func (p *Player) MaxStep() int64 {
	mx := p.tl.EndStep
	for _, e := range p.tl.Events {
		mx = max(mx, e.Step)
	}
	return mx
}
