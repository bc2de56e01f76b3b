package server

import (
	"context"
	"fmt"
	"slices"
	"strings"
	"sync/atomic"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/session"
	"gyrebench/web"
)

// Lockstep pairs.
//
// A pair is two sessions, A and B, started from the same scenario and
// differing in one or more choices (scheme, integrator, Δt, grid,
// resolution), advanced together by one actor. Each side is a whole
// session (its series, markers, ring and recorded timeline) with its own
// view (its frames and watchers); both sides take the same commands as a
// run, through the same view.command and session.Apply.
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

// pairTags are the subscriptions of a pair's client: side A, side B and
// the pair's own (acks, errors, the pair's status, A − B frames).
func pairTags() []tag {
	return []tag{{side: "a", wrap: true, bin: 1}, {side: "b", wrap: true, bin: 2}, {side: "", wrap: true, bin: 3}}
}

// sideNames name the sides in messages and URLs.
var sideNames = [2]string{"a", "b"}

// Commands of a pair: those that apply to both sides, and those that
// apply to the side named.
var (
	pairCommands = []string{"play", "pause", "step", "reset", "set-field", "mark"}
	sideCommands = []string{"set-scheme", "set-hodge", "set-integrator", "set-dt", "set-grid", "set-dissipation"}
)

// PairInfo is a read-only snapshot of a pair, for pages (web.PairInfo).
type PairInfo = web.PairInfo

// Pair is two sessions in lockstep, owned by the pair's actor.
type Pair struct {
	*actor
	id, scenario string
	info         atomic.Pointer[PairInfo]

	side     [2]*view
	state    session.State
	same     bool // both sides on the same grid
	clients  map[*client]struct{}
	frames   chan *frame // pool of A − B frames
	diff     []float64
	lastDiff time.Time
	lastStat time.Time
}

// newPair builds both sides and starts the pair's actor, which lives
// until ctx ends.
func newPair(ctx context.Context, id, scenario string, cfg [2]sim.Config, lim runLimits) (*Pair, error) {
	p := &Pair{actor: newActor(), id: id, scenario: scenario, state: session.Paused, clients: map[*client]struct{}{}, frames: make(chan *frame, 4)}
	var ss [2]*session.Session
	for i := range ss {
		s, err := session.New(cfg[i], scenario, lim.session)
		if err == nil {
			err = s.CheckDt()
			if err != nil {
				s.Close()
			}
		}
		if err != nil {
			if i == 1 {
				ss[0].Close()
			}
			return nil, fmt.Errorf("side %s: %w", strings.ToUpper(sideNames[i]), err)
		}
		ss[i] = s
	}
	for i, s := range ss {
		label := fmt.Sprintf("pair %s %s", id, strings.ToUpper(sideNames[i]))
		p.side[i] = newView(ctx, id+sideNames[i], s, helloMsg(label), lim, p.post(ctx))
	}
	p.checkGrid()
	p.publishInfo()
	go p.loop(ctx, p)
	return p, nil
}

// ID returns the pair's identifier.
func (p *Pair) ID() string { return p.id }

// Info returns the latest snapshot of the pair.
func (p *Pair) Info() PairInfo { return *p.info.Load() }

func (p *Pair) running() bool { return p.state == session.Running }

func (p *Pair) close() {
	for _, v := range p.side {
		v.s.Close()
	}
}

// behind returns which sides the lockstep rule advances next.
func (p *Pair) behind() [2]bool {
	ta, tb := p.side[0].s.Model().Time(), p.side[1].s.Model().Time()
	return [2]bool{ta <= tb, tb <= ta}
}

