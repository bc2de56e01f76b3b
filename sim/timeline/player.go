package timeline

import (
	"errors"
	"fmt"

	"gyrebench/sim"
)

// Player replays a timeline on a model. A driver calls, before every step:
// Next and Apply while an event is due, then Done, then Keep, then steps
// the model. Before does all of that for headless runs (it is a
// batch.Schedule); the workbench drives the same calls itself so that it
// can show each event and pause at marks.
type Player struct {
	tl      *Timeline
	next    int
	targets map[int64]bool      // steps some rewind goes back to
	snaps   map[int64]*snapshot // their states, as last left
}

type snapshot struct {
	x     []float64
	t     float64
	steps int64
}

// Applied is what Apply did.
type Applied struct {
	Event Event
	// Model is the model to go on with: a new one after a grid change (the
	// caller closes the old one), else the one given.
	Model *sim.Model
	// BlowUp is the failure a blow-up event reproduced.
	BlowUp *sim.BlowUpError
	// Noop is true when the event changed nothing: a choice already in
	// effect, a mark, a play or a pause.
	Noop bool
}

// NewPlayer returns a player at the start of tl, which must be valid
// (Validate). The model it drives starts from tl.Config.
func NewPlayer(tl *Timeline) *Player {
	p := &Player{tl: tl, targets: map[int64]bool{}, snaps: map[int64]*snapshot{}}
	for _, e := range tl.Events {
		if e.Cmd == Rewind {
			p.targets[e.ToStep] = true
		}
	}
	return p
}

// Timeline returns the timeline being played.
func (p *Player) Timeline() *Timeline { return p.tl }

// Position returns the index of the next event to apply (len(Events) when
// all are applied).
func (p *Player) Position() int { return p.next }

// Next returns the next event if it is due at m's step, or nil.
func (p *Player) Next(m *sim.Model) *Event {
	if p.next < len(p.tl.Events) && p.tl.Events[p.next].Step == m.Steps() {
		return &p.tl.Events[p.next]
	}
	return nil
}

// Apply applies the next event, which must be due (Next), to m. On error
// the event stays pending and m is unchanged.
func (p *Player) Apply(m *sim.Model) (Applied, error) {
	e := p.Next(m)
	if e == nil {
		return Applied{}, errors.New("timeline: no event is due at this step")
	}
	a := Applied{Event: *e, Model: m, Noop: e.Noop(m.Config()) || e.Cmd == Mark}
	fail := func(err error) (Applied, error) {
		return Applied{}, fmt.Errorf("event %d of %d (cmd = %s, step %d): %w", p.next+1, len(p.tl.Events), quote(string(e.Cmd)), e.Step, err)
	}
	if !a.Noop {
		var err error
		switch e.Cmd {
		case SetScheme:
			err = m.SetScheme(e.Scheme)
		case SetHodge:
			err = m.SetHodge(e.Hodge)
		case SetIntegrator:
			err = m.SetIntegrator(e.Integrator)
		case SetDt:
			err = m.SetDt(e.Dt)
		case SetGrid:
			g := m.Config().Grid
			g.SetKind(e.Kind) // the relaxation is the icosahedral grid's; it does not carry over
			opt := g.Optimize
			if e.Optimize != "" {
				opt = e.Optimize
			}
			a.Model, err = m.RegridOptimize(e.Kind, e.N, opt)
		case Rewind:
			s := p.snaps[e.ToStep]
			switch {
			case e.ToStep == m.Steps():
				err = m.SetState(m.State(), m.Time(), m.Steps())
			case s == nil || len(s.x) != len(m.State()):
				err = fmt.Errorf("to_step = %d: the replay has no state of that step on this grid", e.ToStep)
			default:
				err = m.SetState(s.x, s.t, s.steps)
			}
		case BlowUp:
			serr := m.Step()
			if !errors.As(serr, &a.BlowUp) {
				if serr == nil {
					serr = fmt.Errorf("the live run blew up taking step %d, the replay did not: it has diverged from the recording", e.Step+1)
				}
				return fail(serr)
			}
		}
		if err != nil {
			return fail(err)
		}
	}
	p.next++
	return a, nil
}

// Skip passes over the next event without applying it, for a driver that
// applies it itself with the same Model calls (the workbench sends choice
// changes through its own command handlers). It does nothing when no
// event is due at m's step.
func (p *Player) Skip(m *sim.Model) {
	if p.Next(m) != nil {
		p.next++
	}
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
// replay ends here; it returns the model to go on with. When an event
// replaces the model (a grid change), Before closes the one it replaced.
// Marks, plays and pauses pass without stopping. It implements
// batch.Schedule.
func (p *Player) Before(m *sim.Model) (*sim.Model, bool, error) {
	for p.Next(m) != nil {
		a, err := p.Apply(m)
		if err != nil {
			return m, false, err
		}
		if a.Model != m {
			m.Close()
			m = a.Model
		}
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
