package server

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/a-h/templ"
	"github.com/go-chi/chi/v5"
	"github.com/go-chi/chi/v5/middleware"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/display"
	"gyrebench/sim/scenario"
	"gyrebench/sim/session"
	"gyrebench/web"
)

func (s *Server) routes() chi.Router {
	r := chi.NewRouter()
	r.Use(s.checkHost) // every route, websockets included (hosts.go)
	// A shared workbench: the control key, and viewers (roles.go).
	r.Use(s.roles.check)
	r.Use(middleware.GetHead)
	r.Get("/", s.serveIndex)
	r.Get("/runs", s.serveRuns)
	r.Post("/runs", s.createRun)
	r.Get("/run/{id}", s.serveRunPage)
	r.Get("/run/{id}/ws", s.serveWS)
	r.Get("/run/{id}/figure.png", s.serveFigure("png"))
	r.Get("/run/{id}/figure.svg", s.serveFigure("svg"))
	r.Get("/api/runs", s.serveRunsJSON)
	s.mountTimeline(r) // timeline_routes.go
	s.mountPairs(r)    // pair_routes.go
	s.mountSweeps(r)   // sweep_registry.go
	r.Get("/static/*", s.serveStatic)
	r.NotFound(func(w http.ResponseWriter, req *http.Request) {
		http.Error(w, "not found: "+req.URL.Path+" (the workbench is at /)", http.StatusNotFound)
	})
	return r
}

// serveIndex sends everyone to the oldest run, so that a room full of
// people opening the same address watch the same run.
func (s *Server) serveIndex(w http.ResponseWriter, req *http.Request) {
	rs := s.Runs()
	if len(rs) == 0 {
		http.Redirect(w, req, "/runs", http.StatusSeeOther)
		return
	}
	http.Redirect(w, req, "/run/"+rs[0].ID(), http.StatusSeeOther)
}

func (s *Server) serveRunPage(w http.ResponseWriter, req *http.Request) {
	run, _ := s.runOf(w, req)
	if run == nil {
		return
	}
	render(w, req, web.RunPage(web.RunPageOf(run.Info(), s.opt.RingSize)))
}

func (s *Server) serveRuns(w http.ResponseWriter, req *http.Request) {
	s.renderRuns(w, req, "", http.StatusOK)
}

func (s *Server) renderRuns(w http.ResponseWriter, req *http.Request, msg string, code int) {
	// Offer the newest run's scenario when it is a built-in: starting
	// another run of what one is watching is the common case.
	runs := s.Runs()
	pick := scenarios.Default
	if len(runs) > 0 {
		if name := runs[len(runs)-1].Info().Scenario; slices.Contains(scenarios.Names(), name) {
			pick = name
		}
	}
	v := web.RunsView{Scenarios: web.ScenarioOptions(pick), Message: msg, Watch: s.roles.watch(req)}
	for _, r := range runs {
		v.Runs = append(v.Runs, web.RunRowOf(r.Info()))
	}
	w.WriteHeader(code)
	render(w, req, web.RunsPage(v))
}

// createRun starts a new run of a built-in scenario (form field
// "scenario") and sends the browser to it.
func (s *Server) createRun(w http.ResponseWriter, req *http.Request) {
	if !sameOrigin(req) {
		http.Error(w, "cross-site request refused: runs are created from the workbench's own pages", http.StatusForbidden)
		return
	}
	if code, err := parseForm(w, req, runFormBytes); err != nil {
		s.renderRuns(w, req, err.Error(), code)
		return
	}
	name := req.PostForm.Get("scenario")
	if _, err := scenarios.Source(name); err != nil {
		s.renderRuns(w, req, err.Error(), http.StatusBadRequest)
		return
	}
	label, cfg, err := loadScenario(name)
	if err != nil {
		s.renderRuns(w, req, err.Error(), http.StatusBadRequest)
		return
	}
	r, err := s.startRun(label, cfg)
	if err != nil {
		s.renderRuns(w, req, err.Error(), startStatus(err))
		return
	}
	http.Redirect(w, req, "/run/"+r.ID(), http.StatusSeeOther)
}

// sameOrigin refuses form posts from other sites: the browser's
// Sec-Fetch-Site, or else the Origin header, must say this site.
// Bounds on the bodies of the workbench's forms.
const (
	runFormBytes  = 4 << 10
	pairFormBytes = 8 << 10
	stopFormBytes = 1 << 10
	// sweepFormBytes is in sweep_registry.go.
)

// parseForm reads a POST form of at most limit bytes. A larger body is
// refused (413) with a message naming the limit; the status and the
// message are for the caller's page.
func parseForm(w http.ResponseWriter, req *http.Request, limit int64) (int, error) {
	req.Body = http.MaxBytesReader(w, req.Body, limit)
	if err := req.ParseForm(); err != nil {
		var tooBig *http.MaxBytesError
		if errors.As(err, &tooBig) {
			return http.StatusRequestEntityTooLarge, fmt.Errorf("form: the request body is larger than %d bytes, the most this form takes", limit)
		}
		return http.StatusBadRequest, fmt.Errorf("form: %v", err)
	}
	return 0, nil
}

