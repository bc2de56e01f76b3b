package server

import (
	"fmt"

	"gyrebench/sim"
)

// snapshot is one saved state of a run.
type snapshot struct {
	x     []float64
	t     float64
	steps int64
}

// ringEntry describes a snapshot to clients.
type ringEntry struct {
	T     num   `json:"t"`
	Steps int64 `json:"steps"`
}

// ring keeps the most recent states of a run, oldest first, so that after
// a blow-up the user can go back and resume from one of them. Slot memory
// is reused; it is allocated the first time a slot fills.
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
	x := m.State()
	if cap(s.x) < len(x) {
		s.x = make([]float64, len(x))
	}
	s.x = s.x[:len(x)]
	copy(s.x, x)
	s.t, s.steps = m.Time(), m.Steps()
}

// dropAfterCursor forgets the entries newer than the one rewound to.
func (g *ring) dropAfterCursor() {
	if g.cursor >= 0 {
		g.n = g.cursor + 1
		g.cursor = -1
	}
}

func (g *ring) entries() []ringEntry {
	e := make([]ringEntry, g.n)
	for i := range e {
		s := g.at(i)
		e[i] = ringEntry{T: num(s.t), Steps: s.steps}
	}
	return e
}

// MaxRingCells bounds one run's ring: recent states kept × cells of the
// grid. A state holds a depth per cell and a velocity per edge (at most
// three edges per cell), 8 bytes each, so the bound is about 256 MiB of
// saved states per run. The default ring on the largest live grid fits.
const MaxRingCells = DefaultRingSize * MaxLiveCells

// ringFits refuses a grid whose states the ring of ringSize entries
// could not keep within MaxRingCells.
func ringFits(ringSize, cells int) error {
	if cells <= 0 || ringSize <= MaxRingCells/cells {
		return nil
	}
	return fmt.Errorf("ring: %d recent states of a %d-cell grid are %d cell-states, more than a run may keep (%d, about %d MiB); allowed on this grid: a ring of at most %d (serve --ring), or a grid of at most %d cells with this ring",
		ringSize, cells, ringSize*cells, MaxRingCells, MaxRingCells*32>>20, MaxRingCells/cells, MaxRingCells/ringSize)
}
