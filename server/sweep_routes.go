package server

import (
	"archive/zip"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/go-chi/chi/v5"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/batch"
	"gyrebench/sim/scenario"
	"gyrebench/sim/session"
	"gyrebench/sim/sweep"
	"gyrebench/web"
)

// Sweeps launched from the workbench. Package sim/sweep plans, runs and
// assembles them (as `gyrebench sweep` does); this file only orchestrates:
// a small registry, one goroutine per sweep under the server's context,
// its progress as a stream, and the files it wrote.
const (
	// MaxSweeps is how many sweeps the workbench lists; starting another
	// drops the oldest ended one from the list (its folder stays on disk).
	MaxSweeps = 4
	// MaxSweepRuns bounds the product of one sweep started from the
	// workbench; the command line allows sweep.MaxRuns.
	MaxSweepRuns = 64
	// sweepFormBytes bounds the new-sweep form.
	sweepFormBytes = 16 << 10
	// sweepKeepAlive is the interval of comments on an idle progress
	// stream, so that a vanished client is noticed.
	sweepKeepAlive = 20 * time.Second
)

// Sweep states.
const (
	sweepRunning  = "running"
	sweepStopping = "stopping" // Stop pressed; runs in flight are writing their files
	sweepFinished = "finished" // every run ran (some may have blown up); sweep.csv and the plots are written
	sweepStopped  = "stopped"  // stopped before the end; the finished runs are in their folders
	sweepFailed   = "failed"   // an error other than a blow-up ended it
)

// Run states within a sweep.
const (
	runWaiting     = "waiting"
	runRunning     = "running"
	runDone        = "done"
	runBlownUp     = "blown-up"
	runInterrupted = "interrupted"
	runFailed      = "failed"
	runSkipped     = "not run" // the sweep ended before its turn
)

// runOutputs are the files of a run folder (batch.Run) that the
// workbench serves; nothing else in a run folder is reachable.
var runOutputs = []string{"summary.json", "series.csv", "recipe.toml", "final.nc", "snapshots.nc"}

// sweeps is the registry of a server's sweeps.
type sweeps struct {
	s     *Server
	mu    sync.Mutex
	byID  map[string]*sweepJob
	order []string // oldest first
	next  int
}

// sweepJob is one sweep: its plan, its folder and its progress. The
// fields above mu never change after start.
type sweepJob struct {
	id, scenario string
	plan         *sweep.Plan
	jobs         int
	started      time.Time
	cancel       context.CancelFunc
	done         chan struct{} // closed when Execute has returned

	mu          sync.Mutex
	dir         string // absolute; set once the folder exists
	state       string
	ended       time.Time
	runs        []SweepRunInfo
	finished    int // runs that have ended, however
	blewUp      int
	interrupted int
	message     string
	result      *sweep.Result
	changed     chan struct{} // closed and replaced on every change
}

// SweepRunInfo is one run of a sweep, as the progress stream and the
// JSON endpoint report it.
type SweepRunInfo struct {
	Index   int      `json:"index"`
	Name    string   `json:"dir"`
	Choices string   `json:"choices"`
	State   string   `json:"state"` // waiting, running, done, blown-up, interrupted, failed
	Steps   int64    `json:"steps"`
	WallS   float64  `json:"wall_s"`
	L2H     *float64 `json:"l2_h,omitempty"`
	Message string   `json:"message,omitempty"`
}

// SweepInfo is a snapshot of a sweep: GET /api/sweep/{id} and every
// message of its progress stream.
type SweepInfo struct {
	ID          string         `json:"id"`
	Scenario    string         `json:"scenario"`
	Vary        []sweep.Axis   `json:"vary"`
	Sets        []string       `json:"set"`
	Dir         string         `json:"dir"`
	Jobs        int            `json:"jobs"`
	State       string         `json:"state"`
	Done        int            `json:"done"` // runs ended, however
	Total       int            `json:"total"`
	BlewUp      int            `json:"blew_up"`
	Interrupted int            `json:"interrupted"`
	Started     time.Time      `json:"started"`
	ElapsedS    float64        `json:"elapsed_s"`
	Message     string         `json:"message,omitempty"`
	Runs        []SweepRunInfo `json:"runs"`
	Files       []string       `json:"files"` // sweep.csv, sweep.json and the plots, once finished
	Fits        []sweep.Fit    `json:"fits"`
}

func (in SweepInfo) ended() bool {
	return in.State != sweepRunning && in.State != sweepStopping
}

