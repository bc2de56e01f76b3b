package session

import (
	"errors"
	"math"
	"strconv"
	"strings"

	"gyrebench/sim"
	"gyrebench/sim/diag"
	"gyrebench/sim/dissip"
	"gyrebench/sim/timeline"
)

// State is what a session is doing.
type State string

// States, shown verbatim in the browser.
const (
	Running State = "running"
	Paused  State = "paused"
	BlownUp State = "blown-up"
)

// Cadences and bounds of the history.
const (
	ringEvery = 10   // steps between ring snapshots while stepping
	maxPoints = 4096 // series points kept; older ones are thinned
	// maxEvents bounds the record; past it the record is marked full and
	// cannot be saved (a partial timeline would not reproduce the run).
	maxEvents = 20000
	// markerLen bounds a mark's label in the markers; the whole label is
	// in the timeline.
	markerLen = 32
)

// Options configure a session.
type Options struct {
	Workers  int // goroutines for the engine's loops; ≤ 0: by mesh size
	RingSize int // recent states kept; ≤ 0: DefaultRingSize
	// Headless drops the limits of a live run (Δt up to DtMax, the grid
	// sizes and families of a switch, the memory of the ring): a headless
	// replay applies whatever the engine accepts.
	Headless bool
}

// Point is one row of the invariant series: relative drifts from the
// invariants at time zero (diag.RelDrift), absolute mass, Courant numbers,
// extremes, and the budget of dE/dt and dZ/dt since the previous point
// (package dissip's Ledger).
type Point struct {
	T                                                                     float64
	Steps                                                                 int64
	Mass, Energy, Enstrophy, MassAbs, Courant, CourantAdv, HMin, MaxSpeed float64

	EnergyRateScheme, EnergyRateDissipation, EnergyRateResidual          float64
	EnstrophyRateScheme, EnstrophyRateDissipation, EnstrophyRateResidual float64
}

// Marker is a labelled mid-run change.
type Marker struct {
	T     float64 `json:"t"`
	Steps int64   `json:"steps"`
	Kind  string  `json:"kind"` // scheme, hodge, integrator, dt, grid, dissipation, rewind, mark
	Label string  `json:"label"`
}

// BlowUp says where and when the session blew up.
type BlowUp struct {
	*sim.BlowUpError
	Message string
	Dt      float64 // the Δt in effect
}

// Effect says what a command or a step changed besides the points and
// markers it added, so that a front end knows what to tell its watchers.
type Effect uint16

// Effects.
const (
	Stepped         Effect = 1 << iota // the model took a step
	StateMoved                         // the state shown changed (a frame is due)
	StateChanged                       // running, paused or blown up (a status is due)
	ChoiceChanged                      // a choice changed (the config)
	MeshChanged                        // a new mesh (the geometry)
	HistoryCut                         // the series and markers were cut back (a rewind)
	RingChanged                        // the ring's entries or cursor
	TimelineChanged                    // the record or the replay
	Installed                          // a new model with a fresh history: everything
)

// Result is what Apply (or Advance) did.
type Result struct {
	Effects Effect
	Event   *timeline.Event // the event recorded, nil if none
	Added   []Entry         // points and markers added, in order
}

// Entry is a point or a marker added to the history.
type Entry struct {
	Point  *Point  // nil for a marker
	Marker *Marker // nil for a point
}

// Points returns the points added, in order.
func (r Result) Points() []Point {
	var out []Point
	for _, e := range r.Added {
		if e.Point != nil {
			out = append(out, *e.Point)
		}
	}
	return out
}

// Markers returns the markers added, in order.
func (r Result) Markers() []Marker {
	var out []Marker
	for _, e := range r.Added {
		if e.Marker != nil {
			out = append(out, *e.Marker)
		}
	}
	return out
}

func (r *Result) point(p Point)   { r.Added = append(r.Added, Entry{Point: &p}) }
func (r *Result) marker(m Marker) { r.Added = append(r.Added, Entry{Marker: &m}) }

// Has reports whether the result has effect e.
func (r Result) Has(e Effect) bool { return r.Effects&e != 0 }

