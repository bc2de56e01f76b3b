package session

import (
	"reflect"
	"strings"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/timeline"
)

// distorted is the run of small on a smoothly distorted hexagonal plane,
// whose dual is not orthogonal, so that the two Hodge stars differ.
func distorted() sim.Config {
	cfg := small()
	cfg.Grid.Distort = 0.15
	return cfg
}

// cubedTour is a sphere run that starts on the icosahedral grid.
func cubedTour() sim.Config {
	cfg := sim.DefaultConfig()
	cfg.Title = "icosahedral and cubed"
	cfg.Grid = sim.GridConfig{Kind: "icosahedral", N: 3}
	cfg.Initial = sim.InitialConfig{Case: "williamson-2", Params: map[string]float64{}}
	cfg.Time.Integrator = "rk4"
	cfg.Time.Dt = 900
	cfg.Time.Duration = 86400
	return cfg
}

// TestReplayHodgeAndCubed records Hodge-star switches on a distorted
// plane, and switches icosahedral → cubed → icosahedral with a Hodge
// switch on the cubed sphere, writes each timeline, reads it back and
// replays it: the state before every event and at the end is the live one
// bit for bit, for one worker and for three. On these grids the switch
// changes the answer: the run without it ends elsewhere.
func TestReplayHodgeAndCubed(t *testing.T) {
	for _, c := range []struct {
		name   string
		cfg    sim.Config
		events func(l *live)
	}{
		{"distorted hex", distorted(), func(l *live) {
			l.steps(8)
			l.event(timeline.Event{Cmd: timeline.SetHodge, Hodge: "diagonal"})
			l.steps(8)
			l.event(timeline.Event{Cmd: timeline.SetScheme, Scheme: "trisk-enstrophy"})
			l.steps(4)
			l.event(timeline.Event{Cmd: timeline.SetHodge, Hodge: "consistent"})
			l.steps(6)
		}},
		{"icosahedral and cubed", cubedTour(), func(l *live) {
			l.steps(4)
			l.event(timeline.Event{Cmd: timeline.SetGrid, Kind: "cubed", N: 12})
			l.steps(3)
			l.event(timeline.Event{Cmd: timeline.SetHodge, Hodge: "diagonal"})
			l.steps(3)
			l.event(timeline.Event{Cmd: timeline.SetGrid, Kind: "icosahedral", N: 3})
			l.steps(4)
		}},
	} {
		t.Run(c.name, func(t *testing.T) {
			l := startLive(t, c.cfg)
			c.events(l)
			tl := l.end()
			final := append([]float64(nil), l.m.State()...)
			l.m.Close()

			data := tl.Format()
			if !strings.Contains(string(data), `cmd = "set-hodge"`) || !strings.Contains(string(data), `hodge = "diagonal"`) {
				t.Fatalf("written timeline lacks the set-hodge event:\n%s", data)
			}
			back, err := timeline.Parse(data, "recorded.toml")
			if err != nil {
				t.Fatalf("reading the written timeline: %v\n%s", err, data)
			}
			if !reflect.DeepEqual(back.Events, tl.Events) {
				t.Fatalf("events after a write and a read: %+v, want %+v", back.Events, tl.Events)
			}
			for _, workers := range []int{1, 3} {
				m := replay(t, back, workers, l.states)
				if i, ok := sameBits(m.State(), final); !ok {
					t.Errorf("workers = %d: final replayed state differs from the live one at index %d", workers, i)
				}
				m.Close()
			}

			// Without the Hodge switches the run ends elsewhere: the
			// events are not no-ops on these grids.
			plain := *back
			plain.Events = nil
			for _, e := range back.Events {
				if e.Cmd != timeline.SetHodge {
					plain.Events = append(plain.Events, e)
				}
			}
			m := newModel(t, plain.Config, 1)
			p := NewPlayer(&plain)
			for {
				var done bool
				if m, done, err = p.Before(m); err != nil {
					t.Fatal(err)
				}
				if done {
					break
				}
				if err := m.Step(); err != nil {
					t.Fatal(err)
				}
			}
			if _, same := sameBits(m.State(), final); same {
				t.Error("the run without the Hodge switches ends bit for bit where the run with them does: the switch changed nothing")
			}
			m.Close()
		})
	}
}
