package server

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/dissip"
	"gyrebench/sim/linear"
	"gyrebench/sim/mesh"
	"gyrebench/sim/step"
)

// The linear panel: what the linearised scheme predicts for the run's
// current choices, computed by package sim/linear from the very operator
// the run steps.
//
//   - stability: the largest stable Δt of each integrator, bound / max|λ|
//     (linear.StableDt), on the run's own grid and physics, about rest at
//     depth physics.depth. Because the fastest waves of a flow that is
//     deeper than physics.depth, or moving, are faster than those of that
//     rest state, a guide is derived too: the prediction scaled by
//     √(gH) / (√(g h_max) + |u|_max), the Doppler-shifted gravity-wave speed
//     of the current state (common practice), never above the prediction.
//     The UI warns when Δt exceeds the guide, and the server adds a warning
//     message to an accepted set-dt or set-integrator past it; the hard
//     limit stays MaxCourant.
//   - dispersion: every normal mode of the dense analysis (linear.Analyse)
//     of the run's grid family, on a copy small enough for it (dispersionN)
//     with the run's cell size, so that its wavenumbers reach the run's
//     grid scale; on the sphere a coarse level (the cell size cannot be
//     kept there).
//
// Both are computed off the run's goroutine, one job at a time on a
// thread of the lowest priority (lowPriority), and the result comes back as
// a cmdFunc command, so the simulation never waits for them and loses
// little speed to them. Results are cached in the run per spectrum key (grid, physics,
// scheme; Δt only for apvm, whose upwinding scales with it); the limit of
// each integrator follows from the cached max|λ|. Nothing is computed until
// a client asks with the command "linear"; from then on every change of
// choice updates both, and every watcher receives them.

// Dispersion copies: the largest resolution analysed densely, per family.
// Each is 576–768 unknowns, about half a second (linear.Analyse's cost note).
var dispersionN = map[string]int{
	string(mesh.Quad): 16, string(mesh.Hex): 12, string(mesh.Tri): 12, string(mesh.Icosahedral): 2,
	string(mesh.Cubed): 6, // 216 cells, 648 unknowns
}

// maxLinCache bounds each cache; past it the cache starts afresh.
const maxLinCache = 32

// guideSlack: the guide departs from the prediction only when it is lower
// by more than this fraction.
const guideSlack = 0.05

// Job states in the messages.
const (
	linComputing = "computing"
	linReady     = "ready"
	linFailed    = "failed"
)

// linKey identifies a spectrum.
type linKey struct {
	grid    sim.GridConfig
	physics sim.PhysicsConfig
	scheme  string
	hodge   string
	apvm    float64
	dt      float64 // apvm only
	dissip  dissip.Coefficients
}

func keyOf(cfg sim.Config) linKey {
	k := linKey{grid: cfg.Grid, physics: cfg.Physics, scheme: cfg.Scheme.Name, hodge: hodgeName(cfg.Scheme.Hodge), apvm: cfg.Scheme.APVMFactor, dissip: cfg.Scheme.Dissipation()}
	if cfg.Scheme.Name == "apvm" {
		k.dt = cfg.Time.Dt
	}
	return k
}

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
	key       linKey
	disp      bool // the dispersion job, else the stability job
	cancel    context.CancelFunc
	cancelled bool // set and read on the run's goroutine
}

// linPanel is the run's linear analysis state, owned by the run's goroutine.
type linPanel struct {
	ctx    context.Context
	active bool
	stable map[linKey]*stableResult
	disp   map[linKey]*dispResult
	job    *linJob
	// sentDisp is the dispersion message last broadcast, so that it is
	// sent again only when it changes.
	sentDisp []byte
}

func (p *linPanel) init(ctx context.Context) {
	p.ctx = ctx
	p.stable = map[linKey]*stableResult{}
	p.disp = map[linKey]*dispResult{}
}

// linearOn is the command "linear": start the analysis for this run.
func (r *Run) linearOn(raw json.RawMessage) error {
	if len(raw) > 0 && string(raw) != "true" && string(raw) != "null" {
		return refuse("linear", shown(raw), "linear = %s: the command takes no value (or true); it turns the run's linear analysis on", shown(raw))
	}
	if !r.lin.active {
		r.lin.active = true
		r.linearChanged()
	}
	return nil
}

