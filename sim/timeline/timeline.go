package timeline

import (
	"bytes"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scenario"
	"gyrebench/sim/scheme"
)

// Version is the timeline file format version written and read.
const Version = 1

// Cmd is an event's command.
type Cmd string

// Commands.
const (
	SetScheme     Cmd = "set-scheme"
	SetHodge      Cmd = "set-hodge"
	SetIntegrator Cmd = "set-integrator"
	SetDt         Cmd = "set-dt"
	SetGrid       Cmd = "set-grid"
	Mark          Cmd = "mark"
	Rewind        Cmd = "rewind"
	BlowUp        Cmd = "blow-up"
	Play          Cmd = "play"
	Pause         Cmd = "pause"
)

// Cmds lists the commands, in the order messages name them.
var Cmds = []Cmd{SetScheme, SetHodge, SetIntegrator, SetDt, SetGrid, Mark, Rewind, BlowUp, Play, Pause}

// MaxLabel bounds a mark's label, in characters.
const MaxLabel = 200

// Event is one thing done to a run. Only the fields of its Cmd are used.
type Event struct {
	Step int64   // the step count at which it applies
	Time float64 // simulated time then, s; for people, a replay goes by Step
	Cmd  Cmd

	Scheme     string  // set-scheme
	Hodge      string  // set-hodge: scheme.hodge, "consistent" or "diagonal"
	Integrator string  // set-integrator
	Dt         float64 // set-dt, s
	Kind       string  // set-grid
	N          int     // set-grid
	Optimize   string  // set-grid: "none" or "lloyd" (icosahedral); "" keeps the run's
	Label      string  // mark
	ToStep     int64   // rewind: the step whose state it goes back to
	ToTime     float64 // rewind: the simulated time then, s; for people
}

// Timeline is a run's starting scenario and what was done to it.
type Timeline struct {
	Config      sim.Config // the scenario the run started from, fully resolved
	Description string     // one line, carried into the file
	Events      []Event
	EndStep     int64   // a replay stops at this step, after the last event
	EndTime     float64 // simulated time at EndStep, s; for people
}

// String describes an event for people (markers, messages).
func (e Event) String() string {
	switch e.Cmd {
	case SetScheme:
		return "scheme: " + e.Scheme
	case SetHodge:
		return "Hodge star: " + e.Hodge
	case SetIntegrator:
		return "integrator: " + e.Integrator
	case SetDt:
		return "Δt = " + strconv.FormatFloat(e.Dt, 'g', 4, 64) + " s"
	case SetGrid:
		if e.Optimize != "" {
			return fmt.Sprintf("grid: %s n = %d, %s", e.Kind, e.N, e.Optimize)
		}
		return fmt.Sprintf("grid: %s n = %d", e.Kind, e.N)
	case Mark:
		return "mark: " + e.Label
	case Rewind:
		return fmt.Sprintf("rewind to step %d", e.ToStep)
	}
	return string(e.Cmd)
}

// Noop reports whether the event changes nothing for a model whose
// current choices are cfg: a choice already in effect, a play or a pause.
// Live runs and replays both skip such changes.
func (e Event) Noop(cfg sim.Config) bool {
	switch e.Cmd {
	case SetScheme:
		return e.Scheme == cfg.Scheme.Name
	case SetHodge:
		return e.Hodge == hodgeName(cfg.Scheme.Hodge)
	case SetIntegrator:
		return e.Integrator == cfg.Time.Integrator
	case SetDt:
		return e.Dt == cfg.Time.Dt
	case SetGrid:
		return e.Kind == cfg.Grid.Kind && e.N == cfg.Grid.N && (e.Optimize == "" || e.Optimize == optimizeName(cfg.Grid.Optimize))
	case Play, Pause:
		return true
	}
	return false
}

// CheckLabel checks a mark's label: one line of at most MaxLabel
// characters without control characters.
func CheckLabel(s string) error {
	if n := len([]rune(s)); n > MaxLabel {
		return fmt.Errorf("label has %d characters: at most %d are allowed", n, MaxLabel)
	}
	for _, c := range s {
		if unicode.IsControl(c) {
			return fmt.Errorf("label %q holds a control character (%U): one line of plain text is allowed", s, c)
		}
	}
	return nil
}

