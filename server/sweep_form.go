package server

import (
	"context"
	"errors"
	"fmt"
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
	Base, Vary, Set, Jobs string
}

// sweepBase resolves the form's scenario (Server.base). The config
// returned owns its parameter map.
func (sw *sweeps) sweepBase(ctx context.Context, base string) (label, description string, cfg sim.Config, err error) {
	run, label, description, cfg, err := sw.s.base(ctx, "scenario", base)
	if run != "" {
		label = "run" + run + "-" + label
	}
	return label, description, cfg.Clone(), err
}

// formMessage turns the command line's wording of package sweep's errors
// into the form's: the fields are "vary" and "set".
var formMessage = strings.NewReplacer("e.g. --vary ", "e.g. ", "e.g. --set ", "e.g. ", "--vary", "vary", "--set", "set")

// lines splits a text area into its non-blank lines.
func formLines(s string) []string {
	var out []string
	for _, l := range strings.Split(strings.ReplaceAll(s, "\r", ""), "\n") {
		if l = strings.TrimSpace(l); l != "" {
			out = append(out, l)
		}
	}
	return out
}

// formError is a refusal of the form: the field it is about and the
// message.
type formError struct{ field, msg string }

func (e *formError) Error() string { return e.msg }

func refuseField(field, format string, a ...any) *formError {
	return &formError{field, fmt.Sprintf(format, a...)}
}

// maxJobs is the most runs at once a sweep from the workbench may ask
// for: the core count.
func sweepMaxJobs() int { return runtime.NumCPU() }

// plan validates the form into a plan and a job count. Nothing is
// written.
func (sw *sweeps) plan(ctx context.Context, f sweepForm) (string, *sweep.Plan, int, *formError) {
	jobs := sweepMaxJobs()
	if j := strings.TrimSpace(f.Jobs); j != "" {
		n, err := strconv.Atoi(j)
		if err != nil || n < 1 || n > sweepMaxJobs() {
			return "", nil, 0, refuseField("jobs", "jobs = %q: must be a whole number from 1 to %d (the cores of this machine)", f.Jobs, sweepMaxJobs())
		}
		jobs = n
	}
	label, desc, cfg, err := sw.sweepBase(ctx, f.Base)
	if err != nil {
		return "", nil, 0, refuseField("scenario", "%v", err)
	}
	var axes []sweep.Axis
	total := 1
	var sizes []string
	for _, l := range formLines(f.Vary) {
		a, err := sweep.ParseVary(l)
		if err != nil {
			return "", nil, 0, refuseField("vary", "%s", formMessage.Replace(err.Error()))
		}
		axes = append(axes, a)
		total *= len(a.Values)
		sizes = append(sizes, strconv.Itoa(len(a.Values)))
		if total > MaxSweepRuns {
			return "", nil, 0, refuseField("vary", "vary: the product has more than %d runs (%s); a sweep from the workbench has at most %d (gyrebench sweep on the command line takes up to %d)",
				MaxSweepRuns, strings.Join(sizes, " × "), MaxSweepRuns, sweep.MaxRuns)
		}
	}
	if len(axes) == 0 {
		return "", nil, 0, refuseField("vary", "vary: empty; give at least one line key=v1,v2,..., e.g. grid.n=16,32,64")
	}
	sets := formLines(f.Set)
	p, err := sweep.NewPlan(cfg, label, desc, sets, axes)
	if err != nil {
		msg := formMessage.Replace(err.Error())
		field := "vary"
		if strings.HasPrefix(msg, "set") {
			field = "set"
		}
		return "", nil, 0, refuseField(field, "%s", msg)
	}
	for _, r := range p.Runs {
		cells, err := r.Config.MeshSpec().Cells()
		if err != nil {
			return "", nil, 0, refuseField("vary", "vary %s: %v", sweep.ChoicesText(r.Choices), err)
		}
		if cells > session.MaxLiveCells {
			return "", nil, 0, refuseField("vary", "vary %s: grid.kind = %s, grid.n = %d gives %d cells, more than a sweep from the workbench allows in one run (%d); lower grid.n, or use gyrebench sweep on the command line",
				sweep.ChoicesText(r.Choices), r.Config.Grid.Kind, r.Config.Grid.N, cells, session.MaxLiveCells)
		}
	}
	return label, p, jobs, nil
}

func (sw *sweeps) create(w http.ResponseWriter, req *http.Request) {
	if !sameOrigin(req) {
		http.Error(w, "cross-site request refused: sweeps are started from the workbench's own pages", http.StatusForbidden)
		return
	}
	if code, err := parseForm(w, req, sweepFormBytes); err != nil {
		sw.renderNew(w, req, sweepForm{Base: scenarios.Default}, &formError{"form", err.Error()}, code)
		return
	}
	pf := req.PostForm
	f := sweepForm{Base: pf.Get("scenario"), Vary: strings.Join(pf["vary"], "\n"), Set: strings.Join(pf["set"], "\n"), Jobs: pf.Get("jobs")}
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
		sw.renderNew(w, req, f, &formError{"", err.Error()}, code)
		return
	}
	http.Redirect(w, req, "/sweep/"+j.ID(), http.StatusSeeOther)
}

func (sw *sweeps) serveNew(w http.ResponseWriter, req *http.Request) {
	f := sweepForm{Base: scenarios.Default, Jobs: strconv.Itoa(sweepMaxJobs())}
	q := req.URL.Query()
	if id := q.Get("run"); id != "" {
		f.Base = "run:" + id
	} else if sc := q.Get("scenario"); sc != "" {
		f.Base = sc
	}
	sw.renderNew(w, req, f, nil, http.StatusOK)
}

func (sw *sweeps) renderNew(w http.ResponseWriter, req *http.Request, f sweepForm, ferr *formError, code int) {
	v := web.SweepNewView{
		Vary: f.Vary, Set: f.Set, Jobs: f.Jobs, JobsMax: sweepMaxJobs(),
		MaxRuns: MaxSweepRuns, MaxCells: session.MaxLiveCells, MaxSweeps: MaxSweeps, Root: sw.rootShown(),
	}
	if ferr != nil {
		v.Message, v.Field = ferr.msg, ferr.field
	}
	v.Bases = sw.s.baseOptions(f.Base, true)
	for _, j := range sw.list() {
		in := j.Status()
		v.Sweeps = append(v.Sweeps, web.SweepRow{ID: in.ID, Scenario: in.Scenario, Vary: varyText(in.Vary),
			State: in.State, Progress: fmt.Sprintf("%d / %d", in.Done, in.Total), Dir: in.Dir})
		if !in.Ended() {
			v.Running = in.ID
		}
	}
	w.WriteHeader(code)
	render(w, req, web.SweepNewPage(v))
}

func varyText(axes []sweep.Axis) string {
	var s []string
	for _, a := range axes {
		s = append(s, a.Key+" = "+strings.Join(a.Values, ", "))
	}
	return strings.Join(s, "; ")
}
