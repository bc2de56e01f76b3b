package server

import (
	"context"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/session"
	"gyrebench/web"
)

// Run states, shown verbatim in the browser's run-state.
const (
	StateRunning = string(session.Running)
	StatePaused  = string(session.Paused)
	StateBlownUp = string(session.BlownUp)
)

// Limits of the workbench.
const (
	// DefaultRingSize is the ring buffer length when Options.RingSize ≤ 0.
	DefaultRingSize = session.DefaultRingSize
	// MaxRingSize bounds Options.RingSize: each entry holds a whole state.
	MaxRingSize = session.MaxRingSize
	// DefaultMaxFPS is the most field frames per second a run sends when
	// Options.MaxFPS is 0. Past about 30 the eye gains little, and on a
	// two-core machine every frame the browser draws is taken from the
	// simulation (the browser benchmarks in tests/ measure it).
	DefaultMaxFPS = 32
	// MaxFPSLimit bounds Options.MaxFPS.
	MaxFPSLimit = 120
)

// RunInfo is a read-only snapshot of a run, for pages and listings
// (web.RunInfo). The run publishes a new one after every change.
type RunInfo = web.RunInfo

// runLimits are the server's settings every session is built with.
type runLimits struct {
	session        session.Options
	frameEvery     time.Duration // least time between two field frames
	analysisNormal bool          // Options.AnalysisAtNormalPriority
}

// Run is one session and its watchers, owned by its actor's goroutine.
type Run struct {
	*actor
	id string
	v  *view
}

// newRun builds the session and starts the run's actor, which lives
// until ctx ends.
func newRun(ctx context.Context, id, scenario string, cfg sim.Config, lim runLimits) (*Run, error) {
	s, err := session.New(cfg, scenario, lim.session)
	if err != nil {
		return nil, err
	}
	r := &Run{actor: newActor(), id: id}
	r.v = newView(ctx, id, s, helloMsg(id), lim, r.post(ctx))
	go r.loop(ctx, r)
	return r, nil
}

// post returns the view's way back to the actor for background results.
func (a *actor) post(ctx context.Context) func(func()) bool {
	return func(fn func()) bool { return a.submit(ctx, fn) }
}

// ID returns the run's identifier (its URL path element).
func (r *Run) ID() string { return r.id }

// Info returns the latest snapshot of the run.
func (r *Run) Info() RunInfo { return *r.v.info.Load() }

func (r *Run) running() bool { return r.v.s.State() == session.Running }
func (r *Run) advance()      { r.v.advance() }
func (r *Run) close()        { r.v.s.Close() }
func (r *Run) join(c *client) {
	r.v.join(c.own())
}

func (r *Run) leave(c *client) {
	r.v.leave(c.own())
	if len(r.v.subs) == 0 {
		r.v.halt() // nobody is watching: stop rather than hold a core for no one
	}
}

func (r *Run) command(c *client, m wireMsg) {
	warn, err := r.v.command(m)
	reply(c.own(), m, warn, err)
}

// choices returns the run's current config and scenario name, read on its
// actor; ok is false when the run stopped or ctx ended first.
func (r *Run) choices(ctx context.Context) (cfg sim.Config, scenario string, ok bool) {
	ok = r.await(ctx, func() { cfg, scenario = r.v.s.Model().Config(), r.v.s.Scenario() })
	return cfg, scenario, ok
}
