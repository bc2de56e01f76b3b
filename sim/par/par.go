// Package par runs index loops over a fixed set of worker goroutines.
//
// A loop over [0, n) is cut into contiguous chunks, one per worker. Each
// index is computed by exactly one worker with the same arithmetic as in a
// serial loop, so results are bit-identical for any worker count. Nothing
// is allocated per call: the loop body is a func value the caller builds
// once (a method value).
//
// A tendency is several short loops in a row, so the cost of handing a loop
// to a parked goroutine (tens of microseconds to wake it) would eat the
// gain on small meshes. Workers therefore spin for a short while after each
// loop, watching a generation counter, and park only when no new loop comes.
package par

import (
	"runtime"
	"sync/atomic"
)

// spinLoads is how many times an idle worker polls for the next loop
// before it parks: a few tens of microseconds, longer than the gap between
// the loops of one tendency.
const spinLoads = 1 << 17

// Pool is a fixed set of workers. The zero value is not usable; build one
// with New. A Pool is used by one caller goroutine at a time.
type Pool struct {
	workers int

	gen     atomic.Uint64 // bumped once per loop handed out
	fn      func(lo, hi int)
	n       int
	pending atomic.Int64 // worker chunks of the current loop not yet done

	asleep []atomic.Bool
	wake   []chan struct{}
	quit   atomic.Bool
}

// New starts a pool of w workers (at least 1). The calling goroutine counts
// as one of them, so w−1 goroutines are started.
func New(w int) *Pool {
	p := &Pool{workers: max(w, 1)}
	if p.workers > 1 {
		p.asleep = make([]atomic.Bool, p.workers-1)
		p.wake = make([]chan struct{}, p.workers-1)
		for k := range p.wake {
			p.wake[k] = make(chan struct{}, 1)
			go p.serve(k)
		}
	}
	return p
}

// Workers returns the number of workers, the caller included.
func (p *Pool) Workers() int { return p.workers }

// serve runs chunk k+1 of every loop (the caller runs chunk 0).
func (p *Pool) serve(k int) {
	var seen uint64
	for {
		g := p.gen.Load()
		if g == seen {
			p.idle(k, seen)
			continue
		}
		seen = g
		if p.quit.Load() {
			return
		}
		w, n := p.workers, p.n
		p.fn((k+1)*n/w, (k+2)*n/w)
		p.pending.Add(-1)
	}
}

// idle spins until the generation moves on, then parks. Announcing sleep
// before the last look at the generation, while For bumps the generation
// before it looks at the announcement, means one of the two always sees
// the other: no wake-up is lost.
func (p *Pool) idle(k int, seen uint64) {
	for i := 0; i < spinLoads; i++ {
		if p.gen.Load() != seen {
			return
		}
	}
	p.asleep[k].Store(true)
	if p.gen.Load() == seen {
		<-p.wake[k]
	}
	p.asleep[k].Store(false)
}

// For calls fn on contiguous chunks covering [0, n) and returns when all
// have finished.
func (p *Pool) For(n int, fn func(lo, hi int)) {
	w := p.workers
	if w == 1 || n < 2*w {
		fn(0, n)
		return
	}
	p.fn, p.n = fn, n
	p.pending.Store(int64(w - 1))
	p.gen.Add(1)
	p.rouse()
	fn(0, n/w)
	for spins := 0; p.pending.Load() != 0; spins++ {
		if spins > spinLoads {
			runtime.Gosched()
		}
	}
	p.fn = nil
}

// rouse wakes the workers that parked.
func (p *Pool) rouse() {
	for k := range p.wake {
		if p.asleep[k].Load() {
			select {
			case p.wake[k] <- struct{}{}:
			default:
			}
		}
	}
}

// Close stops the worker goroutines. The pool must not be used afterwards.
func (p *Pool) Close() {
	if p.workers == 1 || p.quit.Swap(true) {
		return
	}
	p.gen.Add(1)
	p.rouse()
}
