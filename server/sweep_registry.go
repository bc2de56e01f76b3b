package server

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/go-chi/chi/v5"

	"gyrebench/sim/sweep"
)

// Sweeps launched from the workbench. Package sim/sweep plans, runs and
// assembles them (as `gyrebench sweep` does); this file only orchestrates:
// a small registry, one goroutine per sweep under the server's context,
// its progress as a stream, and the files it wrote.
const (
	// MaxSweeps is how many sweeps the workbench lists; starting another
	// drops the oldest ended one from the list (its folder stays on disk).
	MaxSweeps = 4
	// MaxSweepRuns bounds the product of one sweep started from the
	// workbench; the command line allows sweep.MaxRuns.
	MaxSweepRuns = 64
	// sweepFormBytes bounds the new-sweep form.
	sweepFormBytes = 16 << 10
	// sweepKeepAlive is the interval of comments on an idle progress
	// stream, so that a vanished client is noticed.
	sweepKeepAlive = 20 * time.Second
)

// SweepInfo is a snapshot of a sweep: GET /api/sweep/{id} and every
// message of its progress stream.
type SweepInfo = sweep.Status

// SweepRunInfo is one run of a sweep in a SweepInfo.
type SweepRunInfo = sweep.RunStatus

// sweeps is the server's sweeps.
type sweeps struct {
	s *Server
	registry[*sweep.Job]
}

// mountSweeps adds the routes of sweeps:
//
//	GET  /sweeps/new[?run=ID|?scenario=NAME]  the sweeps and the form that starts one
//	GET  /sweeps                              the same page
//	POST /sweeps                              start one (scenario, vary, set, jobs)
//	GET  /sweep/{id}                          its page: progress, then the plots
//	GET  /sweep/{id}/events                   its progress (server-sent events, JSON SweepInfo)
//	GET  /sweep/{id}/results                  the results part of its page (HTML), once ended
//	POST /sweep/{id}/stop                     stop it; runs in flight write their files so far
//	GET  /sweep/{id}/file/{name}              a file the sweep wrote (sweep.csv, the plots, ...)
//	GET  /sweep/{id}/run/{run}/{name}         a run folder's file (summary.json, series.csv, ...)
//	GET  /sweep/{id}/sweep.zip                the sweep folder's files as one zip
//	GET  /api/sweeps, /api/sweep/{id}         the sweeps as JSON
func (s *Server) mountSweeps(r chi.Router) {
	sw := &sweeps{s: s}
	r.Get("/sweeps", sw.serveNew)
	r.Get("/sweeps/new", sw.serveNew)
	r.Post("/sweeps", sw.create)
	r.Get("/sweep/{id}", sw.servePage)
	r.Get("/sweep/{id}/events", sw.serveEvents)
	r.Get("/sweep/{id}/results", sw.serveResults)
	r.Post("/sweep/{id}/stop", sw.serveStop)
	r.Get("/sweep/{id}/file/{name}", sw.serveFile)
	r.Get("/sweep/{id}/run/{run}/{name}", sw.serveFile)
	r.Get("/sweep/{id}/sweep.zip", sw.serveZip)
	r.Get("/api/sweeps", sw.serveListJSON)
	r.Get("/api/sweep/{id}", sw.serveJSON)
}

// root is the folder that holds the sweep folders, created here.
func (sw *sweeps) root() (string, error) {
	dir := sw.s.opt.SweepDir
	if dir == "" {
		cache, err := os.UserCacheDir()
		if err != nil {
			return "", fmt.Errorf("sweeps: no user cache folder to write sweeps into (%v); start the workbench with --sweeps DIR", err)
		}
		dir = filepath.Join(cache, "gyrebench", "sweeps")
	}
	dir, err := filepath.Abs(dir)
	if err != nil {
		return "", fmt.Errorf("--sweeps %s: %w", dir, err)
	}
	return dir, nil
}

// rootShown is the root for the page, or a note why there is none.
func (sw *sweeps) rootShown() string {
	dir, err := sw.root()
	if err != nil {
		return err.Error()
	}
	return dir
}

// errBusy says a sweep is running already.
type errBusy struct{ id string }

func (e errBusy) Error() string {
	return fmt.Sprintf("sweep %s is running; the workbench runs one sweep at a time: stop it or wait until it ends", e.id)
}

// start registers and starts a sweep of plan, in a new folder under the
// root. The sweep's goroutine counts among the server's connections, so
// that Close waits for its runs to write their files.
func (sw *sweeps) start(label string, plan *sweep.Plan, jobs int) (*sweep.Job, error) {
	s := sw.s
	root, err := sw.root()
	if err != nil {
		return nil, err
	}
	sw.mu.Lock()
	for _, j := range sw.listLocked() {
		if !j.Status().Ended() {
			sw.mu.Unlock()
			return nil, errBusy{j.ID()}
		}
	}
	s.mu.Lock()
	if s.closed {
		s.mu.Unlock()
		sw.mu.Unlock()
		return nil, errors.New("the workbench is shutting down")
	}
	s.conns.Add(1)
	s.mu.Unlock()
	sw.next++
	j := sweep.NewJob(strconv.Itoa(sw.next), label, plan, jobs)
	// Reserve the slot before touching the disk, so that two posts at
	// once cannot start two sweeps.
	for len(sw.order) >= MaxSweeps {
		sw.removeLocked(sw.order[0]) // every listed sweep has ended (checked above)
	}
	sw.putLocked(j.ID(), j)
	sw.mu.Unlock()

	dir, err := sweep.NewFolder(root, label, j.StartedAt())
	if err != nil {
		sw.remove(j.ID())
		s.conns.Done()
		return nil, err
	}
	j.Start(s.ctx, dir, sweep.Options{
		Workers: 1,
		Setup:   lowPriority, // live runs and their watchers come first
	}, s.conns.Done)
	return j, nil
}