// Format writes the timeline file: the scenario (package scenario's
// format), the [timeline] table and the events. Floats round-trip
// exactly.
func (tl *Timeline) Format() []byte {
	var b bytes.Buffer
	b.WriteString("# gyrebench timeline: the scenario a run started from, then what was done to it.\n")
	b.WriteString("# Replay it with 'gyrebench run FILE' or \"Load timeline\" in the workbench.\n\n")
	b.Write(scenario.Format(tl.Config, tl.Description))
	fmt.Fprintf(&b, "\n[timeline]\nversion = %d\nend_step = %d\nend_time = %s\n", Version, tl.EndStep, num(tl.EndTime))
	for _, e := range tl.Events {
		fmt.Fprintf(&b, "\n[[event]]\nstep = %d\ntime = %s\ncmd = %s\n", e.Step, num(e.Time), quote(string(e.Cmd)))
		switch e.Cmd {
		case SetScheme:
			fmt.Fprintf(&b, "scheme = %s\n", quote(e.Scheme))
		case SetHodge:
			fmt.Fprintf(&b, "hodge = %s\n", quote(e.Hodge))
		case SetIntegrator:
			fmt.Fprintf(&b, "integrator = %s\n", quote(e.Integrator))
		case SetDt:
			fmt.Fprintf(&b, "dt = %s\n", num(e.Dt))
		case SetGrid:
			fmt.Fprintf(&b, "kind = %s\nn = %d\n", quote(e.Kind), e.N)
			if e.Optimize != "" {
				fmt.Fprintf(&b, "optimize = %s\n", quote(e.Optimize))
			}
		case Mark:
			fmt.Fprintf(&b, "label = %s\n", quote(e.Label))
		case Rewind:
			fmt.Fprintf(&b, "to_step = %d\nto_time = %s\n", e.ToStep, num(e.ToTime))
		}
	}
	return b.Bytes()
}

// num writes a float that parses back to the same bits, always as a TOML
// float.
func num(v float64) string {
	s := strconv.FormatFloat(v, 'g', -1, 64)
	if !strings.ContainsAny(s, ".eEn") {
		s += ".0"
	}
	return s
}

// quote writes a TOML basic string.
func quote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, c := range s {
		switch {
		case c == '"' || c == '\\':
			b.WriteByte('\\')
			b.WriteRune(c)
		case c < 0x20 || c == 0x7f:
			fmt.Fprintf(&b, "\\u%04X", c)
		default:
			b.WriteRune(c)
		}
	}
	b.WriteByte('"')
	return b.String()
}

// fieldError is an error about one event's field.
type fieldError struct {
	index, total int    // event index from 1, and the count
	line         int    // line of the event's header; 0 unknown
	cmd          Cmd    // "" when not known yet
	field        string // the key
	msg          string
}

func (e *fieldError) Error() string {
	where := fmt.Sprintf("event %d of %d", e.index, e.total)
	var extra []string
	if e.cmd != "" {
		extra = append(extra, "cmd = "+quote(string(e.cmd)))
	}
	if e.line > 0 {
		extra = append(extra, "line "+strconv.Itoa(e.line))
	}
	if len(extra) > 0 {
		where += " (" + strings.Join(extra, ", ") + ")"
	}
	return where + ": " + e.field + ": " + e.msg
}

// Validate checks the timeline without building a mesh: the scenario,
// end_step, and every event's step, command and values in order, with the
// choices each change leaves in effect. Its errors name the event (index
// from 1) and the field.
func (tl *Timeline) Validate() error { return tl.validate(nil) }

