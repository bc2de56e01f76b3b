package sweep

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/batch"
)

// Job states.
const (
	JobRunning  = "running"
	JobStopping = "stopping" // Stop was called; runs in flight are writing their files
	JobFinished = "finished" // every run ran (some may have blown up); sweep.csv and the plots are written
	JobStopped  = "stopped"  // stopped before the end; the finished runs are in their folders
	JobFailed   = "failed"   // an error other than a blow-up ended it
)

// Run states within a job.
const (
	RunWaiting     = "waiting"
	RunRunning     = "running"
	RunDone        = "done"
	RunBlownUp     = "blown-up"
	RunInterrupted = "interrupted"
	RunFailed      = "failed"
	RunSkipped     = "not run" // the sweep ended before its turn
)

// RunStatus is one run of a job, as a progress stream reports it.
type RunStatus struct {
	Index   int      `json:"index"`
	Name    string   `json:"dir"`
	Choices string   `json:"choices"`
	State   string   `json:"state"` // waiting, running, done, blown-up, interrupted, failed
	Steps   int64    `json:"steps"`
	WallS   float64  `json:"wall_s"`
	L2H     *float64 `json:"l2_h,omitempty"`
	Message string   `json:"message,omitempty"`
}

// Status is a snapshot of a job.
type Status struct {
	ID          string      `json:"id"`
	Scenario    string      `json:"scenario"`
	Vary        []Axis      `json:"vary"`
	Sets        []string    `json:"set"`
	Dir         string      `json:"dir"`
	Jobs        int         `json:"jobs"`
	State       string      `json:"state"`
	Done        int         `json:"done"` // runs ended, however
	Total       int         `json:"total"`
	BlewUp      int         `json:"blew_up"`
	Interrupted int         `json:"interrupted"`
	Started     time.Time   `json:"started"`
	ElapsedS    float64     `json:"elapsed_s"`
	Message     string      `json:"message,omitempty"`
	Runs        []RunStatus `json:"runs"`
	Files       []string    `json:"files"` // sweep.csv, sweep.json and the plots, once finished
	Fits        []Fit       `json:"fits"`
	Result      *Result     `json:"-"` // once finished
}

// Ended reports whether the job has ended, however.
func (in Status) Ended() bool { return in.State != JobRunning && in.State != JobStopping }

// Job is a sweep executed in the background (Execute), with the progress
// of each run for a front end that shows it while it runs. It is safe for
// concurrent use.
type Job struct {
	id, scenario string
	plan         *Plan
	jobs         int
	started      time.Time
	cancel       context.CancelFunc
	done         chan struct{} // closed when Execute has returned

	mu          sync.Mutex
	dir         string
	state       string
	ended       time.Time
	runs        []RunStatus
	finished    int // runs that have ended, however
	blewUp      int
	interrupted int
	message     string
	result      *Result
	changed     chan struct{} // closed and replaced on every change
}

// NewJob makes the job of plan, named id, waiting to Start; scenario
// names the base for people.
func NewJob(id, scenario string, plan *Plan, jobs int) *Job {
	j := &Job{id: id, scenario: scenario, plan: plan, jobs: jobs, started: time.Now(), cancel: func() {},
		done: make(chan struct{}), state: JobRunning, changed: make(chan struct{})}
	for _, r := range plan.Runs {
		j.runs = append(j.runs, RunStatus{Index: r.Index, Name: r.Name, Choices: ChoicesText(r.Choices), State: RunWaiting})
	}
	return j
}

// ID returns the job's name.
func (j *Job) ID() string { return j.id }

// StartedAt is when the job was made.
func (j *Job) StartedAt() time.Time { return j.started }

// Done is closed when the job has ended.
func (j *Job) Done() <-chan struct{} { return j.done }

// Start executes the job in folder dir on its own goroutine until it ends
// or ctx does; opt's Done and Started are the job's own. ended runs after.
func (j *Job) Start(ctx context.Context, dir string, opt Options, ended func()) {
	ctx, cancel := context.WithCancel(ctx)
	j.mu.Lock()
	j.dir, j.cancel = dir, cancel
	j.mu.Unlock()
	opt.Jobs, opt.Done, opt.Started = j.jobs, j.runEnded, j.runStarted
	go func() {
		defer ended()
		defer close(j.done)
		defer cancel()
		res, out, err := Execute(ctx, j.plan, dir, opt)
		j.end(res, out, err)
	}()
}

