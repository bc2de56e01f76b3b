package server

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sync/atomic"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/diag"
	"gyrebench/sim/display"
	"gyrebench/sim/dissip"
)

// Run states, shown verbatim in the browser's run-state.
const (
	StateRunning = "running"
	StatePaused  = "paused"
	StateBlownUp = "blown-up"
)

// Cadences and limits of a run.
const (
	pointInterval  = 100 * time.Millisecond // invariant points while running
	statusInterval = 250 * time.Millisecond // status messages while running
	rateWindow     = 500 * time.Millisecond // steps/s is measured over this window
	ringEvery      = 10                     // steps between ring snapshots while running
	maxPoints      = 4096                   // series points kept; older ones are thinned
	// MaxCourant bounds the Δt a client may ask for: the gravity-wave
	// Courant number it gives on the current state. Past about 3 every
	// explicit integrator offered is unstable (the imaginary-axis limits of
	// step.ImaginaryAxisLimit, at most 2√2 for rk4: Durran 2010, Numerical
	// Methods for Fluid Dynamics, 2nd ed., ch. 2, from memory), so 4 leaves
	// room to watch a blow-up without allowing nonsense.
	MaxCourant = 4.0
	// MaxLiveCells bounds the grid a client may ask for, well below the
	// engine's own bound, so a live run stays interactive.
	MaxLiveCells = 1 << 17
	// DefaultRingSize is the ring buffer length when Options.RingSize ≤ 0.
	DefaultRingSize = 64
	// MaxRingSize bounds Options.RingSize: each entry holds a whole state.
	MaxRingSize = 1024
	// DefaultMaxFPS is the most field frames per second a run sends when
	// Options.MaxFPS is 0. Past about 30 the eye gains little, and on a
	// two-core machine every frame the browser draws is taken from the
	// simulation (the browser benchmarks in tests/ measure it).
	DefaultMaxFPS = 32
	// MaxFPSLimit bounds Options.MaxFPS.
	MaxFPSLimit = 120
)

type cmdKind int

const (
	cmdClient cmdKind = iota
	cmdJoin
	cmdLeave
	cmdFunc // run fn on the run's goroutine: results of background work, snapshots
)

type command struct {
	kind cmdKind
	sub  *subscriber
	msg  clientMsg
	fn   func(*Run)
}

// RunInfo is a read-only snapshot of a run, for pages and listings. The run
// publishes a new one after every change.
type RunInfo struct {
	ID          string
	Scenario    string
	Title       string
	Grid        string
	N           int
	Cells       int
	Scheme      string
	Integrator  string
	Dt          float64
	Field       string
	State       string
	Time        float64
	Steps       int64
	Subscribers int
}

// Run is one simulation and its watchers. All fields below cmds are owned by
// the run's goroutine.
type Run struct {
	id   string
	cmds chan command
	done chan struct{}
	info atomic.Pointer[RunInfo]

	workers  int
	ringSize int
	// frameEvery is the least time between two field frames.
	frameEvery time.Duration
	hello      outMsg
	scenario   string
	title      string

	m       *sim.Model
	gen     uint32 // grid generation, bumped with every new mesh
	geom    outMsg
	scratch *fieldScratch
	field   *fieldDef
	state   string
	blow    *blowInfo
	rewound bool // the state was set from the ring and nothing ran since

	ref     diag.Invariants
	budget  dissip.Ledger // the budget of the series' points
	series  []point
	markers []marker
	ring    ring

	subs   map[*subscriber]struct{}
	frames chan *frame

	lin linPanel      // the linear analysis (linear_panel.go)
	sp  structPanel   // the structure report (structure_panel.go)
	tl  timelineState // the recorded timeline and a replay (timeline_run.go)

	born                             time.Time
	lastFrame, lastPoint, lastStatus time.Time
	rateT                            time.Time
	rateSteps                        int64
	rate                             float64
	skipped                          int64 // frames replaced unsent, all watchers together
}

// newRun builds the model and starts the run's goroutine, which lives until
// ctx ends.
// runLimits are the server's settings every run is built with.
type runLimits struct {
	workers    int           // goroutines per run for the engine's loops; ≤ 0: by mesh size
	ringSize   int           // recent states kept; ≤ 0: DefaultRingSize
	frameEvery time.Duration // least time between two field frames; ≤ 0: 1/DefaultMaxFPS s
}

