package web

import (
	"fmt"
	"strconv"
	"strings"

	"gyrebench/sim/display"
	"gyrebench/sim/session"
)

// RunInfo is a read-only snapshot of a run, for pages and listings (the
// server's RunInfo). The run publishes a new one after every change.
type RunInfo struct {
	ID          string
	Scenario    string
	Title       string
	Grid        string
	N           int
	Cells       int
	Scheme      string
	Integrator  string
	Dt          float64
	Field       string
	State       string
	Time        float64
	Steps       int64
	Subscribers int
}

// PairInfo is a read-only snapshot of a pair, for pages (the server's
// PairInfo).
type PairInfo struct {
	ID       string
	Scenario string
	Title    string
	Sides    [2]RunInfo
	State    string
	SameGrid bool
	Clients  int
}

// FieldOptions is the menu of fields (display.Fields).
func FieldOptions(selected string) []Option {
	var opts []Option
	for _, f := range display.Fields() {
		opts = append(opts, Option{Value: f.Name, Label: f.Label + " (" + f.Units + ")", Title: f.Name, Selected: f.Name == selected})
	}
	return opts
}

// RunPageOf is the run page of in, with a ring of ringSize states.
func RunPageOf(in RunInfo, ringSize int) RunView {
	return RunView{
		ID: in.ID, Title: in.Title, Scenario: in.Scenario,
		Scenarios:   ScenarioOptions(in.Scenario),
		Schemes:     SchemeOptions(in.Scheme),
		Integrators: IntegratorOptions(in.Integrator),
		Grids:       GridOptions(in.Grid),
		Fields:      FieldOptions(in.Field),
		Dt:          strconv.FormatFloat(in.Dt, 'g', -1, 64),
		N:           strconv.Itoa(in.N),
		State:       in.State,
		Time:        session.FmtTime(in.Time),
		RingSize:    ringSize,
	}
}

// RunRowOf is the run's line in the list of runs.
func RunRowOf(in RunInfo) RunRow {
	return RunRow{
		ID: in.ID, Scenario: in.Scenario, Title: in.Title,
		Grid:   in.Grid + " n = " + strconv.Itoa(in.N),
		Scheme: in.Scheme, Integrator: in.Integrator, State: in.State,
		Time: session.FmtTime(in.Time), Watchers: in.Subscribers,
	}
}

// BaseOptions is the menu of a form's base: the open runs' current
// choices (with Δt when withDt), then the built-in scenarios.
func BaseOptions(runs []RunInfo, selected string, withDt bool) []Option {
	var opts []Option
	for _, in := range runs {
		v := "run:" + in.ID
		label := fmt.Sprintf("run %s now: %s, %s n = %d, %s", in.ID, in.Scenario, in.Grid, in.N, in.Scheme)
		if withDt {
			label += fmt.Sprintf(", Δt = %g s", in.Dt)
		}
		opts = append(opts, Option{Value: v, Label: label, Title: "the run's current choices, from its initial state", Selected: v == selected})
	}
	for _, o := range ScenarioOptions(selected) {
		o.Label = "scenario " + o.Label
		opts = append(opts, o)
	}
	return opts
}

// sideSummary is one side of a pair in a line.
func sideSummary(in RunInfo) string {
	return fmt.Sprintf("%s n = %d · %s · %s · Δt = %g s", in.Grid, in.N, in.Scheme, in.Integrator, in.Dt)
}

// PairRowOf is the pair's line in the list of pairs.
func PairRowOf(in PairInfo) PairRow {
	return PairRow{ID: in.ID, Title: in.Title, A: sideSummary(in.Sides[0]), B: sideSummary(in.Sides[1]), State: in.State}
}

// PairPageOf is the page of the pair in.
func PairPageOf(in PairInfo) PairView {
	v := PairView{ID: in.ID, Title: in.Title, Scenario: in.Scenario, Fields: FieldOptions(in.Sides[0].Field), State: in.State}
	for i, side := range [2]string{"a", "b"} {
		s := in.Sides[i]
		v.Sides[i] = PairSide{
			Side:        side,
			Name:        strings.ToUpper(side),
			Schemes:     SchemeOptions(s.Scheme),
			Integrators: IntegratorOptions(s.Integrator),
			Grids:       GridOptions(s.Grid),
			Dt:          strconv.FormatFloat(s.Dt, 'g', -1, 64),
			N:           strconv.Itoa(s.N),
			Summary:     sideSummary(s),
		}
	}
	return v
}

// PairNewOf is the form that starts a pair, over bases, with the open
// pairs listed and msg saying why the form was refused, if it was.
func PairNewOf(bases []Option, pairs []PairInfo, msg string) PairNewView {
	same := Option{Value: "", Label: "as the base", Selected: true}
	v := PairNewView{
		Bases:       bases,
		Schemes:     append([]Option{same}, SchemeOptions("")...),
		Integrators: append([]Option{same}, IntegratorOptions("")...),
		Grids:       append([]Option{same}, GridOptions("")...),
		Message:     msg,
	}
	for _, p := range pairs {
		v.Pairs = append(v.Pairs, PairRowOf(p))
	}
	return v
}
