package server

import (
	"bytes"
	"context"
	"net/http"
	"strconv"

	"github.com/go-chi/chi/v5"

	"gyrebench/sim/batch"
)

// mountTimeline adds a run's recorded timeline and its current state as
// downloads:
//
//	GET /run/{id}/timeline.toml   the record so far, ending at the current step
//	GET /run/{id}/final.nc        the current state, written as 'run' writes final.nc
//
// Replaying the timeline headless (gyrebench run) ends in the same
// final.nc, bit for bit.
func (s *Server) mountTimeline(r chi.Router) {
	r.Get("/run/{id}/timeline.toml", s.serveRunFile(sideTimeline))
	r.Get("/run/{id}/final.nc", s.serveRunFile(sideFinal))
}

// sideFile is a file made from a run on its goroutine, and how to serve
// it.
type sideFile struct {
	make  func(*Run) ([]byte, error)
	ctype string
	ext   string
}

var (
	sideTimeline = sideFile{func(r *Run) ([]byte, error) { return r.saveTimeline() }, "application/toml; charset=utf-8", "-timeline.toml"}
	sideFinal    = sideFile{finalBytes, "application/x-netcdf", "-final.nc"}
)

// finalBytes writes final.nc of the run's current state.
func finalBytes(r *Run) ([]byte, error) {
	f, err := batch.FinalFile(r.m)
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	if _, err := f.WriteTo(&b); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

func (f sideFile) serve(w http.ResponseWriter, base string, data []byte, err error) {
	if err != nil {
		http.Error(w, err.Error(), http.StatusConflict)
		return
	}
	h := w.Header()
	h.Set("Content-Type", f.ctype)
	h.Set("Content-Disposition", `attachment; filename="`+base+f.ext+`"`)
	h.Set("Cache-Control", "no-store")
	h.Set("Content-Length", strconv.Itoa(len(data)))
	_, _ = w.Write(data)
}

func (s *Server) serveRunFile(what sideFile) http.HandlerFunc {
	return func(w http.ResponseWriter, req *http.Request) {
		id := chi.URLParam(req, "id")
		run := s.Run(id)
		if run == nil {
			http.Error(w, "no run "+strconv.Quote(id)+"; the open runs are listed at /runs", http.StatusNotFound)
			return
		}
		var data []byte
		var err error
		if !run.await(req.Context(), func(r *Run) { data, err = what.make(r) }) {
			http.Error(w, "run "+id+" has stopped", http.StatusServiceUnavailable)
			return
		}
		what.serve(w, "run-"+id, data, err)
	}
}

// await runs fn on the run's goroutine and waits for it; it reports false
// when the run stopped or ctx ended first (fn may then still run later).
func (r *Run) await(ctx context.Context, fn func(*Run)) bool {
	ran := make(chan struct{})
	if !r.submit(ctx, command{kind: cmdFunc, fn: func(r *Run) { fn(r); close(ran) }}) {
		return false
	}
	select {
	case <-ran:
		return true
	case <-r.done:
		return false
	case <-ctx.Done():
		return false
	}
}
