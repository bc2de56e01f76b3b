package server

import (
	"context"
	"encoding/json"
	"math"
	"strconv"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/linear"
	"gyrebench/sim/session"
)

// The linear panel: what the linearised scheme predicts for the run's
// current choices, computed by package sim/linear from the very operator
// the run steps.
//
//   - stability: the largest stable Δt of each integrator, bound / max|λ|
//     (linear.StableDt), on the run's own grid and physics, about rest at
//     depth physics.depth, with the guide for the current state's depth
//     and speed (linear.NewGuide). The UI warns when Δt exceeds the guide,
//     and the server adds a warning message to an accepted set-dt or
//     set-integrator past it; the hard limit stays session.MaxCourant.
//   - dispersion: every normal mode of the dense analysis (linear.Analyse)
//     of the copy of the run's grid that linear.DispersionCopy picks,
//     drawn as linear.NewDiagram lays it out.
//
// Both are computed off the actor's goroutine, one job at a time on a
// thread of the lowest priority (lowPriority), and the result comes back as
// a closure on the actor, so the simulation never waits for them and loses
// little speed to them. Results are cached in the run per spectrum key (grid, physics,
// scheme; Δt only for apvm, whose upwinding scales with it); the limit of
// each integrator follows from the cached max|λ|. Nothing is computed until
// a client asks with the command "linear"; from then on every change of
// choice updates both, and every watcher receives them.

// maxLinCache bounds each cache; past it the cache starts afresh.
const maxLinCache = 32

// remember caches res under key, starting afresh past maxLinCache.
func remember[R any](cache map[linear.Key]R, key linear.Key, res R) {
	if len(cache) >= maxLinCache {
		clear(cache)
	}
	cache[key] = res
}

// panelOn is a panel's command: the value is empty or true, and it turns
// the panel on for every watcher.
func panelOn(raw json.RawMessage, name, what string, active *bool, changed func()) error {
	if len(raw) > 0 && string(raw) != "true" && string(raw) != "null" {
		return refuse(name, shown(raw), "%s = %s: the command takes no value (or true); it turns the run's %s on", name, shown(raw), what)
	}
	if !*active {
		*active = true
		changed()
	}
	return nil
}

// background runs work on its own goroutine at the lowest priority (the
// run and its watchers come first; Options.AnalysisAtNormalPriority keeps
// it at normal priority) and applies the closure it returns on the
// actor's goroutine, unless ctx ended first.
func (v *view) background(ctx context.Context, work func(context.Context) func()) {
	go func() {
		if !v.analysisNormal {
			lowPriority()
		}
		if apply := work(ctx); ctx.Err() == nil {
			v.post(apply)
		}
	}()
}

// jobConfig is the current config for a background job, which gets no
// shared map, and its key.
func (v *view) jobConfig() (sim.Config, linear.Key) {
	cfg := v.s.Model().Config()
	cfg.Initial.Params = nil
	return cfg, linear.KeyOf(cfg)
}

// Job states in the messages.
const (
	linComputing = "computing"
	linReady     = "ready"
	linFailed    = "failed"
)

type stableResult struct {
	rho     float64            // max|λ|, s⁻¹
	limits  map[string]float64 // linear's largest stable Δt per integrator, real parts included
	seconds float64
	err     error
}

type dispResult struct {
	msg []byte // the encoded dispersion message
	err error
}

type linJob struct {
	key       linear.Key
	disp      bool // the dispersion job, else the stability job
	cancel    context.CancelFunc
	cancelled bool // set and read on the actor's goroutine
}

// linPanel is a view's linear analysis state, owned by its actor's goroutine.
type linPanel struct {
	active bool
	stable map[linear.Key]*stableResult
	disp   map[linear.Key]*dispResult
	job    *linJob
	// sentDisp is the dispersion message last broadcast, so that it is
	// sent again only when it changes.
	sentDisp []byte
}

func (p *linPanel) init() {
	p.stable = map[linear.Key]*stableResult{}
	p.disp = map[linear.Key]*dispResult{}
}

// linearOn is the command "linear": start the analysis for this run.
func (v *view) linearOn(raw json.RawMessage) error {
	return panelOn(raw, "linear", "linear analysis", &v.lin.active, v.linearChanged)
}