// Session is one model and everything done to it. It is not safe for
// concurrent use.
type Session struct {
	opt             Options
	m               *sim.Model
	scenario, title string
	state           State
	blow            *BlowUp
	rewound         bool // the state was set from the ring and nothing ran since

	ref     diag.Invariants
	budget  dissip.Ledger
	series  []Point
	markers []Marker
	ring    ring

	rec    timeline.Timeline
	full   bool
	replay *Player // the timeline being replayed, nil if none
	note   string  // how the last replay ended, for people
}

// New builds the model of cfg and a session at its start. scenario
// names where cfg came from, for people.
func New(cfg sim.Config, scenario string, opt Options) (*Session, error) {
	if opt.RingSize <= 0 {
		opt.RingSize = DefaultRingSize
	}
	m, err := sim.NewModel(cfg, opt.Workers)
	if err != nil {
		return nil, err
	}
	s := &Session{opt: opt}
	if err := s.fits(m); err != nil {
		m.Close()
		return nil, err
	}
	s.ring.init(opt.RingSize)
	s.install(m, scenario, cfg.Title, &Result{})
	return s, nil
}

// attach makes a headless session of a model someone else built.
func attach(m *sim.Model) *Session {
	s := &Session{opt: Options{Headless: true, RingSize: 1}}
	s.ring.init(1)
	s.install(m, "", m.Config().Title, &Result{})
	return s
}

// Close stops the model's workers.
func (s *Session) Close() { s.m.Close() }

// Model returns the model. It is replaced by a grid change, a reset, a
// load or a replay; the caller must not keep it across Apply.
func (s *Session) Model() *sim.Model { return s.m }

// Scenario and Title name what the session runs, for people.
func (s *Session) Scenario() string { return s.scenario }
func (s *Session) Title() string    { return s.title }

// State returns whether the session runs, is paused or blew up.
func (s *Session) State() State { return s.state }

// BlowUp returns the blow-up the session stopped at, or nil.
func (s *Session) BlowUp() *BlowUp { return s.blow }

// Series returns the invariant points, oldest first. It must not be
// modified and is valid until the next Apply or Advance.
func (s *Session) Series() []Point { return s.series }

// Markers returns the markers of mid-run changes, oldest first, under
// the same terms as Series.
func (s *Session) Markers() []Marker { return s.markers }

// RingSize returns the most recent states the ring keeps.
func (s *Session) RingSize() int { return s.opt.RingSize }

// DtMax is the largest Δt the session may be given now (MaxCourant).
func (s *Session) DtMax() float64 { return dtMax(s.m) }

// GridLimits returns, per grid family, the smallest and the largest
// resolution a grid switch may ask for now.
func (s *Session) GridLimits() (nmin, nmax map[string]int) {
	nmin, nmax = map[string]int{}, map[string]int{}
	for _, k := range GridKinds() {
		nmin[k], nmax[k] = NMinLive(k), MaxLiveN(k, s.m.Config(), s.m.Mesh())
	}
	return nmin, nmax
}

// fits refuses a model whose states the ring cannot hold.
func (s *Session) fits(m *sim.Model) error {
	if s.opt.Headless {
		return nil
	}
	return RingFits(s.opt.RingSize, m.Mesh().NumCells)
}

// install makes m the model (closing the previous one) with a fresh
// history and record, and ends any replay.
func (s *Session) install(m *sim.Model, scenario, title string, res *Result) {
	if s.m != nil && s.m != m {
		s.m.Close()
	}
	s.m, s.scenario, s.title = m, scenario, title
	s.ref = m.Initial()
	s.budget = dissip.Ledger{}
	s.series, s.markers = s.series[:0], s.markers[:0]
	s.blow, s.rewound, s.state = nil, false, Paused
	s.ring.reset()
	s.ring.push(m)
	s.addPoint(s.pointNow())
	s.rec = timeline.Timeline{Config: m.Config()}
	s.full, s.replay = false, nil
	res.Effects |= Installed
}

// Apply carries out one command. On error nothing has changed and the
// error is an *Error naming the field, the value and what is allowed.
func (s *Session) Apply(c Command) (Result, error) { return s.apply(c, false) }

