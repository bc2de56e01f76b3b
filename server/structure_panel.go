package server

import (
	"context"
	"encoding/json"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/linear"
	"gyrebench/sim/session"
	"gyrebench/sim/structure"
)

// The structure panel.
//
// The panel shows package sim/structure's report for the run's current
// grid, scheme and Hodge star: the discrete conditions behind each
// conservation law (exact sequences, symmetry and spectrum of H, its
// consistency, antisymmetry of the Coriolis operator, geostrophic
// compatibility, semi-discrete rates) and what follows from them. The
// server only carries the report: it calls structure.FromConfig, which
// builds its own copy of the mesh, and ships the JSON the package writes.
// As with the linear panel (linear_panel.go), the report is computed off
// the actor's goroutine on a thread of the lowest priority, one job at a
// time, cached per key (linear.KeyOf: grid, physics, scheme, Hodge star), and the
// result comes back as a closure on the actor. Nothing is computed until a
// client asks with the command "structure"; from then on every change of
// choice updates it, and every watcher receives it.

// structResult is one computed report, encoded.
type structResult struct {
	report  json.RawMessage
	seconds float64
	err     error
}

// structPanel is the run's structure report state, owned by the run's
// goroutine.
type structPanel struct {
	active  bool
	cache   map[linear.Key]*structResult
	running *linear.Key // the key being computed, nil when idle
	sent    []byte      // the message last broadcast
}

func (p *structPanel) init() {
	p.cache = map[linear.Key]*structResult{}
}

// structureOn is the command "structure": start the report for this run.
func (v *view) structureOn(raw json.RawMessage) error {
	return panelOn(raw, "structure", "structure report", &v.sp.active, v.structureChanged)
}

// structureJoin brings a new watcher up to date.
func (v *view) structureJoin(s *subscriber) {
	if v.sp.active {
		s.send(outMsg{typ: textMsg, data: v.structureMsg()})
	}
}

// structureChanged starts the report the current choices need, if it is
// neither cached nor being computed, and tells every watcher when the
// message changed. It is called after every change of choice.
func (v *view) structureChanged() {
	p := &v.sp
	if !p.active {
		return
	}
	cfg, key := v.jobConfig()
	if _, ok := p.cache[key]; !ok && p.running == nil {
		p.start(v, key, cfg)
	}
	if msg := v.structureMsg(); string(msg) != string(p.sent) {
		p.sent = msg
		v.broadcast(outMsg{typ: textMsg, data: msg})
	}
}

// start computes the report of cfg on its own goroutine. A job runs to its
// end even when the choices move on meanwhile: its report is cached, and
// the next one starts when it comes back.
func (p *structPanel) start(v *view, key linear.Key, cfg sim.Config) {
	p.running = &key
	v.background(v.ctx, func(context.Context) func() {
		t0 := time.Now()
		rep, err := structure.FromConfig(cfg)
		res := &structResult{seconds: time.Since(t0).Seconds(), err: err}
		if err == nil {
			res.report, res.err = json.Marshal(rep)
		}
		return func() {
			v.sp.running = nil
			remember(v.sp.cache, key, res)
			v.structureChanged()
		}
	})
}

// structureMsg is the message "structure" for the current choices: the
// report when it is known, else the state of its computation.
func (v *view) structureMsg() []byte {
	cfg := v.s.Model().Config()
	msg := struct {
		Type       string          `json:"type"`
		State      string          `json:"state"`
		Grid       string          `json:"grid"`
		Scheme     string          `json:"scheme"`
		Hodge      string          `json:"hodge"`
		Orthogonal bool            `json:"orthogonal"` // the dual is orthogonal: both Hodge stars are diag(l/d)
		Seconds    num             `json:"seconds"`
		Report     json.RawMessage `json:"report,omitempty"`
		Message    string          `json:"message"`
	}{"structure", linComputing, session.GridName(cfg.Grid.Kind, cfg.Grid.N), cfg.Scheme.Name, session.HodgeName(cfg.Scheme.Hodge),
		v.s.Model().Mesh().Orthogonal, 0, nil, "measuring the structure of this grid and scheme…"}
	switch res := v.sp.cache[linear.KeyOf(cfg)]; {
	case res == nil:
	case res.err != nil:
		msg.State, msg.Message = linFailed, "structure report failed: "+res.err.Error()
	default:
		msg.State, msg.Seconds, msg.Report, msg.Message = linReady, num(res.seconds), res.report, ""
	}
	return mustJSON(msg)
}