// linearJoin brings a new watcher up to date.
func (r *Run) linearJoin(s *subscriber) {
	if !r.lin.active {
		return
	}
	s.send(r.stabilityMsg())
	if d := r.dispersionMsg(); d != nil {
		s.send(outMsg{typ: textMsg, data: d})
	}
}

// linearChanged starts what the current choices still need and tells
// every watcher. It is called after every change of choice.
func (r *Run) linearChanged() {
	p := &r.lin
	if !p.active {
		return
	}
	cfg := r.m.Config()
	cfg.Initial.Params = nil // the job goroutine gets no shared map
	key := keyOf(cfg)
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
			p.start(r, key, false, func(ctx context.Context) func(*Run) { return stableJob(ctx, key, cfg) })
		case !haveDisp:
			p.start(r, key, true, func(ctx context.Context) func(*Run) { return dispersionJob(ctx, key, cfg) })
		}
	}
	r.broadcast(r.stabilityMsg())
	if d := r.dispersionMsg(); d != nil && string(d) != string(p.sentDisp) {
		p.sentDisp = d
		r.broadcast(outMsg{typ: textMsg, data: d})
	}
}

// start runs work on its own goroutine; the closure it returns is applied
// on the run's goroutine, unless the job was cancelled first.
func (p *linPanel) start(r *Run, key linKey, disp bool, work func(context.Context) func(*Run)) {
	ctx, cancel := context.WithCancel(p.ctx)
	j := &linJob{key: key, disp: disp, cancel: cancel}
	p.job = j
	go func() {
		lowPriority() // the run and its watchers come first
		apply := work(ctx)
		if ctx.Err() != nil {
			cancel()
			return
		}
		done := func(r *Run) {
			cancel()
			if r.lin.job == j {
				r.lin.job = nil
			}
			if j.cancelled { // while waiting to be applied
				return
			}
			apply(r)
			r.linearChanged()
		}
		if !r.submit(ctx, command{kind: cmdFunc, fn: done}) {
			cancel()
		}
	}()
}

// stableJob computes max|λ| on the run's grid (linear.MaxFrequency, as
// linear.StableDt does).
func stableJob(ctx context.Context, key linKey, cfg sim.Config) func(*Run) {
	t0 := time.Now()
	an, err := linear.Analyse(ctx, cfg, linear.Options{ExtremeOnly: true})
	res := &stableResult{seconds: time.Since(t0).Seconds(), err: err}
	if err == nil {
		res.rho, res.limits = an.SpectralRadius, map[string]float64{}
		for _, l := range an.Limits {
			res.limits[l.Integrator] = l.MaxDt
		}
	}
	return func(r *Run) {
		if len(r.lin.stable) >= maxLinCache {
			clear(r.lin.stable)
		}
		r.lin.stable[key] = res
	}
}

// prediction is the stability of the current choices, when known.
type prediction struct {
	rho      float64            // max|λ|, s⁻¹
	limits   map[string]float64 // largest stable Δt per integrator (0: none)
	dtStable float64            // of the current integrator
	guide    float64            // dtStable corrected for the state's depth and speed
	scale    float64            // guide / dtStable
	inv      float64            // √(g h_max) + |u|_max of the state, m/s
}

// predict returns the prediction for the current choices; ok is false
// while it is being computed or when it failed (res says which).
func (r *Run) predict() (pred prediction, res *stableResult, ok bool) {
	cfg := r.m.Config()
	res = r.lin.stable[keyOf(cfg)]
	if res == nil || res.err != nil || !(res.rho > 0) {
		return pred, res, false
	}
	pred.rho = res.rho
	pred.limits = map[string]float64{}
	for _, name := range step.Names {
		pred.limits[name] = step.ImaginaryAxisLimit(name, step.Options{Asselin: cfg.Time.Asselin}) / res.rho
		if l, ok := res.limits[name]; ok {
			pred.limits[name] = l // the analysis's own, with the dissipation's real parts
		}
	}
	pred.dtStable = pred.limits[cfg.Time.Integrator]
	inv := r.m.Invariants()
	pred.inv = math.Sqrt(cfg.Physics.G*math.Max(inv.HMax, 0)) + inv.MaxSpeed
	pred.scale = 1
	if c := math.Sqrt(cfg.Physics.G * cfg.Physics.Depth); pred.inv > c && !math.IsInf(pred.inv, 0) {
		pred.scale = c / pred.inv
	}
	if pred.scale > 1-guideSlack {
		pred.scale = 1 // within the slack the prediction stands, so one number is shown
	}
	pred.guide = pred.dtStable * pred.scale
	return pred, res, true
}