// linearJoin brings a new watcher up to date.
func (v *view) linearJoin(s *subscriber) {
	if !v.lin.active {
		return
	}
	s.send(v.stabilityMsg())
	if d := v.dispersionMsg(); d != nil {
		s.send(outMsg{typ: textMsg, data: d})
	}
}

// linearChanged starts what the current choices still need and tells
// every watcher. It is called after every change of choice.
func (v *view) linearChanged() {
	p := &v.lin
	if !p.active {
		return
	}
	cfg, key := v.jobConfig()
	_, haveStable := p.stable[key]
	_, haveDisp := p.disp[key]
	if j := p.job; j != nil && (j.key != key || (j.disp && !haveStable)) {
		j.cancel() // a stale job, or the dispersion ahead of the more urgent limit
		j.cancelled = true
		p.job = nil
	}
	if p.job == nil {
		switch {
		case !haveStable:
			p.start(v, key, false, func(ctx context.Context) func(*view) { return stableJob(ctx, key, cfg) })
		case !haveDisp:
			p.start(v, key, true, func(ctx context.Context) func(*view) { return dispersionJob(ctx, key, cfg) })
		}
	}
	v.broadcast(v.stabilityMsg())
	if d := v.dispersionMsg(); d != nil && string(d) != string(p.sentDisp) {
		p.sentDisp = d
		v.broadcast(outMsg{typ: textMsg, data: d})
	}
}

// start runs work in the background; the closure it returns is applied
// on the actor's goroutine, unless the job was cancelled first.
func (p *linPanel) start(v *view, key linear.Key, disp bool, work func(context.Context) func(*view)) {
	ctx, cancel := context.WithCancel(v.ctx)
	j := &linJob{key: key, disp: disp, cancel: cancel}
	p.job = j
	v.background(ctx, func(ctx context.Context) func() {
		apply := work(ctx)
		return func() {
			cancel()
			if v.lin.job == j {
				v.lin.job = nil
			}
			if !j.cancelled { // while waiting to be applied
				apply(v)
				v.linearChanged()
			}
		}
	})
}

// stableJob computes max|λ| on the run's grid (linear.MaxFrequency, as
// linear.StableDt does).
func stableJob(ctx context.Context, key linear.Key, cfg sim.Config) func(*view) {
	t0 := time.Now()
	an, err := linear.Analyse(ctx, cfg, linear.Options{ExtremeOnly: true})
	res := &stableResult{seconds: time.Since(t0).Seconds(), err: err}
	if err == nil {
		res.rho, res.limits = an.SpectralRadius, map[string]float64{}
		for _, l := range an.Limits {
			res.limits[l.Integrator] = l.MaxDt
		}
	}
	return func(v *view) { remember(v.lin.stable, key, res) }
}

// predict returns the prediction for the current choices; ok is false
// while it is being computed or when it failed (res says which).
func (v *view) predict() (pred linear.Guide, res *stableResult, ok bool) {
	m := v.s.Model()
	cfg := m.Config()
	res = v.lin.stable[linear.KeyOf(cfg)]
	if res == nil || res.err != nil || !(res.rho > 0) {
		return pred, res, false
	}
	inv := m.Invariants()
	return linear.NewGuide(cfg, res.rho, res.limits, inv.HMax, inv.MaxSpeed), res, true
}

