package server

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"sync/atomic"
	"time"

	"gyrebench/sim"
)

// Lockstep pairs.
//
// A pair is two runs, A and B, started from the same scenario and
// differing in one or more choices (scheme, integrator, Δt, grid,
// resolution), advanced together by one goroutine. Each side is a whole
// Run (its series, markers, ring and recorded timeline, its own frames) but
// without a goroutine of its own: the pair's goroutine calls it, and also
// serves the side's command channel, so that background work submitted to
// a side (cmdFunc) comes back.
//
// # Lockstep rule
//
// Each pair step advances the side whose simulated time is behind by one
// of its own steps; when the times are equal, both advance. So neither side
// ever leads by more than one of its own steps: with Δt_A = 300 s and
// Δt_B = 600 s, A takes two steps for each of B's and the two agree in time
// after every B step; with Δt that share no common multiple, they leapfrog
// each other. The difference field A − B is of the states as they are; the
// pair's status gives both times. With equal Δt the times are always equal
// (the same sum of the same floats).
//
// A blow-up on either side pauses both. A change of choice applies to one
// side (the message names it); play, pause, step, reset, the field and
// marks apply to both. Scrubbing and loading are not offered in a pair,
// since each would break the lockstep.
//
// # Difference
//
// When both sides are on the same grid (family, resolution, domain), the
// pair sends A − B of the field shown, as a field frame on A's geometry, at
// most Options.MaxFPS a second; otherwise it says so in its status. The colour
// scale of A and B is shared by the browser (the union of both frames'
// ranges); A − B, a different quantity, has its own, centred on zero.
//
// # Wire
//
// /pair/{id}/ws speaks the run protocol with a side added. Client
// commands are {"id": 7, "side": "b", "cmd": "set-scheme", "value": "apvm"};
// side is "a" or "b" for a change of choice and absent otherwise. Text
// messages from the server come wrapped as {"side": "a"|"b"|"", "msg": M},
// M being a run message of that side, or (side "") a pair message: ack,
// error and {"type": "pair", ...}. Binary messages are the run's geometry
// and field frames with byte 3 (zero in the run protocol) set to the
// side: 1 A, 2 B, 3 A − B.

// Side tags of binary messages (byte 3).
const (
	tagA    = 1
	tagB    = 2
	tagDiff = 3
)

var sideNames = [2]string{"a", "b"}

// pairMsg is one command from a pair client.
type pairMsg struct {
	ID    int64           `json:"id,omitempty"`
	Side  string          `json:"side,omitempty"`
	Cmd   string          `json:"cmd"`
	Value json.RawMessage `json:"value,omitempty"`
}

// Commands of a pair: those that apply to both sides, and those that
// apply to the side named.
var (
	pairCommands = []string{"play", "pause", "step", "reset", "set-field", "mark"}
	sideCommands = []string{"set-scheme", "set-hodge", "set-integrator", "set-dt", "set-grid", "set-dissipation"}
)

// pairClient is one websocket client of a pair: a subscriber on each side
// and one for the pair's own messages.
type pairClient struct {
	side [2]*subscriber
	own  *subscriber
}

type pairCommand struct {
	kind   cmdKind
	client *pairClient
	msg    pairMsg
	fn     func(*Pair)
}

// PairInfo is a read-only snapshot of a pair, for pages.
type PairInfo struct {
	ID       string
	Scenario string
	Title    string
	Sides    [2]RunInfo
	State    string
	SameGrid bool
	Clients  int
}

// Pair is two runs in lockstep. All fields below cmds are owned by the
// pair's goroutine.
type Pair struct {
	id, scenario string
	cmds         chan pairCommand
	done         chan struct{}
	info         atomic.Pointer[PairInfo]

	side     [2]*Run
	state    string
	same     bool // both sides on the same grid
	clients  map[*pairClient]struct{}
	frames   chan *frame // pool of A − B frames
	diff     []float64
	lastDiff time.Time
	lastStat time.Time
}

// newPair builds both sides and starts the pair's goroutine, which lives
// until ctx ends.
func newPair(ctx context.Context, id, scenario string, cfg [2]sim.Config, lim runLimits) (*Pair, error) {
	p := &Pair{
		id: id, scenario: scenario, cmds: make(chan pairCommand, 64), done: make(chan struct{}),
		state: StatePaused, clients: map[*pairClient]struct{}{}, frames: make(chan *frame, 4),
	}
	for i := range p.side {
		label := fmt.Sprintf("pair %s %s", id, strings.ToUpper(sideNames[i]))
		r, err := buildRun(ctx, id+sideNames[i], scenario, cfg[i], lim, func(string) []byte { return helloMsg(label) })
		if err != nil {
			if i == 1 {
				p.side[0].m.Close()
			}
			return nil, fmt.Errorf("side %s: %w", strings.ToUpper(sideNames[i]), err)
		}
		p.side[i] = r
	}
	for i, r := range p.side {
		if dt, lim := r.m.Config().Time.Dt, r.dtMax(); dt > lim {
			for _, s := range p.side {
				s.m.Close()
			}
			return nil, fmt.Errorf("side %s: time.dt = %g s: allowed 0 < Δt ≤ %.4g s on this grid (gravity-wave Courant number up to %g)", strings.ToUpper(sideNames[i]), dt, lim, MaxCourant)
		}
	}
	p.checkGrid()
	p.publishInfo()
	go p.loop(ctx)
	return p, nil
}

