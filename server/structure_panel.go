package server

import (
	"context"
	"encoding/json"
	"strings"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/scheme"
	"gyrebench/sim/structure"
)

// The structure panel and the Hodge-star choice.
//
// The panel shows package sim/structure's report for the run's current
// grid, scheme and Hodge star: the discrete conditions behind each
// conservation law (exact sequences, symmetry and spectrum of H, its
// consistency, antisymmetry of the Coriolis operator, geostrophic
// compatibility, semi-discrete rates) and what follows from them. The
// server only carries the report: it calls structure.FromConfig, which
// builds its own copy of the mesh, and ships the JSON the package writes.
// As with the linear panel (linear_panel.go), the report is computed off
// the run's goroutine on a thread of the lowest priority, one job at a
// time, cached per key (keyOf: grid, physics, scheme, Hodge star), and the
// result comes back as a cmdFunc command. Nothing is computed until a
// client asks with the command "structure"; from then on every change of
// choice updates it, and every watcher receives it.

// Report states in the messages (the linear panel's words).
const (
	structComputing = linComputing
	structReady     = linReady
	structFailed    = linFailed
)

// structResult is one computed report, encoded.
type structResult struct {
	report  json.RawMessage
	seconds float64
	err     error
}

// structPanel is the run's structure report state, owned by the run's
// goroutine.
type structPanel struct {
	ctx     context.Context
	active  bool
	cache   map[linKey]*structResult
	running *linKey // the key being computed, nil when idle
	sent    []byte  // the message last broadcast
}

func (p *structPanel) init(ctx context.Context) {
	p.ctx = ctx
	p.cache = map[linKey]*structResult{}
}

// hodgeName is scheme.hodge with the default spelled out.
func hodgeName(h string) string {
	if h == "" {
		return scheme.HodgeConsistent
	}
	return h
}

// setHodge is the command "set-hodge": the edge Hodge star, "consistent"
// or "diagonal", switched on the same state (sim.Model.SetHodge).
func (r *Run) setHodge(raw json.RawMessage) error {
	name, ce := parseString(raw, "scheme.hodge")
	if ce != nil {
		return ce
	}
	cfg := r.m.Config()
	if name == hodgeName(cfg.Scheme.Hodge) {
		return nil
	}
	if !contains(scheme.HodgeNames, name) {
		return refuse("scheme.hodge", name, "scheme.hodge = %q: unknown Hodge star; allowed: %s (the two are the same where the dual is orthogonal)",
			name, strings.Join(scheme.HodgeNames, ", "))
	}
	return r.change("hodge", "Hodge star: "+name, func() error {
		if err := r.m.SetHodge(name); err != nil {
			return refuseErr("scheme.hodge", name, err)
		}
		return nil
	})
}

// structureOn is the command "structure": start the report for this run.
func (r *Run) structureOn(raw json.RawMessage) error {
	if len(raw) > 0 && string(raw) != "true" && string(raw) != "null" {
		return refuse("structure", shown(raw), "structure = %s: the command takes no value (or true); it turns the run's structure report on", shown(raw))
	}
	if !r.sp.active {
		r.sp.active = true
		r.structureChanged()
	}
	return nil
}

// structureJoin brings a new watcher up to date.
func (r *Run) structureJoin(s *subscriber) {
	if r.sp.active {
		s.send(outMsg{typ: textMsg, data: r.structureMsg()})
	}
}

// structureChanged starts the report the current choices need, if it is
// neither cached nor being computed, and tells every watcher when the
// message changed. It is called after every change of choice.
func (r *Run) structureChanged() {
	p := &r.sp
	if !p.active {
		return
	}
	cfg := r.m.Config()
	cfg.Initial.Params = nil // the job goroutine gets no shared map
	key := keyOf(cfg)
	if _, ok := p.cache[key]; !ok && p.running == nil {
		p.start(r, key, cfg)
	}
	if msg := r.structureMsg(); string(msg) != string(p.sent) {
		p.sent = msg
		r.broadcast(outMsg{typ: textMsg, data: msg})
	}
}

// start computes the report of cfg on its own goroutine. A job runs to its
// end even when the choices move on meanwhile: its report is cached, and
// the next one starts when it comes back.
func (p *structPanel) start(r *Run, key linKey, cfg sim.Config) {
	p.running = &key
	go func() {
		lowPriority() // the run and its watchers come first
		t0 := time.Now()
		rep, err := structure.FromConfig(cfg)
		res := &structResult{seconds: time.Since(t0).Seconds(), err: err}
		if err == nil {
			res.report, res.err = json.Marshal(rep)
		}
		done := func(r *Run) {
			r.sp.running = nil
			if len(r.sp.cache) >= maxLinCache {
				clear(r.sp.cache)
			}
			r.sp.cache[key] = res
			r.structureChanged()
		}
		r.submit(p.ctx, command{kind: cmdFunc, fn: done})
	}()
}

// structureMsg is the message "structure" for the current choices: the
// report when it is known, else the state of its computation.
func (r *Run) structureMsg() []byte {
	cfg := r.m.Config()
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
	}{"structure", structComputing, gridName(cfg.Grid.Kind, cfg.Grid.N), cfg.Scheme.Name, hodgeName(cfg.Scheme.Hodge),
		r.m.Mesh().Orthogonal, 0, nil, "measuring the structure of this grid and scheme…"}
	switch res := r.sp.cache[keyOf(cfg)]; {
	case res == nil:
	case res.err != nil:
		msg.State, msg.Message = structFailed, "structure report failed: "+res.err.Error()
	default:
		msg.State, msg.Seconds, msg.Report, msg.Message = structReady, num(res.seconds), res.report, ""
	}
	return mustJSON(msg)
}
