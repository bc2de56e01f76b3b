package web

// PairSide is one side's controls on the pair page.
type PairSide struct {
	Side, Name                  string // "a", "A"
	Schemes, Integrators, Grids []Option
	Dt, N                       string
	Summary                     string
}

// PairView is what the pair page shows before the websocket connects.
type PairView struct {
	ID, Title, Scenario string
	Fields              []Option
	State               string
	Sides               [2]PairSide
}

// PairRow is one pair in the list on the new-pair page.
type PairRow struct {
	ID, Title, A, B, State string
}

// PairNewView is the form that starts a pair: a base (a scenario or a
// run's current choices) and, per side, the choices that differ from it.
type PairNewView struct {
	Bases                       []Option
	Schemes, Integrators, Grids []Option // "" first: as the base
	Pairs                       []PairRow
	Message                     string
	Watch                       // for a viewer of a shared workbench, Start is disabled
}
