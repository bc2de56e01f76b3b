package server

import (
	"context"
	"math"
	"sync/atomic"
	"time"

	"gyrebench/sim/display"
	"gyrebench/sim/session"
)

// Cadences of a view while its session runs.
const (
	pointInterval  = 100 * time.Millisecond // invariant points
	statusInterval = 250 * time.Millisecond // status messages
	rateWindow     = 500 * time.Millisecond // steps/s is measured over this window
)

// A view carries one session to its watchers: it turns the session's
// results (session.Result) into messages, and keeps what only the display
// needs: the field shown, the encoded geometry, the frames, the watchers,
// the cadences, the linear and structure panels. It belongs to its
// actor's goroutine, as its session does.
type view struct {
	s          *session.Session
	id         string
	hello      outMsg
	frameEvery time.Duration // least time between two field frames
	// analysisNormal keeps background analysis at normal CPU priority
	// (Options.AnalysisAtNormalPriority).
	analysisNormal bool
	ctx            context.Context
	// post runs fn on the actor's goroutine later: the results of
	// background work (the panels).
	post func(fn func()) bool
	info atomic.Pointer[RunInfo]

	gen     uint32 // grid generation, bumped with every new mesh
	geom    outMsg
	scratch *display.FieldScratch
	field   display.Field
	subs    map[*subscriber]struct{}
	frames  chan *frame

	lin linPanel    // the linear analysis (linear_panel.go)
	sp  structPanel // the structure report (structure_panel.go)

	born                             time.Time
	lastFrame, lastPoint, lastStatus time.Time
	rateT                            time.Time
	rateSteps                        int64
	rate                             float64
	skipped                          int64 // frames replaced unsent, all watchers together
}

func newView(ctx context.Context, id string, s *session.Session, hello []byte, lim runLimits, post func(func()) bool) *view {
	v := &view{
		s: s, id: id, hello: outMsg{typ: textMsg, data: hello}, frameEvery: lim.frameEvery, analysisNormal: lim.analysisNormal, ctx: ctx, post: post,
		field: display.Fields()[0], subs: map[*subscriber]struct{}{}, frames: make(chan *frame, 4), born: time.Now(),
	}
	v.lin.init()
	v.sp.init()
	v.newMesh()
	v.publishInfo()
	return v
}

// join sends a new watcher everything it needs to draw the session now.
func (v *view) join(sub *subscriber) {
	v.subs[sub] = struct{}{}
	for _, m := range []outMsg{v.hello, v.configMsg(), v.geom, v.historyMsg(), v.ringMsg(), v.statusMsg(), v.timelineMsg()} {
		sub.send(m)
	}
	v.linearJoin(sub)
	v.structureJoin(sub)
	if f := v.buildFrame(); f != nil {
		sub.offer(f)
		f.release()
	}
	v.publishInfo()
}

// leave forgets a watcher.
func (v *view) leave(sub *subscriber) {
	delete(v.subs, sub)
	sub.drop()
	v.publishInfo()
}

// command carries out one client command on this view's session: the
// display's own (set-field, linear, structure) here, the rest through
// session.Apply. It returns a warning to send with the ack, if any.
func (v *view) command(m wireMsg) (*outMsg, error) {
	switch m.Cmd {
	case "set-field":
		return nil, v.setField(m.Value)
	case "linear":
		return nil, v.linearOn(m.Value)
	case "structure":
		return nil, v.structureOn(m.Value)
	}
	c, ce := decode(m)
	if ce != nil {
		return nil, ce
	}
	res, err := v.s.Apply(c)
	if err != nil {
		return nil, err
	}
	v.publish(res)
	return v.warning(m), nil
}

func (v *view) setField(raw []byte) error {
	name, ce := parseString(raw, "field")
	if ce != nil {
		return ce
	}
	f, err := display.LookupField(name)
	if err != nil {
		return &session.Error{Field: "field", Value: name, Message: err.Error()}
	}
	v.field = f
	v.broadcast(v.configMsg())
	v.emitFrame()
	v.publishInfo()
	return nil
}

// advance steps a running session once and emits what is due.
func (v *view) advance() {
	res := v.s.Advance()
	if res.Effects&^session.Stepped != 0 || len(res.Added) > 0 {
		v.publish(res)
	}
	if !res.Has(session.Stepped) {
		return
	}
	now := time.Now()
	if now.Sub(v.lastPoint) >= pointInterval {
		v.emitPoint()
	}
	if now.Sub(v.lastFrame) >= v.frameEvery {
		v.emitFrame()
	}
	if now.Sub(v.lastStatus) >= statusInterval {
		v.emitStatus()
	}
}

