package session

import "gyrebench/sim"

// snapshot is one saved state.
type snapshot struct {
	x     []float64
	t     float64
	steps int64
}

// RingEntry describes a state of the ring.
type RingEntry struct {
	T     float64
	Steps int64
}

// ring keeps the most recent states, oldest first, so that after a
// blow-up one can go back and resume from one of them. Slot memory is
// reused; it is allocated the first time a slot fills.
type ring struct {
	slots  []snapshot
	start  int // index in slots of the oldest entry
	n      int // entries held
	cursor int // entry the state was rewound to, or −1
}

func (g *ring) init(size int) {
	g.slots = make([]snapshot, size)
	g.reset()
}

// reset forgets every entry (their memory is kept for reuse).
func (g *ring) reset() { g.start, g.n, g.cursor = 0, 0, -1 }

func (g *ring) at(i int) *snapshot { return &g.slots[(g.start+i)%len(g.slots)] }

// push saves the model's state as the newest entry, dropping the oldest
// when full. A state equal in time and step to the newest is not saved
// twice.
func (g *ring) push(m *sim.Model) {
	if g.n > 0 {
		if s := g.at(g.n - 1); s.steps == m.Steps() && s.t == m.Time() && len(s.x) == len(m.State()) {
			return
		}
	}
	var s *snapshot
	if g.n < len(g.slots) {
		s = g.at(g.n)
		g.n++
	} else {
		s = g.at(0)
		g.start = (g.start + 1) % len(g.slots)
	}
	s.x = append(s.x[:0], m.State()...)
	s.t, s.steps = m.Time(), m.Steps()
}

// dropAfterCursor forgets the entries newer than the one rewound to.
func (g *ring) dropAfterCursor() {
	if g.cursor >= 0 {
		g.n = g.cursor + 1
		g.cursor = -1
	}
}

// dropAfterStep forgets the entries newer than step.
func (g *ring) dropAfterStep(step int64) {
	for g.n > 0 && g.at(g.n-1).steps > step {
		g.n--
	}
	g.cursor = -1
}

// find returns the newest entry of step, or nil.
func (g *ring) find(step int64) *snapshot {
	for i := g.n - 1; i >= 0; i-- {
		if s := g.at(i); s.steps == step {
			return s
		}
	}
	return nil
}

func (g *ring) entries() []RingEntry {
	e := make([]RingEntry, g.n)
	for i := range e {
		s := g.at(i)
		e[i] = RingEntry{T: s.t, Steps: s.steps}
	}
	return e
}

// Ring returns the states one can scrub to, oldest first, and the entry
// the state was scrubbed to (−1 when none).
func (s *Session) Ring() (entries []RingEntry, cursor int) { return s.ring.entries(), s.ring.cursor }