// ChoicesText writes a run's choices for people: key=value, ...
func ChoicesText(cs []Choice) string {
	var s []string
	for _, c := range cs {
		s = append(s, c.Key+"="+c.Value)
	}
	return strings.Join(s, ", ")
}

// markNotRun marks, once the sweep has ended, the runs that never
// started. j.mu is held (or j is not yet shared).
func (j *Job) markNotRun() {
	if j.state == JobRunning || j.state == JobStopping {
		return
	}
	for i := range j.runs {
		if r := &j.runs[i]; r.State == RunWaiting || r.State == RunRunning {
			r.State = RunSkipped
		}
	}
}

// runStarted is Execute's Started callback (serialised by Execute).
func (j *Job) runStarted(r *Run) {
	j.mu.Lock()
	defer j.mu.Unlock()
	j.runs[r.Index].State = RunRunning
	j.changedLocked()
}

// changedLocked wakes the progress streams; j.mu is held.
func (j *Job) changedLocked() {
	close(j.changed)
	j.changed = make(chan struct{})
}

// runEnded is Execute's Done callback (serialised by Execute).
func (j *Job) runEnded(done, total int, r *Run, sum *batch.Summary, err error) {
	j.mu.Lock()
	defer j.mu.Unlock()
	ri := &j.runs[r.Index]
	var bu *sim.BlowUpError
	switch {
	case err == nil:
		ri.State = RunDone
	case errors.As(err, &bu):
		ri.State, ri.Message = RunBlownUp, err.Error()
		j.blewUp++
	case errors.Is(err, batch.ErrInterrupted):
		ri.State, ri.Message = RunInterrupted, "stopped: its files hold everything up to the last step"
		j.interrupted++
	default:
		ri.State, ri.Message = RunFailed, err.Error()
	}
	if sum != nil {
		ri.Steps, ri.WallS, ri.L2H = sum.Steps, sum.WallSeconds, sum.L2H
	}
	j.finished = done
	j.changedLocked()
}

// end records Execute's result.
func (j *Job) end(res *Result, out Outcome, err error) {
	j.mu.Lock()
	defer j.mu.Unlock()
	j.ended = time.Now()
	switch {
	case err == nil:
		j.state, j.result = JobFinished, res
		if out.BlewUp > 0 {
			j.message = fmt.Sprintf("%d of %d runs blew up (blew_up in %s); every file is written", out.BlewUp, out.Runs, CSVFile)
		}
	case errors.Is(err, batch.ErrInterrupted):
		j.state = JobStopped
		j.message = fmt.Sprintf("stopped after %d of %d runs had finished; a run in flight when it stopped wrote its files up to its last step (interrupted in its summary.json); no sweep.csv or plot was made",
			j.finished-out.Interrupted, out.Runs)
	default:
		j.state, j.message = JobFailed, err.Error()
	}
	j.markNotRun() // no run is in flight any more
	j.changedLocked()
}

// Stop cancels a running job; it reports whether it was running.
func (j *Job) Stop() bool {
	j.mu.Lock()
	defer j.mu.Unlock()
	if j.state != JobRunning {
		return false
	}
	j.state = JobStopping
	j.cancel()
	j.changedLocked()
	return true
}

// Snapshot returns the job's state and a channel closed on its next
// change.
func (j *Job) Snapshot() (Status, <-chan struct{}) {
	j.mu.Lock()
	defer j.mu.Unlock()
	end := j.ended
	if end.IsZero() {
		end = time.Now()
	}
	in := Status{
		ID: j.id, Scenario: j.scenario, Vary: j.plan.Axes, Sets: j.plan.Sets, Dir: j.dir, Jobs: j.jobs,
		State: j.state, Done: j.finished, Total: len(j.runs), BlewUp: j.blewUp, Interrupted: j.interrupted,
		Started: j.started, ElapsedS: end.Sub(j.started).Seconds(), Message: j.message,
		Runs: append([]RunStatus(nil), j.runs...), Files: []string{}, Fits: []Fit{},
	}
	if in.Sets == nil {
		in.Sets = []string{}
	}
	if j.result != nil {
		in.Result = j.result
		in.Files = append(in.Files, j.result.Files...)
		if j.result.Fits != nil {
			in.Fits = j.result.Fits
		}
	}
	return in, j.changed
}

// Status returns the job's state now.
func (j *Job) Status() Status {
	in, _ := j.Snapshot()
	return in
}

// NewFolder creates a fresh folder for a sweep under root: the start
// time and the scenario's name, with -2, -3, ... when that exists. An
// existing folder is never reused.
func NewFolder(root, label string, now time.Time) (string, error) {
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