// publish tells every watcher what a command or step changed.
func (v *view) publish(res session.Result) {
	if res.Has(session.StateChanged) && v.s.State() == session.Running {
		v.rateT, v.rateSteps, v.rate = time.Now(), v.s.Model().Steps(), 0
	}
	if res.Has(session.Installed) {
		v.newMesh()
		for _, m := range []outMsg{v.configMsg(), v.geom, v.historyMsg(), v.ringMsg(), v.timelineMsg()} {
			v.broadcast(m)
		}
		v.emitStatus()
		v.emitFrame()
		v.publishInfo()
		v.linearChanged()
		v.structureChanged()
		return
	}
	cut := res.Has(session.HistoryCut)
	if cut {
		v.broadcast(v.historyMsg())
	}
	if res.Has(session.MeshChanged) {
		v.newMesh()
		v.broadcast(v.geom)
	}
	if !cut {
		for _, e := range res.Added {
			if e.Point != nil {
				v.lastPoint = time.Now()
				v.broadcast(pointMsg(*e.Point))
				continue
			}
			v.broadcast(textOut(struct {
				Type string `json:"type"`
				session.Marker
			}{"marker", *e.Marker}))
		}
	}
	choice := res.Has(session.ChoiceChanged)
	if choice {
		v.broadcast(v.configMsg())
	}
	if res.Has(session.RingChanged) {
		v.broadcast(v.ringMsg())
	}
	if res.Has(session.StateMoved) {
		v.emitFrame()
	}
	if res.Effects&(session.StateChanged|session.StateMoved|session.ChoiceChanged) != 0 {
		v.emitStatus()
	}
	if res.Has(session.TimelineChanged) {
		v.broadcast(v.timelineMsg())
	}
	v.publishInfo()
	if choice {
		v.linearChanged()
		v.structureChanged()
	}
}

// halt pauses the session without recording it (nobody watches).
func (v *view) halt() { v.publish(v.s.Halt()) }

// newMesh readies the per-mesh state after the model's mesh changed.
func (v *view) newMesh() {
	v.gen++
	v.geom = outMsg{typ: binMsg, data: encodeGeometry(display.Of(v.s.Model().Mesh()), v.gen)}
	v.scratch = display.NewFieldScratch(v.s.Model())
}

func (v *view) broadcast(m outMsg) {
	for s := range v.subs {
		s.send(m)
	}
}

func (v *view) emitPoint() {
	v.lastPoint = time.Now()
	v.broadcast(pointMsg(v.s.RecordPoint()))
}

func (v *view) emitStatus() {
	v.lastStatus = time.Now()
	v.broadcast(v.statusMsg())
}

// buildFrame encodes the displayed field of the current state. The caller
// owns one reference.
func (v *view) buildFrame() *frame {
	m := v.s.Model()
	return newFrame(v.frames, v.field, v.gen, m.Time(), m.Steps(), v.scratch.Values(v.field, m))
}

// newFrame encodes a field frame in a frame from pool (or a new one).
func newFrame(pool chan *frame, f display.Field, gen uint32, t float64, steps int64, vals []float64) *frame {
	size := frameHeader + 4*len(vals)
	var fr *frame
	select {
	case fr = <-pool:
		if cap(fr.buf) < size {
			fr.buf = make([]byte, size)
		}
		fr.buf = fr.buf[:size]
	default:
		fr = &frame{buf: make([]byte, size), pool: pool}
	}
	fr.refs.Store(1)
	putFrame(fr.buf, f, gen, t, steps, vals)
	return fr
}

func (v *view) emitFrame() {
	v.lastFrame = time.Now()
	if len(v.subs) == 0 {
		return
	}
	f := v.buildFrame()
	for s := range v.subs {
		if s.offer(f) {
			v.skipped++
		}
	}
	f.release()
}

func (v *view) publishInfo() {
	m := v.s.Model()
	cfg := m.Config()
	v.info.Store(&RunInfo{
		ID: v.id, Scenario: v.s.Scenario(), Title: v.s.Title(),
		Grid: cfg.Grid.Kind, N: cfg.Grid.N, Cells: m.Mesh().NumCells,
		Scheme: cfg.Scheme.Name, Integrator: cfg.Time.Integrator, Dt: cfg.Time.Dt,
		Field: v.field.Name, State: string(v.s.State()), Time: m.Time(), Steps: m.Steps(), Subscribers: len(v.subs),
	})
}

// blowInfo says where and when a session blew up.
type blowInfo struct {
	Step    int64   `json:"step"`
	T       num     `json:"t"`
	Cell    int     `json:"cell"`
	Edge    int     `json:"edge"`
	Value   num     `json:"value"`
	X       num     `json:"x"`
	Y       num     `json:"y"`
	Message string  `json:"message"`
	Dt      float64 `json:"dt"`
}

func (v *view) blowInfo() *blowInfo {
	bu := v.s.BlowUp()
	if bu == nil {
		return nil
	}
	msh := v.s.Model().Mesh()
	b := &blowInfo{Step: bu.Step, T: num(bu.Time), Cell: bu.Cell, Edge: bu.Edge, Value: num(bu.Value), Message: bu.Message, Dt: bu.Dt}
	switch {
	case bu.Cell >= 0 && bu.Cell < msh.NumCells:
		b.X, b.Y = drawXY(display.CellCentre(msh, bu.Cell))
	case bu.Edge >= 0 && bu.Edge < msh.NumEdges:
		b.X, b.Y = drawXY(display.EdgePoint(msh, bu.Edge))
	default:
		b.X, b.Y = num(math.NaN()), num(math.NaN())
	}
	return b
}