func sameOrigin(req *http.Request) bool {
	switch req.Header.Get("Sec-Fetch-Site") {
	case "same-origin":
		// Set by the browser, never by a page. Origin can then be "null":
		// the pages' Referrer-Policy is no-referrer.
		return true
	case "", "none":
	default:
		return false
	}
	if o := req.Header.Get("Origin"); o != "" {
		u, err := url.Parse(o)
		return err == nil && strings.EqualFold(u.Host, req.Host)
	}
	return true
}

func (s *Server) serveRunsJSON(w http.ResponseWriter, req *http.Request) {
	serveInfos(w, &s.runs, (*Run).Info)
}

func (s *Server) serveStatic(w http.ResponseWriter, req *http.Request) {
	name := strings.TrimPrefix(req.URL.Path, "/static/")
	f, ok := s.files[name]
	if !ok {
		http.Error(w, "not found: "+req.URL.Path, http.StatusNotFound)
		return
	}
	h := w.Header()
	h.Set("Content-Type", f.ctype)
	h.Set("ETag", f.etag)
	h.Set("Cache-Control", "no-cache")
	http.ServeContent(w, req, name, time.Time{}, bytes.NewReader(f.data))
}

func render(w http.ResponseWriter, req *http.Request, c templ.Component) {
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.Header().Set("Cache-Control", "no-store")
	var b bytes.Buffer
	if err := c.Render(req.Context(), &b); err != nil {
		http.Error(w, "rendering the page: "+err.Error(), http.StatusInternalServerError)
		return
	}
	_, _ = w.Write(b.Bytes())
}

// helloMsg names what a run offers: fields with units and colour maps,
// the choices of each menu, and the protocol version.
func helloMsg(id string) []byte {
	return mustJSON(struct {
		Type        string          `json:"type"`
		Protocol    int             `json:"protocol"`
		Run         string          `json:"run"`
		Fields      []display.Field `json:"fields"`
		Schemes     []string        `json:"schemes"`
		Integrators []string        `json:"integrators"`
		Grids       []string        `json:"grids"`
		Scenarios   []string        `json:"scenarios"`
		Commands    []string        `json:"commands"`
	}{"hello", 1, id, display.Fields(), session.Schemes(), session.Integrators(), session.GridKinds(), scenarios.Names(), commands})
}

// serveWS connects a websocket client to a run.
func (s *Server) serveWS(w http.ResponseWriter, req *http.Request) {
	run := s.Run(chi.URLParam(req, "id"))
	if run == nil {
		http.Error(w, "no run "+chi.URLParam(req, "id"), http.StatusNotFound)
		return
	}
	s.serveSocket(w, req, socket{a: run.actor, h: run, tags: []tag{{}}, what: "run"})
}

// base resolves a form's base, in field: "run:ID" (that run's current
// choices, from its initial state; run is the ID) or a built-in
// scenario's name (with its description).
func (s *Server) base(ctx context.Context, field, base string) (run, label, description string, cfg sim.Config, err error) {
	if id, ok := strings.CutPrefix(base, "run:"); ok {
		r := s.Run(id)
		if r == nil {
			return "", "", "", cfg, fmt.Errorf("%s = %q: no run %s is open; the open runs are listed at /runs", field, base, id)
		}
		if cfg, label, ok = r.choices(ctx); !ok {
			return "", "", "", cfg, fmt.Errorf("%s = %q: run %s has stopped", field, base, id)
		}
		return id, label, "", cfg, nil
	}
	src, err := scenarios.Source(base)
	if err != nil {
		return "", "", "", cfg, fmt.Errorf("%s = %q: neither a built-in scenario (%s) nor an open run (run:ID)", field, base, strings.Join(scenarios.Names(), ", "))
	}
	sc, err := scenario.Parse(src, base+".toml")
	if err == nil {
		err = sc.Config.Validate()
	}
	if err != nil {
		return "", "", "", cfg, fmt.Errorf("%s = %q: %w", field, base, err)
	}
	return "", base, sc.Description, sc.Config, nil
}

// baseOptions is the menu of a form's base (web.BaseOptions).
func (s *Server) baseOptions(selected string, withDt bool) []web.Option {
	return web.BaseOptions(infosOf(&s.runs, (*Run).Info), selected, withDt)
}

// runOf returns the run the request's path names, and its id, or answers
// 404 and returns nil.
func (s *Server) runOf(w http.ResponseWriter, req *http.Request) (*Run, string) {
	id := chi.URLParam(req, "id")
	run := s.Run(id)
	if run == nil {
		http.Error(w, "no run "+strconv.Quote(id)+"; the open runs are listed at /runs", http.StatusNotFound)
	}
	return run, id
}