// ID returns the pair's identifier.
func (p *Pair) ID() string { return p.id }

// Info returns the latest snapshot of the pair.
func (p *Pair) Info() PairInfo { return *p.info.Load() }

func (p *Pair) submit(ctx context.Context, c pairCommand) bool {
	select {
	case p.cmds <- c:
		return true
	case <-p.done:
		return false
	case <-ctx.Done():
		return false
	}
}

// call runs fn on the pair's goroutine and waits for it.
func (p *Pair) call(ctx context.Context, fn func(*Pair)) bool {
	ran := make(chan struct{})
	if !p.submit(ctx, pairCommand{kind: cmdFunc, fn: func(p *Pair) { fn(p); close(ran) }}) {
		return false
	}
	select {
	case <-ran:
		return true
	case <-p.done:
		return false
	case <-ctx.Done():
		return false
	}
}

func (p *Pair) loop(ctx context.Context) {
	defer close(p.done)
	defer func() {
		for _, r := range p.side {
			r.m.Close()
			close(r.done)
		}
	}()
	a, b := p.side[0], p.side[1]
	for {
		if p.state == StateRunning {
			select {
			case c := <-p.cmds:
				p.handle(c)
			case c := <-a.cmds:
				a.handle(c)
			case c := <-b.cmds:
				b.handle(c)
			case <-ctx.Done():
				return
			default:
				p.advance()
			}
			continue
		}
		select {
		case c := <-p.cmds:
			p.handle(c)
		case c := <-a.cmds:
			a.handle(c)
		case c := <-b.cmds:
			b.handle(c)
		case <-ctx.Done():
			return
		}
	}
}

// behind returns which sides the lockstep rule advances next.
func (p *Pair) behind() [2]bool {
	ta, tb := p.side[0].m.Time(), p.side[1].m.Time()
	return [2]bool{ta <= tb, tb <= ta}
}

// advance takes one pair step while running.
func (p *Pair) advance() {
	for i, due := range p.behind() {
		if due {
			p.side[i].advance()
		}
	}
	for _, r := range p.side {
		if r.state != StateRunning { // a blow-up
			p.pauseAll()
			return
		}
	}
	now := time.Now()
	if now.Sub(p.lastDiff) >= p.side[0].frameEvery {
		p.emitDiff()
	}
	if now.Sub(p.lastStat) >= statusInterval {
		p.emitStatus()
	}
}

func (p *Pair) pauseAll() {
	for _, r := range p.side {
		r.pause()
	}
	p.state = StatePaused
	p.emitDiff()
	p.emitStatus()
	p.publishInfo()
}

func (p *Pair) handle(c pairCommand) {
	switch c.kind {
	case cmdFunc:
		c.fn(p)
	case cmdJoin:
		p.clients[c.client] = struct{}{}
		for i, r := range p.side {
			r.join(c.client.side[i])
		}
		c.client.own.send(p.statusMsg())
		if f := p.buildDiff(); f != nil {
			c.client.own.offer(f)
			f.release()
		}
		p.publishInfo()
	case cmdLeave:
		delete(p.clients, c.client)
		for i, r := range p.side {
			delete(r.subs, c.client.side[i])
			c.client.side[i].drop()
		}
		c.client.own.drop()
		if len(p.clients) == 0 {
			p.pauseAll() // nobody is watching
		}
		p.publishInfo()
	case cmdClient:
		reply := clientMsg{ID: c.msg.ID, Cmd: c.msg.Cmd}
		if err := p.apply(c.msg); err != nil {
			c.client.own.send(errorReply(reply, err))
			return
		}
		c.client.own.send(outMsg{typ: textMsg, data: mustJSON(struct {
			Type string `json:"type"`
			ID   int64  `json:"id,omitempty"`
			Cmd  string `json:"cmd"`
			Side string `json:"side,omitempty"`
		}{"ack", c.msg.ID, c.msg.Cmd, c.msg.Side})})
	}
}