func newRun(ctx context.Context, id, scenario string, cfg sim.Config, lim runLimits, hello func(id string) []byte) (*Run, error) {
	r, err := buildRun(ctx, id, scenario, cfg, lim, hello)
	if err != nil {
		return nil, err
	}
	go r.loop(ctx)
	return r, nil
}

// buildRun builds a run without starting its goroutine: newRun starts
// one, a lockstep pair (pair.go) drives two runs from its own.
func buildRun(ctx context.Context, id, scenario string, cfg sim.Config, lim runLimits, hello func(id string) []byte) (*Run, error) {
	workers, ringSize := lim.workers, lim.ringSize
	m, err := sim.NewModel(cfg, workers)
	if err != nil {
		return nil, err
	}
	if ringSize <= 0 {
		ringSize = DefaultRingSize
	}
	if err := ringFits(ringSize, m.Mesh().NumCells); err != nil {
		m.Close()
		return nil, err
	}
	if lim.frameEvery <= 0 {
		lim.frameEvery = time.Second / DefaultMaxFPS
	}
	r := &Run{
		id: id, cmds: make(chan command, 64), done: make(chan struct{}),
		workers: workers, ringSize: ringSize, frameEvery: lim.frameEvery,
		hello: outMsg{typ: textMsg, data: hello(id)},
		field: &fieldDefs[0], state: StatePaused,
		subs: map[*subscriber]struct{}{}, frames: make(chan *frame, 4),
		born: time.Now(),
	}
	r.ring.init(ringSize)
	r.lin.init(ctx)
	r.sp.init(ctx)
	r.install(m, scenario, cfg.Title)
	return r, nil
}

// ID returns the run's identifier (its URL path element).
func (r *Run) ID() string { return r.id }

// Info returns the latest snapshot of the run.
func (r *Run) Info() RunInfo { return *r.info.Load() }

// Done is closed when the run's goroutine has stopped.
func (r *Run) Done() <-chan struct{} { return r.done }

// submit hands a command to the run; it reports false when the run has
// stopped or ctx ended first.
func (r *Run) submit(ctx context.Context, c command) bool {
	select {
	case r.cmds <- c:
		return true
	case <-r.done:
		return false
	case <-ctx.Done():
		return false
	}
}

func (r *Run) loop(ctx context.Context) {
	defer close(r.done)
	defer func() { r.m.Close() }()
	for {
		if r.state == StateRunning {
			select {
			case c := <-r.cmds:
				r.handle(c)
			case <-ctx.Done():
				return
			default:
				r.advance()
			}
			continue
		}
		select {
		case c := <-r.cmds:
			r.handle(c)
		case <-ctx.Done():
			return
		}
	}
}

// advance takes one step while running and emits what is due.
func (r *Run) advance() {
	if !r.step() {
		return
	}
	if r.m.Steps()%ringEvery == 0 {
		r.ring.push(r.m)
	}
	now := time.Now()
	if now.Sub(r.lastPoint) >= pointInterval {
		r.emitPoint()
	}
	if now.Sub(r.lastFrame) >= r.frameEvery {
		r.emitFrame()
	}
	if now.Sub(r.lastStatus) >= statusInterval {
		r.emitStatus()
	}
}

// step advances the model once; on a blow-up it pauses the run (the model
// has kept the last good state) and reports false.
func (r *Run) step() bool {
	if r.tl.player != nil && !r.replayBeforeStep() {
		return false
	}
	if r.rewound {
		r.resumeFromRing()
	}
	err := r.m.Step()
	if err == nil {
		return true
	}
	var bu *sim.BlowUpError
	if !errors.As(err, &bu) {
		// Step reports nothing else today; treat anything new as a stop.
		bu = &sim.BlowUpError{Step: r.m.Steps() + 1, Time: r.m.Time(), Cell: -1, Edge: -1, Value: math.NaN()}
	}
	r.blownUp(bu, err)
	return false
}

// resumeFromRing makes the rewound-to state the present: the ring, the
// series and the markers forget what came after it. It runs at the first
// step or change after a rewind, so that until then the user may scrub
// back and forth freely.
func (r *Run) resumeFromRing() {
	r.rewound = false
	r.ring.dropAfterCursor()
	steps := r.m.Steps()
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
	r.emitHistory()
	r.emitRing()
}