// advance takes one pair step while running.
func (p *Pair) advance() {
	for i, due := range p.behind() {
		if due {
			p.side[i].advance()
		}
	}
	for _, v := range p.side {
		if v.s.State() != session.Running { // a blow-up
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
	for _, v := range p.side {
		v.halt()
	}
	p.state = session.Paused
	p.emitDiff()
	p.emitStatus()
	p.publishInfo()
}

func (p *Pair) join(c *client) {
	p.clients[c] = struct{}{}
	for i, v := range p.side {
		v.join(c.subs[i])
	}
	c.own().send(p.statusMsg())
	if f := p.buildDiff(); f != nil {
		c.own().offer(f)
		f.release()
	}
	p.publishInfo()
}

func (p *Pair) leave(c *client) {
	delete(p.clients, c)
	for i, v := range p.side {
		v.leave(c.subs[i])
	}
	c.own().drop()
	if len(p.clients) == 0 {
		p.pauseAll() // nobody is watching
	}
	p.publishInfo()
}

func (p *Pair) command(c *client, m wireMsg) {
	reply(c.own(), m, nil, p.apply(m))
}

// apply carries out one pair command. A change of choice that one side
// refuses changes nothing; a command for both sides goes to A, then B.
func (p *Pair) apply(m wireMsg) error {
	if slices.Contains(sideCommands, m.Cmd) {
		i := -1
		for k, n := range sideNames {
			if m.side() == n {
				i = k
			}
		}
		if i < 0 {
			return refuse("side", m.side(), "side = %q: %s changes one side of the pair; name it: \"a\" or \"b\"", m.side(), m.Cmd)
		}
		if _, err := p.side[i].command(m); err != nil {
			return err
		}
		p.afterChange()
		return nil
	}
	if !slices.Contains(pairCommands, m.Cmd) {
		return refuse("cmd", m.Cmd, "cmd = %q: not offered in a pair; allowed: %s (both sides) and %s (with \"side\")", m.Cmd, strings.Join(pairCommands, ", "), strings.Join(sideCommands, ", "))
	}
	if m.side() != "" {
		return refuse("side", m.side(), "side = %q: %s applies to both sides of the pair; send it without a side", m.side(), m.Cmd)
	}
	due := [2]bool{true, true}
	if m.Cmd == "step" {
		p.pauseAll()
		due = p.behind()
	}
	for i, v := range p.side {
		if due[i] {
			if _, err := v.command(m); err != nil {
				return err
			}
		}
	}
	switch m.Cmd {
	case "play":
		p.state = session.Running
	case "pause", "reset":
		p.state = session.Paused
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
	a, b := p.side[0].s.Model(), p.side[1].s.Model()
	ca, cb := a.Config().Grid, b.Config().Grid
	ma, mb := a.Mesh(), b.Mesh()
	p.same = ca.Kind == cb.Kind && ca.N == cb.N && session.OptimizeName(ca.Optimize) == session.OptimizeName(cb.Optimize) &&
		ma.NumCells == mb.NumCells && ma.NumEdges == mb.NumEdges && ma.NumVertices == mb.NumVertices && ma.Surface == mb.Surface
}

// buildDiff encodes A − B of the field shown, on A's grid, or returns nil
// when the sides are on different grids or show different fields.
func (p *Pair) buildDiff() *frame {
	a, b := p.side[0], p.side[1]
	if !p.same || a.field.ID != b.field.ID {
		return nil
	}
	ma := a.s.Model()
	va := a.scratch.Values(a.field, ma)
	vb := b.scratch.Values(b.field, b.s.Model())
	if cap(p.diff) < len(va) {
		p.diff = make([]float64, len(va))
	}
	d := p.diff[:len(va)]
	for i := range d {
		d[i] = va[i] - vb[i]
	}
	return newFrame(p.frames, a.field, a.gen, ma.Time(), ma.Steps(), d)
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
		c.own().offer(f)
	}
	f.release()
}

func (p *Pair) statusMsg() outMsg {
	a, b := p.side[0].s.Model(), p.side[1].s.Model()
	lead := ""
	switch {
	case a.Time() > b.Time():
		lead = "a"
	case b.Time() > a.Time():
		lead = "b"
	}
	return textOut(struct {
		Type     string   `json:"type"`
		ID       string   `json:"id"`
		State    string   `json:"state"`
		SameGrid bool     `json:"same_grid"`
		T        [2]num   `json:"t"`
		Steps    [2]int64 `json:"steps"`
		Lead     string   `json:"lead"`
	}{"pair", p.id, string(p.state), p.same, [2]num{num(a.Time()), num(b.Time())}, [2]int64{a.Steps(), b.Steps()}, lead})
}

func (p *Pair) emitStatus() {
	p.lastStat = time.Now()
	m := p.statusMsg()
	for c := range p.clients {
		c.own().send(m)
	}
}

func (p *Pair) publishInfo() {
	in := &PairInfo{ID: p.id, Scenario: p.scenario, Title: p.side[0].s.Title(), State: string(p.state), SameGrid: p.same, Clients: len(p.clients)}
	for i, v := range p.side {
		in.Sides[i] = *v.info.Load()
	}
	p.info.Store(in)
}
