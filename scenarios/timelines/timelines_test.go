package timelines_test

import (
	"testing"

	"gyrebench/scenarios/timelines"
	"gyrebench/sim"
	"gyrebench/sim/session"
	"gyrebench/sim/timeline"
)

// TestBuiltinsReplay: every built-in timeline parses, validates and
// replays headless to its end step without an error.
func TestBuiltinsReplay(t *testing.T) {
	names := timelines.Names()
	if len(names) == 0 {
		t.Fatal("no built-in timelines")
	}
	for _, name := range names {
		t.Run(name, func(t *testing.T) {
			src, err := timelines.Source(name)
			if err != nil {
				t.Fatal(err)
			}
			tl, err := timeline.Parse(src, name+".toml")
			if err != nil {
				t.Fatal(err)
			}
			if testing.Short() {
				return
			}
			m, err := sim.NewModel(tl.Config, 2)
			if err != nil {
				t.Fatal(err)
			}
			p := session.NewPlayer(tl)
			for {
				var end bool
				m, end, err = p.Before(m)
				if err != nil {
					t.Fatal(err)
				}
				if end {
					break
				}
				if err := m.Step(); err != nil {
					t.Fatal(err)
				}
			}
			defer m.Close()
			if m.Steps() != tl.EndStep || p.Position() != len(tl.Events) {
				t.Errorf("replay ended at step %d after %d events; want step %d after %d", m.Steps(), p.Position(), tl.EndStep, len(tl.Events))
			}
		})
	}
	if _, err := timelines.Source("no-such-timeline"); err == nil {
		t.Error("Source of an unknown name: no error")
	}
}