// mountSweeps adds the routes of sweeps:
//
//	GET  /sweeps/new[?run=ID|?scenario=NAME]  the sweeps and the form that starts one
//	GET  /sweeps                              the same page
//	POST /sweeps                              start one (scenario, vary, set, jobs)
//	GET  /sweep/{id}                          its page: progress, then the plots
//	GET  /sweep/{id}/events                   its progress (server-sent events, JSON SweepInfo)
//	GET  /sweep/{id}/results                  the results part of its page (HTML), once ended
//	POST /sweep/{id}/stop                     stop it; runs in flight write their files so far
//	GET  /sweep/{id}/file/{name}              a file the sweep wrote (sweep.csv, the plots, ...)
//	GET  /sweep/{id}/run/{run}/{name}         a run folder's file (summary.json, series.csv, ...)
//	GET  /sweep/{id}/sweep.zip                the sweep folder's files as one zip
//	GET  /api/sweeps, /api/sweep/{id}         the sweeps as JSON
func (s *Server) mountSweeps(r chi.Router) {
	sw := &sweeps{s: s, byID: map[string]*sweepJob{}}
	r.Get("/sweeps", sw.serveNew)
	r.Get("/sweeps/new", sw.serveNew)
	r.Post("/sweeps", sw.create)
	r.Get("/sweep/{id}", sw.servePage)
	r.Get("/sweep/{id}/events", sw.serveEvents)
	r.Get("/sweep/{id}/results", sw.serveResults)
	r.Post("/sweep/{id}/stop", sw.serveStop)
	r.Get("/sweep/{id}/file/{name}", sw.serveFile)
	r.Get("/sweep/{id}/run/{run}/{name}", sw.serveRunFile)
	r.Get("/sweep/{id}/sweep.zip", sw.serveZip)
	r.Get("/api/sweeps", sw.serveListJSON)
	r.Get("/api/sweep/{id}", sw.serveJSON)
}

func (sw *sweeps) get(id string) *sweepJob {
	sw.mu.Lock()
	defer sw.mu.Unlock()
	return sw.byID[id]
}

func (sw *sweeps) list() []*sweepJob {
	sw.mu.Lock()
	defer sw.mu.Unlock()
	out := make([]*sweepJob, 0, len(sw.order))
	for _, id := range sw.order {
		out = append(out, sw.byID[id])
	}
	return out
}

// root is the folder that holds the sweep folders, created here.
func (sw *sweeps) root() (string, error) {
	dir := sw.s.opt.SweepDir
	if dir == "" {
		cache, err := os.UserCacheDir()
		if err != nil {
			return "", fmt.Errorf("sweeps: no user cache folder to write sweeps into (%v); start the workbench with --sweeps DIR", err)
		}
		dir = filepath.Join(cache, "gyrebench", "sweeps")
	}
	dir, err := filepath.Abs(dir)
	if err != nil {
		return "", fmt.Errorf("--sweeps %s: %w", dir, err)
	}
	return dir, nil
}

// rootShown is the root for the page, or a note why there is none.
func (sw *sweeps) rootShown() string {
	dir, err := sw.root()
	if err != nil {
		return err.Error()
	}
	return dir
}

// newFolder creates a fresh folder for a sweep under the root: the start
// time and the scenario's name, with -2, -3, ... when that exists. An
// existing folder is never reused.
func newSweepFolder(root, label string, now time.Time) (string, error) {
	if err := os.MkdirAll(root, 0o755); err != nil {
		return "", fmt.Errorf("--sweeps %s: %w", root, err)
	}
	var b strings.Builder
	for _, r := range label {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '-', r == '_', r == '.':
			b.WriteRune(r)
		default:
			b.WriteByte('_')
		}
	}
	name := strings.Trim(b.String(), ".")
	if len(name) > 48 {
		name = name[:48]
	}
	base := now.Format("20060102-150405") + "-" + name
	for i := 1; i <= 1000; i++ {
		p := filepath.Join(root, base)
		if i > 1 {
			p += "-" + strconv.Itoa(i)
		}
		err := os.Mkdir(p, 0o755)
		if err == nil {
			return p, nil
		}
		if !errors.Is(err, os.ErrExist) {
			return "", fmt.Errorf("sweep folder %s: %w", p, err)
		}
	}
	return "", fmt.Errorf("sweep folder %s: 1000 folders of that name exist already", filepath.Join(root, base))
}

// errBusy says a sweep is running already.
type errBusy struct{ id string }

