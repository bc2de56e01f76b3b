package session

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/dissip"
	"gyrebench/sim/timeline"
)

// small is a quick planar run: a Gaussian bump on a 16 × 16 hexagonal
// f-plane, which sheds gravity waves and leaves a balanced vortex.
func small() sim.Config {
	cfg := sim.DefaultConfig()
	cfg.Title = "timeline test"
	cfg.Grid = sim.GridConfig{Kind: "hex", N: 16, Length: 1e6}
	cfg.Initial.Case = "gaussian-bump"
	cfg.Initial.Params = map[string]float64{"amplitude": 20, "width": 0.1}
	cfg.Time.Dt = 60
	cfg.Time.Duration = 86400
	return cfg
}

func newModel(t testing.TB, cfg sim.Config, workers int) *sim.Model {
	t.Helper()
	m, err := sim.NewModel(cfg, workers)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// live drives a model the way the workbench does, calling the Model
// directly, and writes down the timeline as it goes. ring holds the state
// at every step since the last grid change, as the workbench's ring of
// recent states does (there: every tenth step).
type live struct {
	t      *testing.T
	m      *sim.Model
	tl     timeline.Timeline
	ring   map[int64][]float64
	times  map[int64]float64
	states [][]float64 // the state just before each event
}

func startLive(t *testing.T, cfg sim.Config) *live {
	l := &live{t: t, m: newModel(t, cfg, 1), tl: timeline.Timeline{Config: cfg}}
	l.resetRing()
	return l
}

func (l *live) resetRing() {
	l.ring, l.times = map[int64][]float64{}, map[int64]float64{}
	l.keep()
}

func (l *live) keep() {
	l.ring[l.m.Steps()] = append([]float64(nil), l.m.State()...)
	l.times[l.m.Steps()] = l.m.Time()
}

func (l *live) steps(n int) {
	l.t.Helper()
	for i := 0; i < n; i++ {
		if err := l.m.Step(); err != nil {
			l.t.Fatal(err)
		}
		l.keep()
	}
}

func (l *live) event(e timeline.Event) {
	l.t.Helper()
	e.Step, e.Time = l.m.Steps(), l.m.Time()
	l.states = append(l.states, append([]float64(nil), l.m.State()...))
	var err error
	switch e.Cmd {
	case timeline.SetScheme:
		err = l.m.SetScheme(e.Scheme)
	case timeline.SetHodge:
		err = l.m.SetHodge(e.Hodge)
	case timeline.SetIntegrator:
		err = l.m.SetIntegrator(e.Integrator)
	case timeline.SetDt:
		err = l.m.SetDt(e.Dt)
	case timeline.SetDissipation:
		err = l.m.SetDissipation(e.Dissipation)
	case timeline.SetGrid:
		var nm *sim.Model
		nm, err = l.m.Regrid(e.Kind, e.N)
		if err == nil {
			l.m.Close()
			l.m = nm
			l.resetRing()
		}
	case timeline.Rewind:
		e.ToTime = l.times[e.ToStep]
		err = l.m.SetState(l.ring[e.ToStep], l.times[e.ToStep], e.ToStep)
		for s := range l.ring {
			if s > e.ToStep {
				delete(l.ring, s)
			}
		}
	case timeline.BlowUp:
		if !errors.As(l.m.Step(), new(*sim.BlowUpError)) {
			l.t.Fatal("the live step did not blow up")
		}
	}
	if err != nil {
		l.t.Fatal(err)
	}
	l.tl.Events = append(l.tl.Events, e)
}

func (l *live) end() *timeline.Timeline {
	l.tl.EndStep, l.tl.EndTime = l.m.Steps(), l.m.Time()
	return &l.tl
}

func sameBits(a, b []float64) (int, bool) {
	if len(a) != len(b) {
		return -1, false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return i, false
		}
	}
	return 0, true
}

