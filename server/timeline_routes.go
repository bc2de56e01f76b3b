package server

import (
	"bytes"
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
	r.Get("/run/{id}/timeline.toml", s.serveRunFile(timelineFile()))
	r.Get("/run/{id}/final.nc", s.serveRunFile(finalFile()))
}

// sideFile is a file made from a session on its actor's goroutine, and
// how to serve it.
type sideFile struct {
	make  func(*view) ([]byte, error)
	ctype string
	ext   string
}

// The files of a run or of a side of a pair.
func timelineFile() sideFile {
	return sideFile{saveTimeline, "application/toml; charset=utf-8", "-timeline.toml"}
}
func finalFile() sideFile { return sideFile{finalBytes, "application/x-netcdf", "-final.nc"} }

// saveTimeline writes the session's record so far.
func saveTimeline(v *view) ([]byte, error) {
	return v.s.SaveTimeline("recorded in the workbench: run " + v.id + " (" + v.s.Scenario() + ")")
}

// finalBytes writes final.nc of the session's current state.
func finalBytes(v *view) ([]byte, error) {
	f, err := batch.FinalFile(v.s.Model())
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
		run, id := s.runOf(w, req)
		if run == nil {
			return
		}
		var data []byte
		var err error
		if !run.await(req.Context(), func() { data, err = what.make(run.v) }) {
			http.Error(w, "run "+id+" has stopped", http.StatusServiceUnavailable)
			return
		}
		what.serve(w, "run-"+id, data, err)
	}
}