// stabilityMsg is the message "stability": the predicted limits for the
// current choices, the state's correction and the live Courant number.
func (r *Run) stabilityMsg() outMsg {
	cfg := r.m.Config()
	pred, res, ok := r.predict()
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
	for k, v := range pred.limits {
		limits[k] = num(v)
	}
	courant := r.m.Invariants().CourantGravity
	atLimit := math.NaN()
	if ok && cfg.Time.Dt > 0 {
		atLimit = courant * pred.dtStable / cfg.Time.Dt
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
		"stability", state, gridName(cfg.Grid.Kind, cfg.Grid.N), cfg.Scheme.Name, cfg.Time.Integrator,
		num(cfg.Time.Dt), num(pred.dtStable), num(pred.guide), num(pred.scale), limits, num(pred.rho),
		num(cfg.Physics.Depth), num(pred.inv), num(courant), num(atLimit), num(seconds), message,
	})}
}

// warning returns a warning for an accepted command that leaves Δt past
// the predicted limit, or nil.
func (r *Run) warning(m clientMsg) *outMsg {
	if m.Cmd != "set-dt" && m.Cmd != "set-integrator" {
		return nil
	}
	pred, _, ok := r.predict()
	if !ok {
		return nil
	}
	cfg := r.m.Config()
	dt, in := cfg.Time.Dt, cfg.Time.Integrator
	var text string
	switch {
	case pred.dtStable == 0:
		text = fmt.Sprintf("time.integrator = %q is unstable for every Δt on oscillatory modes (its stability region misses the imaginary axis): expect the run to grow and blow up", in)
	case dt > pred.guide:
		text = fmt.Sprintf("Δt = %s s is above the largest stable Δt predicted for %s on this grid, %s s", fmtSeconds(dt), in, sig4(pred.guide))
		if pred.scale < 1-guideSlack {
			text += fmt.Sprintf(" (%s s about rest at depth %g m, scaled by %.2f for this flow's depth and speed)", sig4(pred.dtStable), cfg.Physics.Depth, pred.scale)
		}
		text += fmt.Sprintf(": expect the run to blow up. Allowed up to %s s.", sig4(r.dtMax()))
	default:
		return nil
	}
	return &outMsg{typ: textMsg, data: mustJSON(errorMsg{Type: "warning", ID: m.ID, Cmd: m.Cmd, Field: "time.dt", Value: fmtSeconds(dt), Message: text})}
}