func (e errBusy) Error() string {
	return fmt.Sprintf("sweep %s is running; the workbench runs one sweep at a time: stop it or wait until it ends", e.id)
}

// start registers and starts a sweep of plan, in a new folder under the
// root. The sweep's goroutine counts among the server's connections, so
// that Close waits for its runs to write their files.
func (sw *sweeps) start(label string, plan *sweep.Plan, jobs int) (*sweepJob, error) {
	s := sw.s
	root, err := sw.root()
	if err != nil {
		return nil, err
	}
	sw.mu.Lock()
	for _, id := range sw.order {
		if !sw.byID[id].info().ended() {
			sw.mu.Unlock()
			return nil, errBusy{id}
		}
	}
	s.mu.Lock()
	if s.closed {
		s.mu.Unlock()
		sw.mu.Unlock()
		return nil, errors.New("the workbench is shutting down")
	}
	s.conns.Add(1)
	s.mu.Unlock()
	sw.next++
	now := time.Now()
	ctx, cancel := context.WithCancel(s.ctx)
	j := &sweepJob{
		id: strconv.Itoa(sw.next), scenario: label, plan: plan, jobs: jobs, started: now, cancel: cancel,
		done: make(chan struct{}), state: sweepRunning, changed: make(chan struct{}),
	}
	for _, r := range plan.Runs {
		j.runs = append(j.runs, SweepRunInfo{Index: r.Index, Name: r.Name, Choices: choicesText(r.Choices), State: runWaiting})
	}
	// Reserve the slot before touching the disk, so that two posts at
	// once cannot start two sweeps.
	for len(sw.order) >= MaxSweeps {
		sw.dropOldest()
	}
	sw.byID[j.id] = j
	sw.order = append(sw.order, j.id)
	sw.mu.Unlock()

	dir, err := newSweepFolder(root, label, now)
	if err != nil {
		sw.mu.Lock()
		delete(sw.byID, j.id)
		sw.order = dropID(sw.order, j.id)
		sw.mu.Unlock()
		cancel()
		s.conns.Done()
		return nil, err
	}
	j.mu.Lock()
	j.dir = dir
	j.mu.Unlock()
	go func() {
		defer s.conns.Done()
		defer close(j.done)
		defer cancel()
		res, out, err := sweep.Execute(ctx, plan, dir, sweep.Options{
			Jobs: jobs, Workers: 1, Done: j.runEnded, Started: j.runStarted,
			Setup: lowPriority, // live runs and their watchers come first
		})
		j.end(res, out, err)
	}()
	return j, nil
}

// dropOldest forgets the oldest ended sweep; sw.mu is held and every
// listed sweep has ended (start checked).
func (sw *sweeps) dropOldest() {
	id := sw.order[0]
	delete(sw.byID, id)
	sw.order = sw.order[1:]
}

func dropID(list []string, s string) []string {
	out := list[:0]
	for _, x := range list {
		if x != s {
			out = append(out, x)
		}
	}
	return out
}

func choicesText(cs []sweep.Choice) string {
	var s []string
	for _, c := range cs {
		s = append(s, c.Key+"="+c.Value)
	}
	return strings.Join(s, ", ")
}

// markNotRun marks, once the sweep has ended, the runs that never
// started. j.mu is held (or j is not yet shared).
func (j *sweepJob) markNotRun() {
	if j.state == sweepRunning || j.state == sweepStopping {
		return
	}
	for i := range j.runs {
		if r := &j.runs[i]; r.State == runWaiting || r.State == runRunning {
			r.State = runSkipped
		}
	}
}

// runStarted is Execute's Started callback (serialised by Execute).
func (j *sweepJob) runStarted(r *sweep.Run) {
	j.mu.Lock()
	defer j.mu.Unlock()
	j.runs[r.Index].State = runRunning
	j.changedLocked()
}

// changedLocked wakes the progress streams; j.mu is held.
func (j *sweepJob) changedLocked() {
	close(j.changed)
	j.changed = make(chan struct{})
}

// runEnded is Execute's Done callback (serialised by Execute).
func (j *sweepJob) runEnded(done, total int, r *sweep.Run, sum *batch.Summary, err error) {
	j.mu.Lock()
	defer j.mu.Unlock()
	ri := &j.runs[r.Index]
	var bu *sim.BlowUpError
	switch {
	case err == nil:
		ri.State = runDone
	case errors.As(err, &bu):
		ri.State, ri.Message = runBlownUp, err.Error()
		j.blewUp++
	case errors.Is(err, batch.ErrInterrupted):
		ri.State, ri.Message = runInterrupted, "stopped: its files hold everything up to the last step"
		j.interrupted++
	default:
		ri.State, ri.Message = runFailed, err.Error()
	}
	if sum != nil {
		ri.Steps, ri.WallS, ri.L2H = sum.Steps, sum.WallSeconds, sum.L2H
	}
	j.finished = done
	j.changedLocked()
}