func (r *Run) blownUp(bu *sim.BlowUpError, err error) {
	r.state = StateBlownUp
	msh := r.m.Mesh()
	b := &blowInfo{Step: bu.Step, T: num(bu.Time), Cell: bu.Cell, Edge: bu.Edge, Value: num(bu.Value), Message: err.Error(), Dt: r.m.Config().Time.Dt}
	switch {
	case bu.Cell >= 0 && bu.Cell < msh.NumCells:
		b.X, b.Y = drawXY(display.CellCentre(msh, bu.Cell))
	case bu.Edge >= 0 && bu.Edge < msh.NumEdges:
		b.X, b.Y = drawXY(display.EdgePoint(msh, bu.Edge))
	default:
		b.X, b.Y = num(math.NaN()), num(math.NaN())
	}
	r.blow = b
	r.recordBlowUp()
	r.ring.push(r.m)
	r.emitPoint()
	r.emitFrame()
	r.emitStatus()
	r.emitRing()
	r.publishInfo()
}

func (r *Run) handle(c command) {
	switch c.kind {
	case cmdJoin:
		r.join(c.sub)
	case cmdLeave:
		delete(r.subs, c.sub)
		c.sub.drop()
		if len(r.subs) == 0 {
			// Nobody is watching: stop rather than hold a core for no one.
			r.pause()
		}
		r.publishInfo()
	case cmdFunc:
		c.fn(r)
	case cmdClient:
		if err := r.applyRecorded(c.msg); err != nil {
			c.sub.send(errorReply(c.msg, err))
			return
		}
		if w := r.warning(c.msg); w != nil {
			c.sub.send(*w)
		}
		c.sub.send(outMsg{typ: textMsg, data: mustJSON(struct {
			Type string `json:"type"`
			ID   int64  `json:"id,omitempty"`
			Cmd  string `json:"cmd"`
		}{"ack", c.msg.ID, c.msg.Cmd})})
	}
}

// join sends a new subscriber everything it needs to draw the run now.
func (r *Run) join(s *subscriber) {
	r.subs[s] = struct{}{}
	s.send(r.hello)
	s.send(r.configMsg())
	s.send(r.geom)
	s.send(r.historyMsg())
	s.send(r.ringMsg())
	s.send(r.statusMsg())
	s.send(r.timelineMsg())
	r.linearJoin(s)
	r.structureJoin(s)
	if f := r.buildFrame(); f != nil {
		s.offer(f)
		f.release()
	}
	r.publishInfo()
}

// install makes m the run's model (closing the previous one) and starts a
// fresh history: the reset, load and first-build path.
func (r *Run) install(m *sim.Model, scenario, title string) {
	if r.m != nil {
		r.m.Close()
	}
	r.m, r.scenario, r.title = m, scenario, title
	r.ref = m.Initial()
	r.series, r.markers = r.series[:0], r.markers[:0]
	r.blow, r.rewound, r.state = nil, false, StatePaused
	r.newMesh()
	r.ring.reset()
	r.ring.push(m)
	r.addPoint(r.pointNow())
	r.startTimeline()
	r.publishInfo()
}

// newMesh readies the per-mesh state after the model's mesh changed.
func (r *Run) newMesh() {
	r.gen++
	r.geom = outMsg{typ: binMsg, data: encodeGeometry(display.Of(r.m.Mesh()), r.gen)}
	r.scratch = newFieldScratch(r.m)
}

// afterInstall tells every subscriber about a fresh run.
func (r *Run) afterInstall() {
	r.broadcast(r.configMsg())
	r.broadcast(r.geom)
	r.emitHistory()
	r.emitRing()
	r.emitStatus()
	r.emitFrame()
	r.publishInfo()
	r.linearChanged()
	r.structureChanged()
}

// pause stops a running run and brings every subscriber up to date.
func (r *Run) pause() {
	if r.state != StateRunning {
		return
	}
	r.state = StatePaused
	r.emitPoint()
	r.emitFrame()
	r.emitStatus()
	r.emitRing()
	r.publishInfo()
}

