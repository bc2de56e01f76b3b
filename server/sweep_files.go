package server

import (
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/go-chi/chi/v5"

	"gyrebench/sim/sweep"
)

// param returns a URL parameter unescaped (chi matches the raw path when
// it has escapes).
func pathParam(req *http.Request, name string) string {
	v := chi.URLParam(req, name)
	if u, err := url.PathUnescape(v); err == nil {
		return u
	}
	return v
}

// serveFile serves a file the sweep offers: one of the sweep folder's
// (route without {run}) or one of a run folder's.
func (sw *sweeps) serveFile(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	run, name := pathParam(req, "run"), pathParam(req, "name")
	outs := strings.Join(sweep.RunOutputs(), ", ")
	switch {
	case run == "" && !slices.Contains(in.TopFiles(), name):
		http.Error(w, fmt.Sprintf("sweep %s has no file %q; it serves %s, and each run's %s under /sweep/%s/run/RUN/",
			in.ID, name, strings.Join(in.TopFiles(), ", "), outs, in.ID), http.StatusNotFound)
	case run != "" && (!slices.ContainsFunc(in.Runs, func(r sweep.RunStatus) bool { return r.Name == run }) || !slices.Contains(sweep.RunOutputs(), name)):
		http.Error(w, fmt.Sprintf("sweep %s has no run file %q/%q; the runs are those of its plan and each serves %s",
			in.ID, run, name, outs), http.StatusNotFound)
	default:
		serveSweepFile(w, req, filepath.Join(in.Dir, run, name))
	}
}

// serveSweepFile serves one file of a sweep folder; p is already known
// to be one of the files the sweep writes.
func serveSweepFile(w http.ResponseWriter, req *http.Request, p string) {
	f, err := os.Open(p)
	if errors.Is(err, os.ErrNotExist) {
		http.Error(w, filepath.Base(p)+": not written (yet)", http.StatusNotFound)
		return
	}
	if err != nil {
		http.Error(w, err.Error(), http.StatusInternalServerError)
		return
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil || !st.Mode().IsRegular() {
		http.Error(w, filepath.Base(p)+": not a plain file", http.StatusNotFound)
		return
	}
	w.Header().Set("Content-Type", sweep.ContentType(p))
	w.Header().Set("Cache-Control", "no-cache")
	_ = http.NewResponseController(w).SetWriteDeadline(time.Now().Add(10 * time.Minute))
	http.ServeContent(w, req, filepath.Base(p), st.ModTime(), f)
}

// serveZip sends the sweep folder's files as one zip (sweep.WriteZip).
func (sw *sweeps) serveZip(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	h := w.Header()
	h.Set("Content-Type", sweep.ContentType(".zip"))
	h.Set("Content-Disposition", `attachment; filename="`+filepath.Base(in.Dir)+`.zip"`)
	_ = http.NewResponseController(w).SetWriteDeadline(time.Now().Add(30 * time.Minute))
	_ = sweep.WriteZip(w, in) // the response is under way: a cut zip is all that can be said
}
