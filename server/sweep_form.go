package server

import (
	"context"
	"errors"
	"net/http"
	"runtime"
	"strconv"
	"strings"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/session"
	"gyrebench/sim/sweep"
	"gyrebench/web"
)

// sweepForm is what the user typed, kept to re-render the form.
type sweepForm struct {
	Base string
	sweep.Form
}

// maxJobs is the most runs at once a sweep from the workbench may ask
// for: the core count.
func sweepMaxJobs() int { return runtime.NumCPU() }

// plan validates the form (sweep.PlanForm) with the base resolved by
// Server.base. Nothing is written.
func (sw *sweeps) plan(ctx context.Context, f sweepForm) (string, *sweep.Plan, int, *sweep.FormError) {
	var label string
	p, jobs, err := sweep.PlanForm(f.Form, sweep.FormLimits{Jobs: sweepMaxJobs(), Runs: MaxSweepRuns, Cells: session.MaxLiveCells},
		func() (sim.Config, string, string, error) {
			run, l, desc, cfg, err := sw.s.base(ctx, "scenario", f.Base)
			if label = l; run != "" {
				label = "run" + run + "-" + l
			}
			return cfg.Clone(), label, desc, err
		})
	return label, p, jobs, err
}

func (sw *sweeps) create(w http.ResponseWriter, req *http.Request) {
	if !sameOrigin(req) {
		http.Error(w, "cross-site request refused: sweeps are started from the workbench's own pages", http.StatusForbidden)
		return
	}
	if code, err := parseForm(w, req, sweepFormBytes); err != nil {
		sw.renderNew(w, req, sweepForm{Base: scenarios.Default}, &sweep.FormError{Field: "form", Msg: err.Error()}, code)
		return
	}
	pf := req.PostForm
	f := sweepForm{pf.Get("scenario"), sweep.Form{Vary: strings.Join(pf["vary"], "\n"), Set: strings.Join(pf["set"], "\n"), Jobs: pf.Get("jobs")}}
	label, p, jobs, ferr := sw.plan(req.Context(), f)
	if ferr != nil {
		sw.renderNew(w, req, f, ferr, http.StatusBadRequest)
		return
	}
	j, err := sw.start(label, p, jobs)
	if err != nil {
		code := http.StatusInternalServerError
		var busy errBusy
		if errors.As(err, &busy) {
			code = http.StatusConflict
		}
		sw.renderNew(w, req, f, &sweep.FormError{Msg: err.Error()}, code)
		return
	}
	http.Redirect(w, req, "/sweep/"+j.ID(), http.StatusSeeOther)
}

func (sw *sweeps) serveNew(w http.ResponseWriter, req *http.Request) {
	f := sweepForm{Base: scenarios.Default, Form: sweep.Form{Jobs: strconv.Itoa(sweepMaxJobs())}}
	q := req.URL.Query()
	if id := q.Get("run"); id != "" {
		f.Base = "run:" + id
	} else if sc := q.Get("scenario"); sc != "" {
		f.Base = sc
	}
	sw.renderNew(w, req, f, nil, http.StatusOK)
}

func (sw *sweeps) renderNew(w http.ResponseWriter, req *http.Request, f sweepForm, ferr *sweep.FormError, code int) {
	v := web.SweepNewView{
		Vary: f.Vary, Set: f.Set, Jobs: f.Jobs, JobsMax: sweepMaxJobs(),
		MaxRuns: MaxSweepRuns, MaxCells: session.MaxLiveCells, MaxSweeps: MaxSweeps, Root: sw.rootShown(),
	}
	if ferr != nil {
		v.Message, v.Field = ferr.Msg, ferr.Field
	}
	v.Watch = sw.s.roles.watch(req)
	v.Bases = sw.s.baseOptions(f.Base, true)
	for _, j := range sw.list() {
		in := j.Status()
		v.Sweeps = append(v.Sweeps, web.SweepRowOf(in))
		if !in.Ended() {
			v.Running = in.ID
		}
	}
	w.WriteHeader(code)
	render(w, req, web.SweepNewPage(v))
}
