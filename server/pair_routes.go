package server

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
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

// pairChoice is one side's form fields; empty means the base's choice.
type pairChoice struct{ Scheme, Integrator, Dt, Grid, N, Hodge string }

// pairBase resolves the form's base: "run:ID" (that run's current
// choices, from its initial state) or a built-in scenario name.
func (ps *pairs) pairBase(ctx context.Context, base string) (string, sim.Config, error) {
	if id, ok := strings.CutPrefix(base, "run:"); ok {
		r := ps.s.Run(id)
		if r == nil {
			return "", sim.Config{}, fmt.Errorf("base = %q: no run %s", base, id)
		}
		cfg, label, ok := r.choices(ctx)
		if !ok {
			return "", sim.Config{}, fmt.Errorf("base = %q: run %s has stopped", base, id)
		}
		return label, cfg, nil
	}
	if _, err := scenarios.Source(base); err != nil {
		return "", sim.Config{}, fmt.Errorf("base = %q: neither a built-in scenario (%s) nor an open run", base, strings.Join(scenarios.Names(), ", "))
	}
	return loadScenario(base)
}

// applyChoice sets one side's choices on cfg; its errors name the side
// and the field.
func applyChoice(cfg *sim.Config, side string, c pairChoice) error {
	if c.Scheme != "" {
		cfg.Scheme.Name = c.Scheme
	}
	if c.Integrator != "" {
		cfg.Time.Integrator = c.Integrator
	}
	if c.Dt != "" {
		dt, err := strconv.ParseFloat(strings.TrimSpace(c.Dt), 64)
		if err != nil || !(dt > 0) || math.IsInf(dt, 0) {
			return fmt.Errorf("%s: time.dt = %q: must be a positive number of seconds", side, c.Dt)
		}
		cfg.Time.Dt = dt
	}
	if c.Grid != "" && c.Grid != cfg.Grid.Kind {
		if !contains(session.GridKinds(), c.Grid) {
			return fmt.Errorf("%s: grid.kind = %q: not a grid the workbench offers; allowed: %s", side, c.Grid, strings.Join(session.GridKinds(), ", "))
		}
		cfg.Grid.SetKind(c.Grid)
		cfg.Grid.Height = 0
	}
	if c.Hodge != "" {
		if !contains(session.HodgeStars(), c.Hodge) {
			return fmt.Errorf("%s: scheme.hodge = %q: unknown Hodge star; allowed: %s", side, c.Hodge, strings.Join(session.HodgeStars(), ", "))
		}
		cfg.Scheme.Hodge = c.Hodge
	}
	if c.N != "" {
		n, err := strconv.Atoi(strings.TrimSpace(c.N))
		if err != nil {
			return fmt.Errorf("%s: grid.n = %q: must be a whole number", side, c.N)
		}
		cfg.Grid.N = n
	}
	if err := cfg.Validate(); err != nil {
		return fmt.Errorf("%s: %w", side, err)
	}
	if err := session.CheckLiveConfig(*cfg); err != nil {
		return fmt.Errorf("%s: %w", side, err)
	}
	return nil
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
	label, cfg, err := ps.pairBase(req.Context(), base)
	if err != nil {
		ps.renderNew(w, req, base, err.Error(), http.StatusBadRequest)
		return
	}
	var cfgs [2]sim.Config
	for i, n := range sideNames {
		c := pairChoice{f.Get(n + ".scheme"), f.Get(n + ".integrator"), f.Get(n + ".dt"), f.Get(n + ".grid"), f.Get(n + ".n"), f.Get(n + ".hodge")}
		cfgs[i] = cfg
		cfgs[i].Initial.Params = cfg.Initial.Params // shared, read-only
		if err := applyChoice(&cfgs[i], strings.ToUpper(n), c); err != nil {
			ps.renderNew(w, req, base, err.Error(), http.StatusBadRequest)
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
	var bases []web.Option
	for _, r := range ps.s.Runs() {
		in := r.Info()
		v := "run:" + in.ID
		bases = append(bases, web.Option{Value: v, Label: fmt.Sprintf("run %s now: %s, %s n = %d, %s", in.ID, in.Scenario, in.Grid, in.N, in.Scheme), Title: "the run's current choices, from its initial state", Selected: v == base})
	}
	for _, o := range ps.s.scenarioOptions(base) {
		o.Label = "scenario " + o.Label
		bases = append(bases, o)
	}
	same := web.Option{Value: "", Label: "as the base", Selected: true}
	v := web.PairNewView{
		Bases:       bases,
		Schemes:     append([]web.Option{same}, schemeOptions("")...),
		Integrators: append([]web.Option{same}, options(session.Integrators(), integratorLabels, "")...),
		Grids:       append([]web.Option{same}, options(session.GridKinds(), gridLabels, "")...),
		Message:     msg,
	}
	for _, p := range ps.list() {
		in := p.Info()
		v.Pairs = append(v.Pairs, web.PairRow{ID: in.ID, Title: in.Title, A: sideSummary(in.Sides[0]), B: sideSummary(in.Sides[1]), State: in.State})
	}
	w.WriteHeader(code)
	render(w, req, web.PairNewPage(v))
}

func sideSummary(in RunInfo) string {
	return fmt.Sprintf("%s n = %d · %s · %s · Δt = %g s", in.Grid, in.N, in.Scheme, in.Integrator, in.Dt)
}

func (ps *pairs) servePage(w http.ResponseWriter, req *http.Request) {
	p, ok := ps.get(chi.URLParam(req, "id"))
	if !ok {
		http.Error(w, "no pair "+strconv.Quote(chi.URLParam(req, "id"))+"; open pairs are listed at /pairs/new", http.StatusNotFound)
		return
	}
	in := p.Info()
	var fields []web.Option
	for _, f := range fieldDefs {
		fields = append(fields, web.Option{Value: f.Name, Label: f.Label + " (" + f.Units + ")", Title: f.Name, Selected: f.Name == in.Sides[0].Field})
	}
	v := web.PairView{ID: in.ID, Title: in.Title, Scenario: in.Scenario, Fields: fields, State: in.State}
	for i, s := range in.Sides {
		v.Sides[i] = web.PairSide{
			Side:        sideNames[i],
			Name:        strings.ToUpper(sideNames[i]),
			Schemes:     schemeOptions(s.Scheme),
			Integrators: options(session.Integrators(), integratorLabels, s.Integrator),
			Grids:       options(session.GridKinds(), gridLabels, s.Grid),
			Dt:          strconv.FormatFloat(s.Dt, 'g', -1, 64),
			N:           strconv.Itoa(s.N),
			Summary:     sideSummary(s),
		}
	}
	render(w, req, web.PairPage(v))
}

func (ps *pairs) serveJSON(w http.ResponseWriter, req *http.Request) {
	infos := []PairInfo{}
	for _, p := range ps.list() {
		infos = append(infos, p.Info())
	}
	w.Header().Set("Content-Type", "application/json")
	_ = json.NewEncoder(w).Encode(infos)
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
	ps.s.serveSocket(w, req, socket{a: p.actor, h: p, tags: pairTags, sided: true, what: "pair"})
}