func (s *Session) apply(c Command, replaying bool) (Result, error) {
	var res Result
	var err error
	change := true // a change by hand ends a replay
	switch c := c.(type) {
	case Play:
		change = false
		if s.state != Running {
			s.state, s.blow = Running, nil
			res.Effects |= StateChanged
			s.record(timeline.Event{Cmd: timeline.Play}, &res)
		}
	case Pause:
		change = false
		if s.state == Running {
			s.halt(&res)
			s.record(timeline.Event{Cmd: timeline.Pause}, &res)
		}
	case Step:
		change = false
		s.halt(&res)
		s.blow = nil
		if s.advance(&res) {
			s.ring.push(s.m)
			res.point(s.RecordPoint())
			res.Effects |= StateMoved | StateChanged | RingChanged
		}
	case Reset:
		err = s.reset(&res)
	case Load:
		err = s.load(c, &res)
	case SetScheme:
		err = s.setScheme(c, &res)
	case SetHodge:
		err = s.setHodge(c, &res)
	case SetIntegrator:
		err = s.setIntegrator(c, &res)
	case SetDt:
		err = s.setDt(c, &res)
	case SetGrid:
		err = s.setGrid(c, &res)
	case SetDissipation:
		err = s.setDissipation(c, &res)
	case Scrub:
		err = s.scrub(c, &res)
	case Rewind:
		err = s.rewind(c, &res)
	case Mark:
		change = false
		err = s.mark(c, &res)
	case Replay:
		err = s.startReplay(c, &res)
	case StopReplay:
		if s.replay == nil {
			return Result{}, refuse("replay", "", "stop-replay: no timeline is being replayed")
		}
		s.stopReplay("replay of "+s.replay.name+" stopped at step "+strconv.FormatInt(s.m.Steps(), 10)+"; the run goes on from here", &res)
	case ExpectBlowUp:
		err = s.expectBlowUp(&res)
	default:
		return Result{}, refuse("cmd", "", "unknown command %T; allowed: the command types of package session", c)
	}
	if err != nil {
		return Result{}, err
	}
	if change && !replaying && s.replay != nil && res.Event != nil {
		name := string(res.Event.Cmd)
		if _, ok := c.(Scrub); ok {
			name = "scrub"
		}
		s.stopReplay("replay of "+s.replay.name+" stopped at step "+strconv.FormatInt(s.m.Steps(), 10)+": the run was changed by hand ("+name+"); the record goes on", &res)
	}
	return res, nil
}

// Halt pauses a running session without recording a pause: for a front
// end that stops it because nobody watches, or because the other side of
// a pair blew up.
func (s *Session) Halt() Result {
	var res Result
	s.halt(&res)
	return res
}

func (s *Session) halt(res *Result) {
	if s.state != Running {
		return
	}
	s.state = Paused
	res.point(s.RecordPoint())
	res.Effects |= StateMoved | StateChanged | RingChanged
}

// Advance takes one step of a running session, first playing the events
// of a replay that are due. It reports in the result whether it stepped
// (Stepped); a blow-up, a mark or the end of a replay pauses the session.
func (s *Session) Advance() Result {
	var res Result
	s.advance(&res)
	return res
}

func (s *Session) advance(res *Result) bool {
	if s.replay != nil && !s.replayBefore(res) {
		return false
	}
	if s.rewound {
		s.resume(res)
	}
	err := s.m.Step()
	if err != nil {
		var bu *sim.BlowUpError
		if !errors.As(err, &bu) {
			// Step reports nothing else today; treat anything new as a stop.
			bu = &sim.BlowUpError{Step: s.m.Steps() + 1, Time: s.m.Time(), Cell: -1, Edge: -1, Value: math.NaN()}
		}
		s.blownUp(bu, err, res)
		return false
	}
	res.Effects |= Stepped
	if s.m.Steps()%ringEvery == 0 {
		s.ring.push(s.m)
	}
	return true
}

// blownUp pauses at a blow-up (the model has kept the last good state)
// and records it.
func (s *Session) blownUp(bu *sim.BlowUpError, err error, res *Result) {
	s.state = BlownUp
	s.blow = &BlowUp{BlowUpError: bu, Message: err.Error(), Dt: s.m.Config().Time.Dt}
	s.record(timeline.Event{Cmd: timeline.BlowUp}, res)
	s.ring.push(s.m)
	res.point(s.RecordPoint())
	res.Effects |= StateMoved | StateChanged | RingChanged
}

// resume makes the rewound-to state the present: the ring, the series and
// the markers forget what came after it. It runs at the first step or
// change after a scrub, so that until then one may scrub back and forth.
func (s *Session) resume(res *Result) {
	s.rewound = false
	s.ring.dropAfterCursor()
	s.cutHistory(res)
}

