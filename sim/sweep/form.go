package sweep

import (
	"fmt"
	"strconv"
	"strings"

	"gyrebench/sim"
)

// Form is a sweep as typed into the workbench's form: text areas of
// vary and set lines, one a line, and a job count ("" for the most).
type Form struct{ Vary, Set, Jobs string }

// FormLimits bound a sweep from the workbench: Jobs runs at once, Runs
// runs in all, Cells cells in one run.
type FormLimits struct{ Jobs, Runs, Cells int }

// FormError is a refusal of the form: the field it is about ("jobs",
// "scenario", "vary" or "set") and the message.
type FormError struct{ Field, Msg string }

func (e *FormError) Error() string { return e.Msg }

func refuseField(field, format string, a ...any) *FormError {
	return &FormError{field, fmt.Sprintf(format, a...)}
}

// formMessage turns the command line's wording of the errors into the
// form's: the fields are "vary" and "set".
var formMessage = strings.NewReplacer("e.g. --vary ", "e.g. ", "e.g. --set ", "e.g. ", "--vary", "vary", "--set", "set")

// formLines splits a text area into its non-blank lines.
func formLines(s string) []string {
	var out []string
	for _, l := range strings.Split(strings.ReplaceAll(s, "\r", ""), "\n") {
		if l = strings.TrimSpace(l); l != "" {
			out = append(out, l)
		}
	}
	return out
}

// PlanForm validates the form into a plan and a job count, within lim.
// base resolves the form's scenario into its config, label and
// description; it is called after the job count is checked. Nothing is
// written.
func PlanForm(f Form, lim FormLimits, base func() (cfg sim.Config, label, desc string, err error)) (*Plan, int, *FormError) {
	jobs := lim.Jobs
	if j := strings.TrimSpace(f.Jobs); j != "" {
		n, err := strconv.Atoi(j)
		if err != nil || n < 1 || n > lim.Jobs {
			return nil, 0, refuseField("jobs", "jobs = %q: must be a whole number from 1 to %d (the cores of this machine)", f.Jobs, lim.Jobs)
		}
		jobs = n
	}
	cfg, label, desc, err := base()
	if err != nil {
		return nil, 0, refuseField("scenario", "%v", err)
	}
	var axes []Axis
	total := 1
	var sizes []string
	for _, l := range formLines(f.Vary) {
		a, err := ParseVary(l)
		if err != nil {
			return nil, 0, refuseField("vary", "%s", formMessage.Replace(err.Error()))
		}
		axes = append(axes, a)
		total *= len(a.Values)
		sizes = append(sizes, strconv.Itoa(len(a.Values)))
		if total > lim.Runs {
			return nil, 0, refuseField("vary", "vary: the product has more than %d runs (%s); a sweep from the workbench has at most %d (gyrebench sweep on the command line takes up to %d)",
				lim.Runs, strings.Join(sizes, " × "), lim.Runs, MaxRuns)
		}
	}
	if len(axes) == 0 {
		return nil, 0, refuseField("vary", "vary: empty; give at least one line key=v1,v2,..., e.g. grid.n=16,32,64")
	}
	p, err := NewPlan(cfg, label, desc, formLines(f.Set), axes)
	if err != nil {
		msg := formMessage.Replace(err.Error())
		field := "vary"
		if strings.HasPrefix(msg, "set") {
			field = "set"
		}
		return nil, 0, refuseField(field, "%s", msg)
	}
	for _, r := range p.Runs {
		cells, err := r.Config.MeshSpec().Cells()
		if err != nil {
			return nil, 0, refuseField("vary", "vary %s: %v", ChoicesText(r.Choices), err)
		}
		if cells > lim.Cells {
			return nil, 0, refuseField("vary", "vary %s: grid.kind = %s, grid.n = %d gives %d cells, more than a sweep from the workbench allows in one run (%d); lower grid.n, or use gyrebench sweep on the command line",
				ChoicesText(r.Choices), r.Config.Grid.Kind, r.Config.Grid.N, cells, lim.Cells)
		}
	}
	return p, jobs, nil
}
