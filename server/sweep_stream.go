package server

import (
	"encoding/json"
	"net/http"
	"strconv"
	"time"

	"github.com/go-chi/chi/v5"

	"gyrebench/sim/sweep"
	"gyrebench/web"
)

func (sw *sweeps) job(w http.ResponseWriter, req *http.Request) *sweep.Job {
	id := chi.URLParam(req, "id")
	j, ok := sw.get(id)
	if !ok {
		http.Error(w, "no sweep "+strconv.Quote(id)+"; the workbench's sweeps are listed at /sweeps", http.StatusNotFound)
	}
	return j
}

func (sw *sweeps) servePage(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	v := web.SweepPageOf(j.Status())
	v.Watch = sw.s.roles.watch(req)
	render(w, req, web.SweepPage(v))
}

func (sw *sweeps) serveResults(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	if !in.Ended() {
		http.Error(w, "sweep "+in.ID+" is still "+in.State+"; its results come when it ends", http.StatusConflict)
		return
	}
	render(w, req, web.SweepResultsPart(*web.SweepResultsOf(in)))
}

func (sw *sweeps) serveStop(w http.ResponseWriter, req *http.Request) {
	if !sameOrigin(req) {
		http.Error(w, "cross-site request refused: sweeps are stopped from the workbench's own pages", http.StatusForbidden)
		return
	}
	if code, err := parseForm(w, req, stopFormBytes); err != nil {
		http.Error(w, err.Error(), code)
		return
	}
	j := sw.job(w, req)
	if j == nil {
		return
	}
	j.Stop() // stopping an ended sweep changes nothing
	http.Redirect(w, req, "/sweep/"+j.ID(), http.StatusSeeOther)
}

// serveEvents streams the sweep's progress as server-sent events: one
// "progress" event with a SweepInfo now and after every change (latest
// wins: changes in quick succession may arrive as one), until the sweep
// has ended, then the stream closes. A browser's EventSource that
// reconnects to an ended sweep gets its final state once more.
func (sw *sweeps) serveEvents(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	rc := http.NewResponseController(w)
	h := w.Header()
	h.Set("Content-Type", "text/event-stream")
	h.Set("Cache-Control", "no-store")
	w.WriteHeader(http.StatusOK)
	ctx := req.Context()
	keep := time.NewTicker(sweepKeepAlive)
	defer keep.Stop()
	send := func(b []byte) bool {
		// The server's write timeout is for pages; a stream lasts as long
		// as the sweep, with a deadline per message instead.
		_ = rc.SetWriteDeadline(time.Now().Add(writeTimeout))
		if _, err := w.Write(b); err != nil {
			return false
		}
		return rc.Flush() == nil
	}
	if !send([]byte("retry: 2000\n\n")) {
		return
	}
	for {
		in, changed := j.Snapshot()
		b, err := json.Marshal(in)
		if err != nil {
			return
		}
		if !send(append(append([]byte("event: progress\ndata: "), b...), "\n\n"...)) || in.Ended() {
			return
		}
		for waiting := true; waiting; {
			select {
			case <-changed:
				waiting = false
			case <-keep.C:
				if !send([]byte(": still " + in.State + "\n\n")) {
					return
				}
			case <-ctx.Done():
				return
			}
		}
	}
}

func (sw *sweeps) serveJSON(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	writeJSON(w, j.Status())
}

func (sw *sweeps) serveListJSON(w http.ResponseWriter, req *http.Request) {
	serveInfos(w, &sw.registry, (*sweep.Job).Status)
}