func (tl *Timeline) validate(lines []int) error {
	if err := tl.Config.Validate(); err != nil {
		return fmt.Errorf("scenario: %w", err)
	}
	if tl.EndStep < 0 {
		return fmt.Errorf("timeline.end_step = %d: must be a step count ≥ 0", tl.EndStep)
	}
	if !finite(tl.EndTime) {
		return fmt.Errorf("timeline.end_time = %g: must be a finite number of seconds", tl.EndTime)
	}
	cfg := tl.Config
	var pos, gridAt int64 // current step; step of the latest grid change
	gridEvent := 0
	n := len(tl.Events)
	// An event may lie past end_step only if a later rewind comes back
	// from at least as far.
	limit := make([]int64, n)
	reach := tl.EndStep
	for i := n - 1; i >= 0; i-- {
		if e := tl.Events[i]; e.Cmd == Rewind {
			reach = max(reach, e.Step)
		}
		limit[i] = reach
	}
	for i, e := range tl.Events {
		fail := func(field, format string, a ...any) error {
			fe := &fieldError{index: i + 1, total: n, cmd: e.Cmd, field: field, msg: fmt.Sprintf(format, a...)}
			if i < len(lines) {
				fe.line = lines[i]
			}
			return fe
		}
		if !known(e.Cmd) {
			return fail("cmd", "%s: unknown command; allowed: %s", quote(string(e.Cmd)), cmdList())
		}
		switch {
		case e.Step < 0:
			return fail("step", "step = %d: must be a step count ≥ 0", e.Step)
		case e.Step < pos:
			return fail("step", "step = %d comes before step %d, where the run already is: events are in the order they happened, and step counts only go back through a rewind", e.Step, pos)
		case e.Step > limit[i]:
			return fail("step", "step = %d is past the end of the timeline (timeline.end_step = %d), and no later rewind comes back from there", e.Step, tl.EndStep)
		}
		if !finite(e.Time) || e.Time < 0 {
			return fail("time", "time = %g: must be a finite number of seconds ≥ 0", e.Time)
		}
		try := cfg
		switch e.Cmd {
		case SetScheme:
			try.Scheme.Name = e.Scheme
		case SetHodge:
			if e.Hodge == "" {
				return fail("hodge", "hodge = \"\": allowed: %s", hodgeList())
			}
			try.Scheme.Hodge = e.Hodge
		case SetIntegrator:
			try.Time.Integrator = e.Integrator
		case SetDt:
			if !(e.Dt > 0) || !finite(e.Dt) {
				return fail("dt", "dt = %g: must be a positive finite number of seconds", e.Dt)
			}
			try.Time.Dt = e.Dt
		case SetGrid:
			if !contains(mesh.Kinds, mesh.Kind(e.Kind)) {
				return fail("kind", "kind = %s: unknown grid; allowed: %s", quote(e.Kind), kindList())
			}
			try.Grid.SetKind(e.Kind)
			try.Grid.N = e.N
			if e.Optimize != "" {
				try.Grid.Optimize = e.Optimize
			}
			if cfg.Output.Snapshots {
				return fail("kind", "output.snapshots = true: snapshots.nc holds one grid, and this event changes it; set output.snapshots = false")
			}
		case Mark:
			if err := CheckLabel(e.Label); err != nil {
				return fail("label", "%v", err)
			}
		case Rewind:
			switch {
			case e.ToStep < 0 || e.ToStep > e.Step:
				return fail("to_step", "to_step = %d: a rewind goes back to a step from 0 to its own step %d", e.ToStep, e.Step)
			case e.ToStep < gridAt:
				return fail("to_step", "to_step = %d is before the grid change at step %d (event %d): a rewind stays on the current grid", e.ToStep, gridAt, gridEvent)
			case !finite(e.ToTime) || e.ToTime < 0:
				return fail("to_time", "to_time = %g: must be a finite number of seconds ≥ 0", e.ToTime)
			case cfg.Output.Snapshots:
				return fail("to_step", "output.snapshots = true: snapshots.nc holds increasing times, and this event goes back; set output.snapshots = false")
			}
		}
		switch e.Cmd {
		case SetScheme, SetHodge, SetIntegrator, SetDt, SetGrid:
			if err := try.Validate(); err != nil {
				return fail(fieldOf(e.Cmd, err), "%v", err)
			}
		}
		cfg = try
		pos = e.Step
		switch e.Cmd {
		case Rewind:
			pos = e.ToStep
		case SetGrid:
			gridAt, gridEvent = e.Step, i+1
		}
	}
	if tl.EndStep < pos {
		return fmt.Errorf("timeline.end_step = %d comes before step %d, where the last event leaves the run", tl.EndStep, pos)
	}
	return nil
}

// fieldOf is the key of an event that the engine's error err is about.
func fieldOf(c Cmd, err error) string {
	switch c {
	case SetScheme:
		return "scheme"
	case SetHodge:
		return "hodge"
	case SetIntegrator:
		return "integrator"
	case SetDt:
		return "dt"
	case SetGrid:
		if strings.Contains(err.Error(), "grid.kind") {
			return "kind"
		}
		return "n"
	}
	return "cmd"
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func known(c Cmd) bool { return contains(Cmds, c) }

func contains[T comparable](list []T, x T) bool {
	for _, y := range list {
		if x == y {
			return true
		}
	}
	return false
}

func cmdList() string {
	s := make([]string, len(Cmds))
	for i, c := range Cmds {
		s[i] = string(c)
	}
	return strings.Join(s, ", ")
}

func kindList() string {
	s := make([]string, len(mesh.Kinds))
	for i, k := range mesh.Kinds {
		s[i] = string(k)
	}
	return strings.Join(s, ", ")
}

// hodgeName is scheme.hodge with the default spelled out.
func hodgeName(h string) string {
	if h == "" {
		return scheme.HodgeConsistent
	}
	return h
}

func hodgeList() string { return strings.Join(scheme.HodgeNames, ", ") }

// optimizeName is grid.optimize with the default spelled out.
func optimizeName(opt string) string {
	if opt == "" {
		return mesh.OptimizeNone
	}
	return opt
}
