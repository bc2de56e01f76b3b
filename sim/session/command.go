package session

import (
	"fmt"

	"gyrebench/sim/timeline"
)

// A Command is one thing done to a session; Apply carries it out.
type Command interface{ command() }

// The commands. A zero field of a choice change keeps the value in effect
// where the comment says so.
type (
	// Play runs the session: its owner steps it (Step) until a pause.
	Play struct{}
	// Pause stops a running session.
	Pause struct{}
	// Step pauses and takes one step.
	Step struct{}
	// Reset rebuilds the model from its current choices at time zero.
	Reset struct{}
	// Load replaces the model by a built-in scenario's.
	Load struct{ Scenario string }
	// SetScheme switches the scheme on the same state.
	SetScheme struct{ Name string }
	// SetHodge switches the edge Hodge star ("consistent", "diagonal").
	SetHodge struct{ Name string }
	// SetIntegrator switches the integrator on the same state.
	SetIntegrator struct{ Name string }
	// SetDt changes the time step.
	SetDt struct{ Seconds float64 }
	// SetGrid remaps the state onto another grid of the same surface:
	// Kind "" keeps the family, N 0 the resolution, Optimize "" the
	// icosahedral relaxation (which no other family has).
	SetGrid struct {
		Kind     string
		N        int
		Optimize string
	}
	// SetDissipation changes the explicit dissipation; a nil coefficient
	// keeps its value.
	SetDissipation struct{ Viscosity, Hyperviscosity, DivergenceDamping *float64 }
	// Scrub sets the state to entry Index of the ring (0 the oldest) of a
	// paused session. What came after it is forgotten at the next step or
	// change, so that until then one may scrub back and forth.
	Scrub struct{ Index int }
	// Rewind sets the state to the one the session had when it last left
	// step ToStep: a state a replay kept, or one in the ring.
	Rewind struct{ ToStep int64 }
	// Mark records a labelled moment ("" labels it with the time).
	Mark struct{ Label string }
	// Replay installs a timeline's scenario and plays its events as the
	// session steps: a built-in by name, or a file's text.
	Replay struct {
		Builtin string
		Name    string
		Text    []byte
	}
	// StopReplay ends a replay; the session goes on from where it is.
	StopReplay struct{}
	// ExpectBlowUp takes a step that must fail: a recorded blow-up.
	ExpectBlowUp struct{}
)

func (Play) command()           {}
func (Pause) command()          {}
func (Step) command()           {}
func (Reset) command()          {}
func (Load) command()           {}
func (SetScheme) command()      {}
func (SetHodge) command()       {}
func (SetIntegrator) command()  {}
func (SetDt) command()          {}
func (SetGrid) command()        {}
func (SetDissipation) command() {}
func (Scrub) command()          {}
func (Rewind) command()         {}
func (Mark) command()           {}
func (Replay) command()         {}
func (StopReplay) command()     {}
func (ExpectBlowUp) command()   {}

// CommandOf is the command that a timeline event records; nil for play
// and pause, which are kept for the record and change nothing.
func CommandOf(e timeline.Event) Command {
	switch e.Cmd {
	case timeline.SetScheme:
		return SetScheme{e.Scheme}
	case timeline.SetHodge:
		return SetHodge{e.Hodge}
	case timeline.SetIntegrator:
		return SetIntegrator{e.Integrator}
	case timeline.SetDt:
		return SetDt{e.Dt}
	case timeline.SetGrid:
		return SetGrid{Kind: e.Kind, N: e.N, Optimize: e.Optimize}
	case timeline.SetDissipation:
		d := e.Dissipation
		return SetDissipation{&d.Viscosity, &d.Hyperviscosity, &d.DivergenceDamping}
	case timeline.Mark:
		return Mark{e.Label}
	case timeline.Rewind:
		return Rewind{e.ToStep}
	case timeline.BlowUp:
		return ExpectBlowUp{}
	}
	return nil
}

// Error refuses a command: the field, the value given, and a message
// that says what is allowed.
type Error struct {
	Field, Value, Message string
}

func (e *Error) Error() string { return e.Message }

// refuse builds an *Error.
func refuse(field, value, format string, args ...any) *Error {
	return &Error{Field: field, Value: value, Message: fmt.Sprintf(format, args...)}
}

// refuseErr wraps an engine error, whose message already names the field,
// the value and what is allowed.
func refuseErr(field, value string, err error) *Error {
	return &Error{Field: field, Value: value, Message: err.Error()}
}