// change records a mid-run change: a point before it, the change, a marker
// and a point after it, so each segment of the series belongs to one choice.
func (r *Run) change(kind, label string, apply func() error) error {
	if r.rewound {
		r.resumeFromRing()
	}
	before := r.pointNow()
	if err := apply(); err != nil {
		return err
	}
	r.addPoint(before)
	r.broadcastPoint(before)
	mk := marker{T: num(r.m.Time()), Steps: r.m.Steps(), Kind: kind, Label: label}
	r.markers = append(r.markers, mk)
	r.broadcast(outMsg{typ: textMsg, data: mustJSON(struct {
		Type string `json:"type"`
		marker
	}{"marker", mk})})
	r.broadcast(r.configMsg())
	r.emitPoint()
	r.emitStatus()
	r.publishInfo()
	r.linearChanged()
	r.structureChanged()
	return nil
}

func (r *Run) broadcast(m outMsg) {
	for s := range r.subs {
		s.send(m)
	}
}

func (r *Run) pointNow() point {
	inv := r.m.Invariants()
	p := point{
		T: num(r.m.Time()), Steps: r.m.Steps(),
		Mass:      num(diag.RelDrift(inv.Mass, r.ref.Mass)),
		Energy:    num(diag.RelDrift(inv.Energy, r.ref.Energy)),
		Enstrophy: num(diag.RelDrift(inv.PotentialEnstrophy, r.ref.PotentialEnstrophy)),
		MassAbs:   num(inv.Mass), Courant: num(inv.CourantGravity), CourantAdv: num(inv.CourantAdvective),
		HMin: num(inv.HMin), MaxSpeed: num(inv.MaxSpeed),
	}
	r.budgetRates(&p, inv.Energy, inv.PotentialEnstrophy)
	return p
}

// addPoint appends to the series, thinning it to every other point when it
// is full so that a long run keeps its whole history at lower density.
func (r *Run) addPoint(p point) {
	if n := len(r.series); n > 0 && r.series[n-1].Steps == p.Steps && r.series[n-1] == p {
		return
	}
	if len(r.series) >= maxPoints {
		k := 0
		for i := 0; i < len(r.series); i += 2 {
			r.series[k] = r.series[i]
			k++
		}
		r.series = r.series[:k]
	}
	r.series = append(r.series, p)
}

func (r *Run) emitPoint() {
	r.lastPoint = time.Now()
	p := r.pointNow()
	r.addPoint(p)
	r.broadcastPoint(p)
}

func (r *Run) broadcastPoint(p point) {
	r.broadcast(outMsg{typ: textMsg, data: mustJSON(struct {
		Type string `json:"type"`
		point
	}{"point", p})})
}

func (r *Run) historyMsg() outMsg {
	pts, mks := r.series, r.markers
	if pts == nil {
		pts = []point{}
	}
	if mks == nil {
		mks = []marker{}
	}
	return outMsg{typ: textMsg, data: mustJSON(struct {
		Type    string   `json:"type"`
		Points  []point  `json:"points"`
		Markers []marker `json:"markers"`
	}{"history", pts, mks})}
}

func (r *Run) emitHistory() { r.broadcast(r.historyMsg()) }

func (r *Run) ringMsg() outMsg {
	return outMsg{typ: textMsg, data: mustJSON(struct {
		Type    string      `json:"type"`
		Size    int         `json:"size"`
		Cursor  int         `json:"cursor"`
		Entries []ringEntry `json:"entries"`
	}{"ring", r.ringSize, r.ring.cursor, r.ring.entries()})}
}

func (r *Run) emitRing() { r.broadcast(r.ringMsg()) }

func (r *Run) statusMsg() outMsg {
	now := time.Now()
	rate := 0.0
	if r.state == StateRunning {
		if d := now.Sub(r.rateT); d >= rateWindow {
			r.rate = float64(r.m.Steps()-r.rateSteps) / d.Seconds()
			r.rateT, r.rateSteps = now, r.m.Steps()
		}
		rate = r.rate
	}
	return outMsg{typ: textMsg, data: mustJSON(struct {
		Type        string    `json:"type"`
		State       string    `json:"state"`
		Steps       int64     `json:"steps"`
		T           num       `json:"t"`
		StepsPerSec num       `json:"steps_per_s"`
		WallS       num       `json:"wall_s"`
		Watchers    int       `json:"watchers"`
		Skipped     int64     `json:"frames_skipped"`
		BlowUp      *blowInfo `json:"blowup"`
	}{"status", r.state, r.m.Steps(), num(r.m.Time()), num(rate), num(now.Sub(r.born).Seconds()), len(r.subs), r.skipped, r.blow})}
}

