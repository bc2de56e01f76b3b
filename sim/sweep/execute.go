package sweep

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"runtime"
	"sync"

	"gyrebench/sim"
	"gyrebench/sim/batch"
)

// Options controls Execute.
type Options struct {
	// Jobs is the number of runs at once; ≤ 0 means runtime.NumCPU().
	Jobs int
	// Workers is the number of goroutines inside each run; ≤ 0 means 1.
	// Results do not depend on it (the engine's loops are bit-identical
	// for any worker count).
	Workers int
	// Done, when not nil, is called after each run, from the goroutine
	// that ran it, serialised: done of total runs have finished. sum is
	// nil when the run failed before writing anything; err is the run's
	// error (a *sim.BlowUpError, batch.ErrInterrupted, or another).
	Done func(done, total int, r *Run, sum *batch.Summary, err error)
	// Started, when not nil, is called as each run begins, from the
	// goroutine that runs it, serialised with Done.
	Started func(r *Run)
	// Setup, when not nil, is called first in each goroutine that runs
	// runs, before its first run: a server lowers the goroutine's thread
	// priority there, so that a sweep takes only the time its live runs
	// leave. With Workers = 1 a run's loops stay on that goroutine.
	Setup func()
}

// Outcome counts how the runs of Execute ended.
type Outcome struct {
	Runs, BlewUp, Interrupted int
}

// Execute writes the plan into dir, runs every run into dir/<run name>
// with batch.Run, at most opt.Jobs at once, and then assembles sweep.csv,
// sweep.json and the plots with Collect. A run that blows up is a result,
// not a failure: it is recorded (blew_up = true) and the others go on.
// When ctx ends, runs not started are skipped, running ones write their
// files so far, Collect is not called and the error wraps
// batch.ErrInterrupted. Any other error of a run stops the sweep.
func Execute(ctx context.Context, p *Plan, dir string, opt Options) (*Result, Outcome, error) {
	out := Outcome{Runs: len(p.Runs)}
	if err := WritePlan(dir, p); err != nil {
		return nil, out, err
	}
	jobs := opt.Jobs
	if jobs <= 0 {
		jobs = runtime.NumCPU()
	}
	jobs = min(jobs, len(p.Runs))
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()

	var (
		mu       sync.Mutex
		done     int
		firstErr error
	)
	next := make(chan int)
	var wg sync.WaitGroup
	for range jobs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			if opt.Setup != nil {
				opt.Setup()
			}
			for i := range next {
				if ctx.Err() != nil {
					continue // ended while this index was on its way: not started
				}
				r := &p.Runs[i]
				if opt.Started != nil {
					mu.Lock()
					opt.Started(r)
					mu.Unlock()
				}
				sum, err := batch.Run(ctx, r.Config, batch.Options{
					OutDir: filepath.Join(dir, r.Name), Workers: opt.Workers, Description: p.Description,
				})
				var bu *sim.BlowUpError
				mu.Lock()
				done++
				switch {
				case err == nil:
				case errors.As(err, &bu):
					out.BlewUp++
				case errors.Is(err, batch.ErrInterrupted):
					out.Interrupted++
				default:
					if firstErr == nil {
						firstErr = fmt.Errorf("%s: %w", r.Name, err)
					}
					cancel()
				}
				if opt.Done != nil {
					opt.Done(done, len(p.Runs), r, sum, err)
				}
				mu.Unlock()
			}
		}()
	}
	for i := range p.Runs {
		if ctx.Err() != nil {
			break
		}
		select {
		case next <- i:
		case <-ctx.Done():
		}
	}
	close(next)
	wg.Wait()
	if firstErr != nil {
		return nil, out, firstErr
	}
	if err := ctx.Err(); err != nil || out.Interrupted > 0 {
		return nil, out, fmt.Errorf("sweep %s: %w after %d of %d runs; the finished runs are in their folders",
			dir, batch.ErrInterrupted, done-out.Interrupted, len(p.Runs))
	}
	res, err := Collect(dir)
	return res, out, err
}