func fmtSeconds(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// sig4 writes x rounded to four significant digits without an exponent,
// for times in messages: 574.8, 10320.
func sig4(x float64) string {
	if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	e := int(math.Floor(math.Log10(math.Abs(x))))
	p := math.Pow(10, float64(e-3))
	return strconv.FormatFloat(math.Round(x/p)*p, 'f', max(0, 3-e), 64)
}

// dispersionCopy is the config the dispersion diagram analyses: the run's
// grid family at a resolution of at most dispersionN, with the run's cell
// size on the plane. copied says whether it is smaller than the run's grid.
func dispersionCopy(cfg sim.Config) (c sim.Config, copied bool) {
	c = cfg
	n := dispersionN[cfg.Grid.Kind]
	if n == 0 || cfg.Grid.N <= n {
		return c, false
	}
	c.Grid.N = n
	if !isSphereKind(cfg.Grid.Kind) {
		s := float64(n) / float64(cfg.Grid.N)
		c.Grid.Length *= s
		c.Grid.Height *= s // 0, the natural height, stays 0
	}
	return c, true
}

// classOrder indexes the classes in the dispersion message.
var classOrder = []linear.Class{linear.InertiaGravity, linear.Geostrophic, linear.Rossby, linear.Spurious}

// dispersionJob runs the dense analysis of the dispersion copy and encodes
// the message "dispersion".
func dispersionJob(ctx context.Context, key linKey, cfg sim.Config) func(*Run) {
	c, copied := dispersionCopy(cfg)
	res, err := linear.Analyse(ctx, c, linear.Options{})
	var out dispResult
	if err != nil {
		out.err = err
	} else {
		out.msg = encodeDispersion(cfg, c, copied, res)
	}
	return func(r *Run) {
		if len(r.lin.disp) >= maxLinCache {
			clear(r.lin.disp)
		}
		r.lin.disp[key] = &out
	}
}

// dispersionMsg returns the message for the current choices, or nil when
// nothing is to be said (the panel is off).
func (r *Run) dispersionMsg() []byte {
	if !r.lin.active {
		return nil
	}
	cfg := r.m.Config()
	c, copied := dispersionCopy(cfg)
	head := struct {
		Type    string `json:"type"`
		State   string `json:"state"`
		Grid    string `json:"grid"`
		Of      string `json:"of"`
		Copy    bool   `json:"copy"`
		Message string `json:"message"`
	}{"dispersion", linComputing, gridName(c.Grid.Kind, c.Grid.N), gridName(cfg.Grid.Kind, cfg.Grid.N), copied, "computing the normal modes…"}
	d := r.lin.disp[keyOf(cfg)]
	switch {
	case d == nil:
	case d.err != nil:
		head.State, head.Message = linFailed, "dispersion analysis failed: "+d.err.Error()
	default:
		return d.msg
	}
	return mustJSON(head)
}

// encodeDispersion writes the message "dispersion" for the analysis res of
// the copy c of the run's config cfg. Modes come in pairs ±ω; only ω ≥ 0
// is sent (and every zero-frequency mode once).
func encodeDispersion(cfg, c sim.Config, copied bool, res *linear.Result) []byte {
	sphere := res.Sphere
	dx := 0.0
	f := c.Physics.F0
	if sphere {
		f = 2 * c.Physics.Omega
	} else {
		dx = c.Grid.Length / float64(c.Grid.N)
	}
	var k, w []num
	var cls []int
	for _, m := range res.Modes {
		if m.Frequency < 0 && m.Class != linear.Geostrophic {
			continue
		}
		ci := 0
		for i, c := range classOrder {
			if m.Class == c {
				ci = i
			}
		}
		if !sphere {
			k = append(k, num(math.Hypot(m.Kx, m.Ky)))
		}
		w = append(w, num(math.Abs(m.Frequency)))
		cls = append(cls, ci)
	}
	names := make([]string, len(classOrder))
	for i, c := range classOrder {
		names[i] = string(c)
	}
	return mustJSON(struct {
		Type         string        `json:"type"`
		State        string        `json:"state"`
		Grid         string        `json:"grid"`
		Of           string        `json:"of"`
		Copy         bool          `json:"copy"`
		Sphere       bool          `json:"sphere"`
		Cells        int           `json:"cells"`
		Unknowns     int           `json:"unknowns"`
		Dx           num           `json:"dx"`
		F            num           `json:"f"` // f0 on the plane, 2Ω on the sphere
		G            num           `json:"g"`
		Depth        num           `json:"depth"`
		Counts       linear.Counts `json:"counts"`
		Growing      int           `json:"growing"`
		MaxFrequency num           `json:"max_frequency"`
		Method       string        `json:"method"`
		Seconds      num           `json:"seconds"`
		Classes      []string      `json:"classes"`
		K            []num         `json:"k"`     // |k|, rad m⁻¹ (plane only)
		W            []num         `json:"w"`     // |ω|, rad s⁻¹
		Class        []int         `json:"class"` // index into Classes
		Message      string        `json:"message"`
	}{
		"dispersion", linReady, gridName(c.Grid.Kind, c.Grid.N), gridName(cfg.Grid.Kind, cfg.Grid.N), copied, sphere,
		res.Cells, res.Unknowns, num(dx), num(f), num(c.Physics.G), num(c.Physics.Depth), res.Counts, res.Growing,
		num(res.MaxFrequency), res.Method, num(res.WallSeconds), names, k, w, cls, "",
	})
}