// end records Execute's result.
func (j *sweepJob) end(res *sweep.Result, out sweep.Outcome, err error) {
	j.mu.Lock()
	defer j.mu.Unlock()
	j.ended = time.Now()
	switch {
	case err == nil:
		j.state, j.result = sweepFinished, res
		if out.BlewUp > 0 {
			j.message = fmt.Sprintf("%d of %d runs blew up (blew_up in %s); every file is written", out.BlewUp, out.Runs, sweep.CSVFile)
		}
	case errors.Is(err, batch.ErrInterrupted):
		j.state = sweepStopped
		j.message = fmt.Sprintf("stopped after %d of %d runs had finished; a run in flight when it stopped wrote its files up to its last step (interrupted in its summary.json); no sweep.csv or plot was made",
			j.finished-out.Interrupted, out.Runs)
	default:
		j.state, j.message = sweepFailed, err.Error()
	}
	j.markNotRun() // no run is in flight any more
	j.changedLocked()
}

// stop cancels a running sweep; it reports whether it was running.
func (j *sweepJob) stop() bool {
	j.mu.Lock()
	defer j.mu.Unlock()
	if j.state != sweepRunning {
		return false
	}
	j.state = sweepStopping
	j.cancel()
	j.changedLocked()
	return true
}

// snapshot returns the sweep's state and a channel closed on its next
// change.
func (j *sweepJob) snapshot() (SweepInfo, <-chan struct{}) {
	j.mu.Lock()
	defer j.mu.Unlock()
	end := j.ended
	if end.IsZero() {
		end = time.Now()
	}
	in := SweepInfo{
		ID: j.id, Scenario: j.scenario, Vary: j.plan.Axes, Sets: j.plan.Sets, Dir: j.dir, Jobs: j.jobs,
		State: j.state, Done: j.finished, Total: len(j.runs), BlewUp: j.blewUp, Interrupted: j.interrupted,
		Started: j.started, ElapsedS: end.Sub(j.started).Seconds(), Message: j.message,
		Runs: append([]SweepRunInfo(nil), j.runs...), Files: []string{}, Fits: []sweep.Fit{},
	}
	if in.Sets == nil {
		in.Sets = []string{}
	}
	if j.result != nil {
		in.Files = append(in.Files, j.result.Files...)
		if j.result.Fits != nil {
			in.Fits = j.result.Fits
		}
	}
	return in, j.changed
}

func (j *sweepJob) info() SweepInfo {
	in, _ := j.snapshot()
	return in
}

// ---- the form ----

// sweepForm is what the user typed, kept to re-render the form.
type sweepForm struct {
	Base, Vary, Set, Jobs string
}

