package server

import (
	"archive/zip"
	"errors"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/go-chi/chi/v5"

	"gyrebench/sim/sweep"
)

// topFiles are the files of the sweep folder the workbench serves: the
// plan, and what Collect wrote (Result.Files).
func topFiles(in SweepInfo) []string {
	return append([]string{sweep.PlanFile}, in.Files...)
}

// param returns a URL parameter unescaped (chi matches the raw path when
// it has escapes).
func pathParam(req *http.Request, name string) string {
	v := chi.URLParam(req, name)
	if u, err := url.PathUnescape(v); err == nil {
		return u
	}
	return v
}

func (sw *sweeps) serveFile(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	name := pathParam(req, "name")
	if !contains(topFiles(in), name) {
		http.Error(w, fmt.Sprintf("sweep %s has no file %q; it serves %s, and each run's %s under /sweep/%s/run/RUN/",
			in.ID, name, strings.Join(topFiles(in), ", "), strings.Join(runOutputs, ", "), in.ID), http.StatusNotFound)
		return
	}
	serveSweepFile(w, req, filepath.Join(in.Dir, name))
}

func (sw *sweeps) serveRunFile(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	run, name := pathParam(req, "run"), pathParam(req, "name")
	known := false
	for _, r := range in.Runs {
		known = known || r.Name == run
	}
	if !known || !contains(runOutputs, name) {
		http.Error(w, fmt.Sprintf("sweep %s has no run file %q/%q; the runs are those of its plan and each serves %s",
			in.ID, run, name, strings.Join(runOutputs, ", ")), http.StatusNotFound)
		return
	}
	serveSweepFile(w, req, filepath.Join(in.Dir, run, name))
}

func sweepFileType(name string) string {
	switch filepath.Ext(name) {
	case ".csv":
		return "text/csv; charset=utf-8"
	case ".json":
		return "application/json"
	case ".png":
		return "image/png"
	case ".svg":
		return "image/svg+xml"
	case ".toml":
		return "application/toml"
	case ".nc":
		return "application/x-netcdf"
	case ".zip":
		return "application/zip"
	}
	return "application/octet-stream"
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
	w.Header().Set("Content-Type", sweepFileType(p))
	w.Header().Set("Cache-Control", "no-cache")
	_ = http.NewResponseController(w).SetWriteDeadline(time.Now().Add(10 * time.Minute))
	http.ServeContent(w, req, filepath.Base(p), st.ModTime(), f)
}

// serveZip sends the sweep folder's files as one zip: the plan and
// Collect's files, and every run folder's outputs that exist, under the
// folder's name.
func (sw *sweeps) serveZip(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	names := topFiles(in)
	for _, r := range in.Runs {
		for _, f := range runOutputs {
			names = append(names, r.Name+"/"+f)
		}
	}
	top := filepath.Base(in.Dir)
	h := w.Header()
	h.Set("Content-Type", sweepFileType(".zip"))
	h.Set("Content-Disposition", `attachment; filename="`+top+`.zip"`)
	_ = http.NewResponseController(w).SetWriteDeadline(time.Now().Add(30 * time.Minute))
	zw := zip.NewWriter(w)
	for _, n := range names {
		if err := addToZip(zw, filepath.Join(in.Dir, filepath.FromSlash(n)), top+"/"+n); err != nil {
			return // the response is under way: a cut zip is all that can be said
		}
	}
	_ = zw.Close()
}

func addToZip(zw *zip.Writer, p, name string) error {
	f, err := os.Open(p)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil || !st.Mode().IsRegular() {
		return err
	}
	fh, err := zip.FileInfoHeader(st)
	if err != nil {
		return err
	}
	fh.Name, fh.Method = name, zip.Deflate
	if filepath.Ext(p) == ".png" {
		fh.Method = zip.Store // compressed already
	}
	zw2, err := zw.CreateHeader(fh)
	if err != nil {
		return err
	}
	_, err = io.Copy(zw2, f)
	return err
}