func (r *Run) emitStatus() {
	r.lastStatus = time.Now()
	r.broadcast(r.statusMsg())
}

// Limits a client may ask for on the current grid.
type limits struct {
	DtMax    float64        `json:"dt_max"`
	NMax     map[string]int `json:"n_max"`
	NMin     int            `json:"n_min"`
	NMinKind map[string]int `json:"n_min_kind"` // per family: the level on the sphere
}

func (r *Run) configMsg() outMsg {
	cfg := r.m.Config()
	msh := r.m.Mesh()
	nmax := map[string]int{}
	for _, k := range gridKinds {
		nmax[k] = maxLiveN(k, cfg, msh)
	}
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
	return outMsg{typ: textMsg, data: mustJSON(struct {
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
		"config", r.scenario, r.title,
		grid{cfg.Grid.Kind, cfg.Grid.N, msh.Surface.Lx, msh.Surface.Ly, msh.NumCells, msh.NumEdges, msh.NumVertices, msh.Surface.Sphere, optimizeName(cfg.Grid.Optimize), msh.Orthogonal},
		cfg.Scheme.Name, hodgeName(cfg.Scheme.Hodge), cfg.Time.Integrator, num(cfg.Time.Dt), r.field.Name,
		limits{DtMax: r.dtMax(), NMax: nmax, NMin: 4, NMinKind: nMinByKind()},
		r.dissipationInfo(),
	})}
}

// dtMax is the largest Δt a client may set: the one that makes the
// gravity-wave Courant number of the current state MaxCourant. The Courant
// number is linear in Δt, so it scales from the engine's value.
func (r *Run) dtMax() float64 {
	inv := r.m.Invariants()
	dt := r.m.Config().Time.Dt
	if !(inv.CourantGravity > 0) || math.IsInf(inv.CourantGravity, 0) {
		return 86400
	}
	return dt * MaxCourant / inv.CourantGravity
}

// buildFrame encodes the displayed field of the current state, or returns
// nil when the mesh has no drawable geometry. The caller owns one
// reference.
func (r *Run) buildFrame() *frame {
	vals := r.scratch.values(r.field, r.m)
	size := frameHeader + 4*len(vals)
	var f *frame
	select {
	case f = <-r.frames:
		if cap(f.buf) < size {
			f.buf = make([]byte, size)
		}
		f.buf = f.buf[:size]
	default:
		f = &frame{buf: make([]byte, size), pool: r.frames}
	}
	f.refs.Store(1)
	putFrame(f.buf, r.field, r.gen, r.m.Time(), r.m.Steps(), vals)
	return f
}

func (r *Run) emitFrame() {
	r.lastFrame = time.Now()
	if len(r.subs) == 0 {
		return
	}
	f := r.buildFrame()
	for s := range r.subs {
		if s.offer(f) {
			r.skipped++
		}
	}
	f.release()
}

func (r *Run) publishInfo() {
	cfg := r.m.Config()
	r.info.Store(&RunInfo{
		ID: r.id, Scenario: r.scenario, Title: r.title,
		Grid: cfg.Grid.Kind, N: cfg.Grid.N, Cells: r.m.Mesh().NumCells,
		Scheme: cfg.Scheme.Name, Integrator: cfg.Time.Integrator, Dt: cfg.Time.Dt,
		Field: r.field.Name, State: r.state, Time: r.m.Time(), Steps: r.m.Steps(), Subscribers: len(r.subs),
	})
}

// fmtTime writes a simulated time for labels: seconds, hours or days.
func fmtTime(t float64) string {
	switch a := math.Abs(t); {
	case a < 3600:
		return fmt.Sprintf("%.4g s", t)
	case a < 2*86400:
		return fmt.Sprintf("%.4g h", t/3600)
	}
	return fmt.Sprintf("%.4g d", t/86400)
}