// sweepBase resolves the form's scenario: "run:ID" (that run's current
// choices, as the pair form takes them) or a built-in scenario name.
// The config returned owns its parameter map.
func (sw *sweeps) sweepBase(ctx context.Context, base string) (label, description string, cfg sim.Config, err error) {
	if id, ok := strings.CutPrefix(base, "run:"); ok {
		r := sw.s.Run(id)
		if r == nil {
			return "", "", cfg, fmt.Errorf("scenario = %q: no run %s is open; the open runs are listed at /runs", base, id)
		}
		if cfg, label, ok = r.choices(ctx); !ok {
			return "", "", cfg, fmt.Errorf("scenario = %q: run %s has stopped", base, id)
		}
		return "run" + id + "-" + label, "", cfg.Clone(), nil
	}
	src, err := scenarios.Source(base)
	if err != nil {
		return "", "", cfg, fmt.Errorf("scenario = %q: neither a built-in scenario (%s) nor an open run (run:ID)", base, strings.Join(scenarios.Names(), ", "))
	}
	sc, err := scenario.Parse(src, base+".toml")
	if err != nil {
		return "", "", cfg, fmt.Errorf("scenario = %q: %w", base, err)
	}
	return base, sc.Description, sc.Config.Clone(), nil
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
			return "", nil, 0, refuseField("vary", "vary %s: %v", choicesText(r.Choices), err)
		}
		if cells > session.MaxLiveCells {
			return "", nil, 0, refuseField("vary", "vary %s: grid.kind = %s, grid.n = %d gives %d cells, more than a sweep from the workbench allows in one run (%d); lower grid.n, or use gyrebench sweep on the command line",
				choicesText(r.Choices), r.Config.Grid.Kind, r.Config.Grid.N, cells, session.MaxLiveCells)
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
	http.Redirect(w, req, "/sweep/"+j.id, http.StatusSeeOther)
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
	for _, r := range sw.s.Runs() {
		in := r.Info()
		val := "run:" + in.ID
		v.Bases = append(v.Bases, web.Option{Value: val, Label: fmt.Sprintf("run %s now: %s, %s n = %d, %s, Δt = %g s", in.ID, in.Scenario, in.Grid, in.N, in.Scheme, in.Dt),
			Title: "the run's current choices, from its initial state", Selected: val == f.Base})
	}
	for _, o := range sw.s.scenarioOptions(f.Base) {
		o.Label = "scenario " + o.Label
		v.Bases = append(v.Bases, o)
	}
	for _, j := range sw.list() {
		in := j.info()
		v.Sweeps = append(v.Sweeps, web.SweepRow{ID: in.ID, Scenario: in.Scenario, Vary: varyText(in.Vary),
			State: in.State, Progress: fmt.Sprintf("%d / %d", in.Done, in.Total), Dir: in.Dir})
		if !in.ended() {
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

// ---- a sweep's page ----

func (sw *sweeps) job(w http.ResponseWriter, req *http.Request) *sweepJob {
	id := chi.URLParam(req, "id")
	j := sw.get(id)
	if j == nil {
		http.Error(w, "no sweep "+strconv.Quote(id)+"; the workbench's sweeps are listed at /sweeps", http.StatusNotFound)
	}
	return j
}

func (sw *sweeps) servePage(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.info()
	v := web.SweepView{
		ID: in.ID, Scenario: in.Scenario, Dir: in.Dir, State: in.State, Message: in.Message,
		Jobs: in.Jobs, Done: in.Done, Total: in.Total, BlewUp: in.BlewUp,
		ElapsedS: strconv.FormatFloat(in.ElapsedS, 'f', 1, 64), Elapsed: fmtWallTime(in.ElapsedS),
		Ended: in.ended(),
	}
	for _, a := range in.Vary {
		v.Vary = append(v.Vary, a.Key+" = "+strings.Join(a.Values, ", "))
	}
	v.Sets = in.Sets
	for _, r := range in.Runs {
		v.Runs = append(v.Runs, sweepRunRow(in.ID, r))
	}
	if in.ended() {
		v.Results = j.results(in)
	}
	render(w, req, web.SweepPage(v))
}

func sweepRunRow(id string, r SweepRunInfo) web.SweepRunRow {
	row := web.SweepRunRow{Index: r.Index, Name: r.Name, Choices: r.Choices, State: r.State, Message: r.Message}
	if r.State != runWaiting && r.State != runRunning && r.State != runSkipped {
		row.Steps = strconv.FormatInt(r.Steps, 10)
		row.Wall = fmtWallTime(r.WallS)
		if r.L2H != nil {
			row.L2 = expNum(*r.L2H, 3)
		}
		for _, f := range []string{"summary.json", "series.csv", "final.nc", "recipe.toml"} {
			row.Files = append(row.Files, web.Link{Label: f, Href: runFileURL(id, r.Name, f)})
		}
	}
	return row
}

func runFileURL(id, run, name string) string {
	return "/sweep/" + id + "/run/" + url.PathEscape(run) + "/" + name
}

// expNum writes x in e-notation with prec digits after the point and
// the exponent without a leading zero, as the page's script does.
func expNum(x float64, prec int) string {
	s := strconv.FormatFloat(x, 'e', prec, 64)
	return strings.NewReplacer("e-0", "e-", "e+0", "e+").Replace(s)
}

func fmtWallTime(s float64) string {
	switch {
	case s < 10:
		return strconv.FormatFloat(s, 'f', 2, 64) + " s"
	case s < 60:
		return strconv.FormatFloat(s, 'f', 1, 64) + " s"
	case s < 3600:
		return fmt.Sprintf("%d min %02d s", int(s)/60, int(s)%60)
	default:
		return fmt.Sprintf("%d h %02d min", int(s)/3600, int(s)%3600/60)
	}
}

// results is the results part of an ended sweep's page.
func (j *sweepJob) results(in SweepInfo) *web.SweepResults {
	r := &web.SweepResults{ID: in.ID, State: in.State, Zip: "/sweep/" + in.ID + "/sweep.zip", Dir: in.Dir}
	if in.State != sweepFinished {
		return r
	}
	file := func(name string) string { return "/sweep/" + in.ID + "/file/" + name }
	has := map[string]bool{}
	for _, f := range in.Files {
		has[f] = true
	}
	r.CSV, r.JSON = file(sweep.CSVFile), file(sweep.JSONFile)
	for _, p := range []struct{ base, title string }{
		{"error", "l2 depth error against grid spacing, with the fitted l2 and l∞ orders"},
		{"energy-drift", "relative energy drift against time"},
		{"enstrophy-drift", "relative potential-enstrophy drift against time"},
	} {
		if has[p.base+".png"] {
			r.Plots = append(r.Plots, web.SweepPlot{Name: p.base, Title: p.title, PNG: file(p.base + ".png"), SVG: file(p.base + ".svg")})
		}
	}
	for _, f := range in.Fits {
		var g []string
		for _, c := range f.Group {
			g = append(g, c.Key+"="+c.Value)
		}
		group := strings.Join(g, ", ")
		if group == "" {
			group = "all runs"
		}
		var sp []string
		for _, x := range f.SpacingM {
			sp = append(sp, strconv.FormatFloat(x/1000, 'f', 1, 64))
		}
		r.Fits = append(r.Fits, web.SweepFit{Group: group, Order: strconv.FormatFloat(f.Order, 'f', 2, 64), OrderLInf: strconv.FormatFloat(f.OrderLInf, 'f', 2, 64), Runs: len(f.Runs), Spacings: strings.Join(sp, ", ")})
	}
	j.mu.Lock()
	res := j.result
	j.mu.Unlock()
	if res != nil {
		r.Keys = res.Keys
		for _, row := range res.Rows {
			sr := web.SweepResultRow{Run: row.Run, Cells: strconv.Itoa(row.Cells),
				Spacing: strconv.FormatFloat(row.SpacingM/1000, 'f', 1, 64), BlewUp: row.BlewUp,
				Energy: expNum(row.EnergyDrift, 2), Enstrophy: expNum(row.EnstDrift, 2)}
			for _, c := range row.Choices {
				sr.Choices = append(sr.Choices, c.Value)
			}
			if row.L2H != nil {
				sr.L2 = expNum(*row.L2H, 3)
			}
			r.Rows = append(r.Rows, sr)
		}
	}
	return r
}

func (sw *sweeps) serveResults(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.info()
	if !in.ended() {
		http.Error(w, "sweep "+in.ID+" is still "+in.State+"; its results come when it ends", http.StatusConflict)
		return
	}
	render(w, req, web.SweepResultsPart(*j.results(in)))
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
	j.stop() // stopping an ended sweep changes nothing
	http.Redirect(w, req, "/sweep/"+j.id, http.StatusSeeOther)
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
		in, changed := j.snapshot()
		b, err := json.Marshal(in)
		if err != nil {
			return
		}
		if !send(append(append([]byte("event: progress\ndata: "), b...), "\n\n"...)) || in.ended() {
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
	w.Header().Set("Content-Type", "application/json")
	_ = json.NewEncoder(w).Encode(j.info())
}

func (sw *sweeps) serveListJSON(w http.ResponseWriter, req *http.Request) {
	infos := []SweepInfo{}
	for _, j := range sw.list() {
		infos = append(infos, j.info())
	}
	w.Header().Set("Content-Type", "application/json")
	_ = json.NewEncoder(w).Encode(infos)
}

// ---- files ----

// topFiles are the files of the sweep folder the workbench serves: the
// plan, and what Collect wrote (Result.Files).
func (in SweepInfo) topFiles() []string {
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
	in := j.info()
	name := pathParam(req, "name")
	if !contains(in.topFiles(), name) {
		http.Error(w, fmt.Sprintf("sweep %s has no file %q; it serves %s, and each run's %s under /sweep/%s/run/RUN/",
			in.ID, name, strings.Join(in.topFiles(), ", "), strings.Join(runOutputs, ", "), in.ID), http.StatusNotFound)
		return
	}
	serveSweepFile(w, req, filepath.Join(in.Dir, name))
}

func (sw *sweeps) serveRunFile(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.info()
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
	in := j.info()
	names := in.topFiles()
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