// apply carries out one pair command. A change of choice that one side
// refuses changes nothing; a command for both sides goes to A, then B.
func (p *Pair) apply(m pairMsg) error {
	msg := clientMsg{ID: m.ID, Cmd: m.Cmd, Value: m.Value}
	if contains(sideCommands, m.Cmd) {
		i := -1
		for k, n := range sideNames {
			if m.Side == n {
				i = k
			}
		}
		if i < 0 {
			return refuse("side", m.Side, "side = %q: %s changes one side of the pair; name it: \"a\" or \"b\"", m.Side, m.Cmd)
		}
		if err := p.side[i].applyRecorded(msg); err != nil {
			return err
		}
		p.afterChange()
		return nil
	}
	if !contains(pairCommands, m.Cmd) {
		return refuse("cmd", m.Cmd, "cmd = %q: not offered in a pair; allowed: %s (both sides) and %s (with \"side\")", m.Cmd, strings.Join(pairCommands, ", "), strings.Join(sideCommands, ", "))
	}
	if m.Side != "" {
		return refuse("side", m.Side, "side = %q: %s applies to both sides of the pair; send it without a side", m.Side, m.Cmd)
	}
	switch m.Cmd {
	case "play":
		for _, r := range p.side {
			if err := r.applyRecorded(msg); err != nil {
				return err
			}
		}
		p.state = StateRunning
	case "step":
		p.pauseAll()
		for i, due := range p.behind() {
			if due {
				if err := p.side[i].applyRecorded(msg); err != nil {
					return err
				}
			}
		}
	default: // pause, reset, set-field, mark: the same on both sides
		for _, r := range p.side {
			if err := r.applyRecorded(msg); err != nil {
				return err
			}
		}
		if m.Cmd == "pause" || m.Cmd == "reset" {
			p.state = StatePaused
		}
	}
	p.afterChange()
	return nil
}

func (p *Pair) afterChange() {
	p.checkGrid()
	p.emitDiff()
	p.emitStatus()
	p.publishInfo()
}

// checkGrid notes whether both sides are on the same grid.
func (p *Pair) checkGrid() {
	a, b := p.side[0].m, p.side[1].m
	ca, cb := a.Config().Grid, b.Config().Grid
	ma, mb := a.Mesh(), b.Mesh()
	p.same = ca.Kind == cb.Kind && ca.N == cb.N && optimizeName(ca.Optimize) == optimizeName(cb.Optimize) &&
		ma.NumCells == mb.NumCells && ma.NumEdges == mb.NumEdges && ma.NumVertices == mb.NumVertices && ma.Surface == mb.Surface
}

// buildDiff encodes A − B of the field shown, on A's grid, or returns nil
// when the sides are on different grids or show different fields.
func (p *Pair) buildDiff() *frame {
	a, b := p.side[0], p.side[1]
	if !p.same || a.field != b.field {
		return nil
	}
	va := a.scratch.values(a.field, a.m)
	vb := b.scratch.values(b.field, b.m)
	if cap(p.diff) < len(va) {
		p.diff = make([]float64, len(va))
	}
	d := p.diff[:len(va)]
	for i := range d {
		d[i] = va[i] - vb[i]
	}
	size := frameHeader + 4*len(d)
	var f *frame
	select {
	case f = <-p.frames:
		if cap(f.buf) < size {
			f.buf = make([]byte, size)
		}
		f.buf = f.buf[:size]
	default:
		f = &frame{buf: make([]byte, size), pool: p.frames}
	}
	f.refs.Store(1)
	putFrame(f.buf, a.field, a.gen, a.m.Time(), a.m.Steps(), d)
	return f
}

func (p *Pair) emitDiff() {
	p.lastDiff = time.Now()
	if len(p.clients) == 0 {
		return
	}
	f := p.buildDiff()
	if f == nil {
		return
	}
	for c := range p.clients {
		c.own.offer(f)
	}
	f.release()
}

func (p *Pair) statusMsg() outMsg {
	a, b := p.side[0].m, p.side[1].m
	lead := ""
	switch {
	case a.Time() > b.Time():
		lead = "a"
	case b.Time() > a.Time():
		lead = "b"
	}
	return outMsg{typ: textMsg, data: mustJSON(struct {
		Type     string   `json:"type"`
		ID       string   `json:"id"`
		State    string   `json:"state"`
		SameGrid bool     `json:"same_grid"`
		T        [2]num   `json:"t"`
		Steps    [2]int64 `json:"steps"`
		Lead     string   `json:"lead"`
	}{"pair", p.id, p.state, p.same, [2]num{num(a.Time()), num(b.Time())}, [2]int64{a.Steps(), b.Steps()}, lead})}
}

func (p *Pair) emitStatus() {
	p.lastStat = time.Now()
	m := p.statusMsg()
	for c := range p.clients {
		c.own.send(m)
	}
}

func (p *Pair) publishInfo() {
	in := &PairInfo{ID: p.id, Scenario: p.scenario, Title: p.side[0].title, State: p.state, SameGrid: p.same, Clients: len(p.clients)}
	for i, r := range p.side {
		in.Sides[i] = r.Info()
	}
	p.info.Store(in)
}