// stabilityMsg is the message "stability": the predicted limits for the
// current choices, the state's correction and the live Courant number.
func (v *view) stabilityMsg() outMsg {
	cfg := v.s.Model().Config()
	pred, res, ok := v.predict()
	state, message := linComputing, "computing the largest stable Δt of this grid and scheme…"
	var seconds float64
	switch {
	case ok:
		state, seconds = linReady, res.seconds
		message = ""
	case res != nil && res.err != nil:
		state, message = linFailed, "linear analysis failed: "+res.err.Error()
	case res != nil:
		state, message = linFailed, "linear analysis found no non-zero frequency on this grid"
	}
	limits := map[string]num{}
	for k, l := range pred.Limits {
		limits[k] = num(l)
	}
	rho := 0.0
	if ok {
		rho = res.rho
	}
	courant := v.s.Model().Invariants().CourantGravity
	atLimit := math.NaN()
	if ok {
		atLimit = pred.CourantAtLimit(courant, cfg.Time.Dt)
	}
	return outMsg{typ: textMsg, data: mustJSON(struct {
		Type           string         `json:"type"`
		State          string         `json:"state"`
		Grid           string         `json:"grid"`
		Scheme         string         `json:"scheme"`
		Integrator     string         `json:"integrator"`
		Dt             num            `json:"dt"`
		DtStable       num            `json:"dt_stable"` // 0: no Δt is stable (euler)
		DtGuide        num            `json:"dt_guide"`
		GuideScale     num            `json:"guide_scale"`
		Limits         map[string]num `json:"limits"`
		MaxFrequency   num            `json:"max_frequency"`
		Depth          num            `json:"depth"`
		WaveSpeed      num            `json:"wave_speed"`
		Courant        num            `json:"courant"`
		CourantAtLimit num            `json:"courant_at_limit"`
		Seconds        num            `json:"seconds"`
		Message        string         `json:"message"`
	}{
		"stability", state, session.GridName(cfg.Grid.Kind, cfg.Grid.N), cfg.Scheme.Name, cfg.Time.Integrator,
		num(cfg.Time.Dt), num(pred.DtStable), num(pred.Guide), num(pred.Scale), limits, num(rho),
		num(cfg.Physics.Depth), num(pred.WaveSpeed), num(courant), num(atLimit), num(seconds), message,
	})}
}

// warning returns a warning for an accepted command that leaves Δt past
// the predicted limit, or nil.
func (v *view) warning(m wireMsg) *outMsg {
	if m.Cmd != "set-dt" && m.Cmd != "set-integrator" {
		return nil
	}
	pred, _, ok := v.predict()
	if !ok {
		return nil
	}
	cfg := v.s.Model().Config()
	text := pred.Warning(cfg, v.s.DtMax())
	if text == "" {
		return nil
	}
	w := textOut(errorMsg{Type: "warning", ID: m.ID, Cmd: m.Cmd, Field: "time.dt", Value: strconv.FormatFloat(cfg.Time.Dt, 'g', -1, 64), Message: text})
	return &w
}

// dispersionOut is the message "dispersion": the diagram of cfg's
// dispersion copy, or (Diagram nil) the state of its computation.
type dispersionOut struct {
	Type  string `json:"type"`
	State string `json:"state"`
	Grid  string `json:"grid"`
	Of    string `json:"of"`
	Copy  bool   `json:"copy"`
	*linear.Diagram
	Message string `json:"message"`
}

func dispersionHead(cfg sim.Config, state, message string, d *linear.Diagram) dispersionOut {
	c, copied := linear.DispersionCopy(cfg)
	return dispersionOut{"dispersion", state, session.GridName(c.Grid.Kind, c.Grid.N), session.GridName(cfg.Grid.Kind, cfg.Grid.N), copied, d, message}
}

// dispersionJob runs the dense analysis of the dispersion copy and encodes
// the message "dispersion".
func dispersionJob(ctx context.Context, key linear.Key, cfg sim.Config) func(*view) {
	c, _ := linear.DispersionCopy(cfg)
	res, err := linear.Analyse(ctx, c, linear.Options{})
	var out dispResult
	if out.err = err; err == nil {
		d := linear.NewDiagram(c, res)
		out.msg, out.err = json.Marshal(dispersionHead(cfg, linReady, "", &d))
	}
	return func(v *view) { remember(v.lin.disp, key, &out) }
}

// dispersionMsg returns the message for the current choices, or nil when
// nothing is to be said (the panel is off).
func (v *view) dispersionMsg() []byte {
	if !v.lin.active {
		return nil
	}
	cfg := v.s.Model().Config()
	head := dispersionHead(cfg, linComputing, "computing the normal modes…", nil)
	d := v.lin.disp[linear.KeyOf(cfg)]
	switch {
	case d == nil:
	case d.err != nil:
		head.State, head.Message = linFailed, "dispersion analysis failed: "+d.err.Error()
	default:
		return d.msg
	}
	return mustJSON(head)
}