// replay plays tl on a fresh model with the driver calls of the workbench
// (Next, Apply, Done, Keep, Step), checking the state before every event
// against want, and returns the final model.
func replay(t *testing.T, tl *timeline.Timeline, workers int, want [][]float64) *sim.Model {
	t.Helper()
	p := NewPlayer(tl)
	m := newModel(t, tl.Config, workers)
	k := 0
	for {
		for p.Next(m) != nil {
			if i, ok := sameBits(m.State(), want[k]); !ok {
				t.Fatalf("before event %d (%s at step %d): replayed state differs from the live one at index %d", k+1, p.Next(m), m.Steps(), i)
			}
			a, err := p.Apply(m)
			if err != nil {
				t.Fatal(err)
			}
			if a.Model != m {
				m.Close()
				m = a.Model
			}
			k++
		}
		if p.Done(m) {
			break
		}
		p.Keep(m)
		if err := m.Step(); err != nil {
			t.Fatal(err)
		}
	}
	if k != len(tl.Events) {
		t.Fatalf("replay applied %d events of %d", k, len(tl.Events))
	}
	return m
}

// TestReplayIsBitIdentical records a live sequence with a scheme switch,
// a Hodge-star switch (a no-op in numbers on this orthogonal grid, but an
// event to write, read and replay), a Δt change, dissipation changes (kept
// across the grid switch), a grid switch, a rewind and an integrator switch, writes it
// as a file, reads it back and replays it: the state before every event
// and at the end is the live one bit for bit, with one worker or three.
func TestReplayIsBitIdentical(t *testing.T) {
	l := startLive(t, small())
	l.event(timeline.Event{Cmd: timeline.Play})
	l.steps(15)
	l.event(timeline.Event{Cmd: timeline.SetScheme, Scheme: "trisk-enstrophy"})
	l.steps(10)
	l.event(timeline.Event{Cmd: timeline.SetHodge, Hodge: "diagonal"})
	l.event(timeline.Event{Cmd: timeline.Mark, Label: `half-way "look" — here`})
	l.event(timeline.Event{Cmd: timeline.SetDt, Dt: 30})
	l.steps(10)
	l.event(timeline.Event{Cmd: timeline.SetDissipation, Dissipation: dissip.Coefficients{Hyperviscosity: 1e13, DivergenceDamping: 0.1 + 0.2}})
	l.steps(5)
	l.event(timeline.Event{Cmd: timeline.SetGrid, Kind: "quad", N: 16})
	l.steps(12)
	l.event(timeline.Event{Cmd: timeline.SetDissipation, Dissipation: dissip.Coefficients{Viscosity: 1e3}})
	l.steps(3)
	l.event(timeline.Event{Cmd: timeline.Pause})
	l.event(timeline.Event{Cmd: timeline.Rewind, ToStep: 40})
	l.event(timeline.Event{Cmd: timeline.SetIntegrator, Integrator: "rk4"})
	l.steps(7)
	tl := l.end()
	final := append([]float64(nil), l.m.State()...)
	finalT := l.m.Time()
	l.m.Close()

	data := tl.Format()
	back, err := timeline.Parse(data, "recorded.toml")
	if err != nil {
		t.Fatalf("reading the written timeline: %v\n%s", err, data)
	}
	// The scenario comes back with the case's defaults filled in.
	if !reflect.DeepEqual(back.Events, tl.Events) || back.EndStep != tl.EndStep || back.EndTime != tl.EndTime || string(back.Format()) != string(data) {
		t.Fatalf("timeline after a write and a read:\n%s\nwant\n%s", back.Format(), data)
	}
	for _, workers := range []int{1, 3} {
		m := replay(t, back, workers, l.states)
		if i, ok := sameBits(m.State(), final); !ok {
			t.Errorf("workers = %d: final replayed state differs from the live one at index %d", workers, i)
		}
		if d := m.Dissipation(); d != (dissip.Coefficients{Viscosity: 1e3}) {
			t.Errorf("workers = %d: replay ended with dissipation %+v, want ν₂ = 1e3 alone", workers, d)
		}
		if m.Time() != finalT || m.Steps() != tl.EndStep || m.Config().Grid.Kind != "quad" || m.Config().Time.Integrator != "rk4" {
			t.Errorf("workers = %d: replay ended at step %d, t = %g on %s with %s; want step %d, t = %g on quad with rk4",
				workers, m.Steps(), m.Time(), m.Config().Grid.Kind, m.Config().Time.Integrator, tl.EndStep, finalT)
		}
		m.Close()
	}
}

