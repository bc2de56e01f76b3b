// Package web holds the workbench's pages as templ components. The
// generated *_templ.go files are committed, so building needs no
// generator; regenerate them with
//
//	go run github.com/a-h/templ/cmd/templ@v0.3.1100 generate -path web
//
// The pages carry stable data-role hooks (DEVELOPERS.md "Pages and their
// hooks"); the browser code in package static fills and drives them.
//
// The package also owns what the pages show and how it is worded: the
// snapshots of runs and pairs the server publishes (RunInfo, PairInfo),
// the menus and their labels, and the view models built from them and
// from a sweep's status (RunPageOf, PairPageOf, SweepPageOf, …). The
// server only fetches the snapshots and renders.
package web

// Option is one entry of a menu.
type Option struct {
	Value    string // wire name
	Label    string // for people
	Title    string // tooltip
	Note     string // a line the page shows under the menu while this is chosen
	Selected bool
}

// RunView is what the run page shows before the websocket connects.
type RunView struct {
	ID, Title, Scenario string
	Scenarios           []Option
	Schemes             []Option
	Integrators         []Option
	Grids               []Option
	Fields              []Option
	Dt, N               string
	State, Time         string
	RingSize            int
}

// RunRow is one run in the list of runs.
type RunRow struct {
	ID, Scenario, Title string
	Grid, Scheme        string
	Integrator, State   string
	Time                string
	Watchers            int
}

// RunsView is the list of runs with the form that starts a new one.
type RunsView struct {
	Runs      []RunRow
	Scenarios []Option
	Message   string
	Watch     // for a viewer of a shared workbench, Start is disabled
}