// cutHistory drops the points and markers after the current step and
// adds a rewind marker and a point.
func (s *Session) cutHistory(res *Result) {
	steps := s.m.Steps()
	pts := s.series[:0]
	for _, p := range s.series {
		if p.Steps <= steps {
			pts = append(pts, p)
		}
	}
	s.series = pts
	mks := s.markers[:0]
	for _, m := range s.markers {
		if m.Steps <= steps {
			mks = append(mks, m)
		}
	}
	s.markers = append(mks, Marker{T: s.m.Time(), Steps: steps, Kind: "rewind", Label: "rewound to t = " + FmtTime(s.m.Time())})
	s.addPoint(s.pointNow())
	res.Effects |= HistoryCut | RingChanged
}

// change records a mid-run change: a point before it, the change, a
// marker and a point after it, so each segment of the series belongs to
// one choice; and the event, with the choice now in effect.
func (s *Session) change(res *Result, kind, label string, apply func() error, event func() timeline.Event) error {
	if s.rewound {
		s.resume(res)
	}
	before := s.pointNow()
	if err := apply(); err != nil {
		return err
	}
	s.addPoint(before)
	mk := Marker{T: s.m.Time(), Steps: s.m.Steps(), Kind: kind, Label: label}
	s.markers = append(s.markers, mk)
	res.point(before)
	res.marker(mk)
	res.point(s.RecordPoint())
	res.Effects |= ChoiceChanged | StateChanged
	s.record(event(), res)
	return nil
}

// addMarker adds a labelled marker at the current step.
func (s *Session) addMarker(kind, label string, res *Result) {
	if rs := []rune(label); len(rs) > markerLen {
		label = string(rs[:markerLen-1]) + "…"
	}
	mk := Marker{T: s.m.Time(), Steps: s.m.Steps(), Kind: kind, Label: label}
	s.markers = append(s.markers, mk)
	res.marker(mk)
}

func (s *Session) pointNow() Point {
	m := s.m
	inv := m.Invariants()
	b := s.budget.Record(m.Time(), inv.Energy, inv.PotentialEnstrophy, m.Rates())
	return Point{
		T: m.Time(), Steps: m.Steps(),
		Mass:      diag.RelDrift(inv.Mass, s.ref.Mass),
		Energy:    diag.RelDrift(inv.Energy, s.ref.Energy),
		Enstrophy: diag.RelDrift(inv.PotentialEnstrophy, s.ref.PotentialEnstrophy),
		MassAbs:   inv.Mass, Courant: inv.CourantGravity, CourantAdv: inv.CourantAdvective,
		HMin: inv.HMin, MaxSpeed: inv.MaxSpeed,
		EnergyRateScheme: b.EnergyScheme, EnergyRateDissipation: b.EnergyDissipation, EnergyRateResidual: b.EnergyResidual,
		EnstrophyRateScheme: b.EnstrophyScheme, EnstrophyRateDissipation: b.EnstrophyDissipation, EnstrophyRateResidual: b.EnstrophyResidual,
	}
}

// RecordPoint adds a point of the current state to the series and
// returns it: a front end calls it at its own cadence while running.
func (s *Session) RecordPoint() Point {
	p := s.pointNow()
	s.addPoint(p)
	return p
}

// addPoint appends to the series, thinning it to every other point when
// it is full so that a long run keeps its whole history at lower density.
func (s *Session) addPoint(p Point) {
	if n := len(s.series); n > 0 && s.series[n-1] == p {
		return
	}
	if len(s.series) >= maxPoints {
		k := 0
		for i := 0; i < len(s.series); i += 2 {
			s.series[k] = s.series[i]
			k++
		}
		s.series = s.series[:k]
	}
	s.series = append(s.series, p)
}

// fmtNumber writes a number as one would type it: 1e9, -5, 0.25.
func fmtNumber(x float64) string {
	t := strconv.FormatFloat(x, 'g', -1, 64)
	mant, exp, ok := strings.Cut(t, "e")
	if !ok {
		return t
	}
	sign := ""
	if strings.HasPrefix(exp, "-") {
		sign = "-"
	}
	return mant + "e" + sign + strings.TrimLeft(exp, "+-0")
}
