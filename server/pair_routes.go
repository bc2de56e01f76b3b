package server

import (
	"fmt"
	"net/http"
	"strconv"
	"strings"

	"github.com/go-chi/chi/v5"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/session"
	"gyrebench/web"
)

// pairs is the server's pairs.
type pairs struct {
	s *Server
	registry[*Pair]
}

// mountPairs adds the routes of lockstep pairs (pair.go):
//
//	GET  /pairs/new[?run=ID|?scenario=NAME]  the form that starts a pair
//	POST /pairs                              start one (form fields below)
//	GET  /pair/{id}                          the pair's page
//	GET  /pair/{id}/ws                       its websocket
//	GET  /pair/{id}/{a|b}/timeline.toml      a side's recorded timeline
//	GET  /pair/{id}/{a|b}/final.nc           a side's current state
//	GET  /api/pairs                          the pairs, as JSON
func (s *Server) mountPairs(r chi.Router) {
	ps := &pairs{s: s}
	r.Get("/pairs/new", ps.serveNew)
	r.Post("/pairs", ps.create)
	r.Get("/pair/{id}", ps.servePage)
	r.Get("/pair/{id}/ws", ps.serveWS)
	r.Get("/pair/{id}/{side}/timeline.toml", ps.serveSide(timelineFile()))
	r.Get("/pair/{id}/{side}/final.nc", ps.serveSide(finalFile()))
	r.Get("/api/pairs", ps.serveJSON)
}

// start registers a new pair. Its goroutine counts among the server's
// connections, so that Close waits for it.
func (ps *pairs) start(label string, cfg [2]sim.Config) (*Pair, error) {
	s := ps.s
	if err := s.reserve("pairs"); err != nil {
		return nil, err
	}
	id := ps.newID()
	s.mu.Lock()
	if s.closed {
		s.mu.Unlock()
		s.unreserve()
		return nil, fmt.Errorf("the workbench is shutting down")
	}
	s.conns.Add(1)
	s.mu.Unlock()
	p, err := newPair(s.ctx, id, label, cfg, s.runLimits())
	if err != nil {
		s.conns.Done()
		s.unreserve()
		return nil, err
	}
	go func() {
		<-p.Done()
		s.conns.Done()
	}()
	ps.put(id, p)
	return p, nil
}

func (ps *pairs) create(w http.ResponseWriter, req *http.Request) {
	if !sameOrigin(req) {
		http.Error(w, "cross-site request refused: pairs are started from the workbench's own pages", http.StatusForbidden)
		return
	}
	if code, err := parseForm(w, req, pairFormBytes); err != nil {
		ps.renderNew(w, req, "", err.Error(), code)
		return
	}
	f := req.PostForm
	base := f.Get("base")
	_, label, _, cfg, err := ps.s.base(req.Context(), "base", base)
	if err != nil {
		ps.renderNew(w, req, base, err.Error(), http.StatusBadRequest)
		return
	}
	var cfgs [2]sim.Config
	for i, n := range sideNames {
		c := session.Choices{
			Scheme: f.Get(n + ".scheme"), Integrator: f.Get(n + ".integrator"), Dt: f.Get(n + ".dt"),
			Grid: f.Get(n + ".grid"), N: f.Get(n + ".n"), Hodge: f.Get(n + ".hodge"),
			Viscosity: f.Get(n + ".viscosity"), Hyperviscosity: f.Get(n + ".hyperviscosity"),
			DivergenceDamping: f.Get(n + ".divergence_damping"),
		}
		cfgs[i] = cfg
		cfgs[i].Initial.Params = cfg.Initial.Params // shared, read-only
		if err := c.Apply(&cfgs[i]); err != nil {
			ps.renderNew(w, req, base, strings.ToUpper(n)+": "+err.Error(), http.StatusBadRequest)
			return
		}
	}
	p, err := ps.start(label, cfgs)
	if err != nil {
		ps.renderNew(w, req, base, err.Error(), startStatus(err))
		return
	}
	http.Redirect(w, req, "/pair/"+p.ID(), http.StatusSeeOther)
}

func (ps *pairs) serveNew(w http.ResponseWriter, req *http.Request) {
	base := scenarios.Default
	if id := req.URL.Query().Get("run"); id != "" {
		base = "run:" + id
	} else if sc := req.URL.Query().Get("scenario"); sc != "" {
		base = sc
	}
	ps.renderNew(w, req, base, "", http.StatusOK)
}

func (ps *pairs) renderNew(w http.ResponseWriter, req *http.Request, base, msg string, code int) {
	w.WriteHeader(code)
	v := web.PairNewOf(ps.s.baseOptions(base, false), infosOf(&ps.registry, (*Pair).Info), msg)
	v.Watch = ps.s.roles.watch(req)
	render(w, req, web.PairNewPage(v))
}

func (ps *pairs) servePage(w http.ResponseWriter, req *http.Request) {
	p, ok := ps.get(chi.URLParam(req, "id"))
	if !ok {
		http.Error(w, "no pair "+strconv.Quote(chi.URLParam(req, "id"))+"; open pairs are listed at /pairs/new", http.StatusNotFound)
		return
	}
	render(w, req, web.PairPage(web.PairPageOf(p.Info())))
}

func (ps *pairs) serveJSON(w http.ResponseWriter, req *http.Request) {
	serveInfos(w, &ps.registry, (*Pair).Info)
}

// serveSide serves a file made from one side of a pair on the pair's
// goroutine.
func (ps *pairs) serveSide(what sideFile) http.HandlerFunc {
	return func(w http.ResponseWriter, req *http.Request) {
		id, side := chi.URLParam(req, "id"), chi.URLParam(req, "side")
		p, ok := ps.get(id)
		i := strings.Index("ab", side)
		if !ok || len(side) != 1 || i < 0 {
			http.Error(w, fmt.Sprintf("no pair %q with a side %q (sides are a and b)", id, side), http.StatusNotFound)
			return
		}
		var data []byte
		var err error
		if !p.await(req.Context(), func() { data, err = what.make(p.side[i]) }) {
			http.Error(w, "the pair has stopped", http.StatusServiceUnavailable)
			return
		}
		what.serve(w, "pair-"+id+"-"+side, data, err)
	}
}

// serveWS connects a websocket client to a pair (protocol in pair.go).
func (ps *pairs) serveWS(w http.ResponseWriter, req *http.Request) {
	p, ok := ps.get(chi.URLParam(req, "id"))
	if !ok {
		http.Error(w, "no pair "+chi.URLParam(req, "id"), http.StatusNotFound)
		return
	}
	ps.s.serveSocket(w, req, socket{a: p.actor, h: p, tags: pairTags(), sided: true, what: "pair"})
}