// TestReplayBlowUp: a run stepped past its stable Δt blows up; the live
// user lowers Δt and goes on. The replay re-takes the failing step, then
// matches. A blow-up event where the replay does not blow up is an error.
func TestReplayBlowUp(t *testing.T) {
	cfg := small()
	cfg.Time.Dt = 900 // gravity-wave Courant number about 1.4: rk3 is unstable
	l := startLive(t, cfg)
	for l.m.Step() == nil { // the failed step leaves the last good state
		l.keep()
		if l.m.Steps() > 500 {
			t.Fatal("no blow-up within 500 steps")
		}
	}
	l.tl.Events = append(l.tl.Events, timeline.Event{Step: l.m.Steps(), Time: l.m.Time(), Cmd: timeline.BlowUp})
	l.states = append(l.states, append([]float64(nil), l.m.State()...))
	l.event(timeline.Event{Cmd: timeline.Rewind, ToStep: 1})
	l.event(timeline.Event{Cmd: timeline.SetDt, Dt: 60})
	l.steps(20)
	tl := l.end()
	if tl.Events[0].Step < 2 {
		t.Fatalf("the run blew up at step %d; the test wants a later blow-up", tl.Events[0].Step)
	}
	t.Logf("Δt = 900 s blew up taking step %d", tl.Events[0].Step+1)
	if err := tl.Validate(); err != nil {
		t.Fatal(err)
	}
	m := replay(t, tl, 1, l.states)
	if i, ok := sameBits(m.State(), l.m.State()); !ok {
		t.Errorf("final replayed state differs from the live one at index %d", i)
	}
	m.Close()

	// The same blow-up event one step earlier, where the step succeeds.
	bad := *tl
	bad.Events = append([]timeline.Event(nil), tl.Events...)
	bad.Events[0].Step--
	p := NewPlayer(&bad)
	m = newModel(t, bad.Config, 1)
	defer m.Close()
	for p.Next(m) == nil {
		if err := m.Step(); err != nil {
			t.Fatal(err)
		}
	}
	_, err := p.Apply(m)
	if err == nil || !strings.Contains(err.Error(), "diverged") || !strings.Contains(err.Error(), "event 1 of 3") {
		t.Errorf("a blow-up event where the step succeeds: error %v, want one saying the replay diverged, naming event 1 of 3", err)
	}
}

// TestOptimizeEventsReplay: a replayed set-grid carries grid.optimize
// when it is given and keeps the run's when it is not.
func TestOptimizeEventsReplay(t *testing.T) {
	// From the Lloyd-relaxed level 3: the relaxation off, then level 2
	// with the choice left out (kept).
	cfg := sim.DefaultConfig()
	cfg.Title = "t"
	cfg.Grid = sim.GridConfig{Kind: "icosahedral", N: 3, Optimize: "lloyd"}
	cfg.Initial = sim.InitialConfig{Case: "williamson-2", Params: map[string]float64{}}
	cfg.Time.Dt, cfg.Time.Duration = 600, 86400
	tl := &timeline.Timeline{Config: cfg, EndStep: 30, Events: []timeline.Event{
		{Step: 10, Cmd: timeline.SetGrid, Kind: "icosahedral", N: 3, Optimize: "none"},
		{Step: 20, Cmd: timeline.SetGrid, Kind: "icosahedral", N: 2},
	}}
	if err := tl.Validate(); err != nil {
		t.Fatal(err)
	}
	var err error
	// The replay: the grid after each event is the one named.
	m := newModel(t, tl.Config, 1)
	p := NewPlayer(tl)
	var seen []string
	for {
		due := p.Next(m) != nil
		var done bool
		if m, done, err = p.Before(m); err != nil {
			t.Fatal(err)
		}
		if due {
			g := m.Config().Grid
			seen = append(seen, fmt.Sprintf("%d %s", g.N, g.Optimize))
		}
		if done {
			break
		}
		if err := m.Step(); err != nil {
			t.Fatal(err)
		}
	}
	m.Close()
	if got := strings.Join(seen, ", "); got != "3 none, 2 none" {
		t.Errorf("grids after the events (level, optimize): %s; want 3 none, 2 none", got)
	}

}
