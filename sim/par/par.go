// Package par runs index loops over a fixed set of worker goroutines.
//
// A loop over [0, n) is cut into contiguous chunks, one per worker. Each
// index is computed by exactly one worker with the same arithmetic as in a
// serial loop, so results are bit-identical for any worker count. Nothing
// is allocated per call: the loop body is a func value the caller builds
// once (a method value), and chunks travel over a channel as plain structs.
package par

import "sync"

// Pool is a fixed set of workers. The zero value is not usable; build one
// with New. A Pool is used by one caller goroutine at a time.
type Pool struct {
	workers int
	jobs    chan job
	wg      sync.WaitGroup
	once    sync.Once
}

type job struct {
	fn     func(lo, hi int)
	lo, hi int
}

// New starts a pool of w workers (at least 1). The calling goroutine counts
// as one of them, so w−1 goroutines are started.
func New(w int) *Pool {
	p := &Pool{workers: max(w, 1)}
	if p.workers > 1 {
		p.jobs = make(chan job, p.workers)
		for i := 1; i < p.workers; i++ {
			go p.serve()
		}
	}
	return p
}

// Workers returns the number of workers, the caller included.
func (p *Pool) Workers() int { return p.workers }

func (p *Pool) serve() {
	for j := range p.jobs {
		j.fn(j.lo, j.hi)
		p.wg.Done()
	}
}

// For calls fn on contiguous chunks covering [0, n) and returns when all
// have finished.
func (p *Pool) For(n int, fn func(lo, hi int)) {
	w := p.workers
	if w == 1 || n < 2*w {
		fn(0, n)
		return
	}
	p.wg.Add(w - 1)
	for k := 1; k < w; k++ {
		p.jobs <- job{fn: fn, lo: k * n / w, hi: (k + 1) * n / w}
	}
	fn(0, n/w)
	p.wg.Wait()
}

// Close stops the worker goroutines. The pool must not be used afterwards.
func (p *Pool) Close() {
	p.once.Do(func() {
		if p.jobs != nil {
			close(p.jobs)
		}
	})
}
