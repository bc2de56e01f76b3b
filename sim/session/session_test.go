package session

import (
	"errors"
	"fmt"
	"hash/fnv"
	"math"
	"strings"
	"testing"

	"gyrebench/sim/timeline"
)

// fingerprint is everything a refused command must leave as it was.
func fingerprint(s *Session) string {
	h := fnv.New64a()
	for _, v := range s.m.State() {
		fmt.Fprint(h, math.Float64bits(v))
	}
	e, cur := s.Ring()
	return fmt.Sprintf("%+v|%d|%g|%x|%s|%d|%d|%+v|%d|%v|%v", s.m.Config(), s.m.Steps(), s.m.Time(), h.Sum64(),
		s.state, len(s.series), len(s.markers), s.Timeline(), len(e), cur, s.rewound)
}

func newSession(t *testing.T) *Session {
	t.Helper()
	s, err := New(small(), "small", Options{Workers: 1, RingSize: 8})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(s.Close)
	for i := 0; i < 3; i++ {
		if _, err := s.Apply(Step{}); err != nil {
			t.Fatal(err)
		}
	}
	return s
}

func ptr(x float64) *float64 { return &x }

// TestApplyRefusals: each bad command is refused with an *Error naming the
// field and quoting the value, and leaves the session as it was.
func TestApplyRefusals(t *testing.T) {
	for _, c := range []struct {
		name    string
		prepare Command // applied first (nil: none)
		cmd     Command
		field   string
		says    string
	}{
		{"negative dt", nil, SetDt{-5}, "time.dt", "-5"},
		{"huge dt", nil, SetDt{1e9}, "time.dt", "1e9"},
		{"NaN dt", nil, SetDt{math.NaN()}, "time.dt", "NaN"},
		{"unknown grid", nil, SetGrid{Kind: "pentagon", N: 32}, "grid.kind", "pentagon"},
		{"sphere grid on the plane", nil, SetGrid{Kind: "icosahedral", N: 3}, "grid.kind", "on the plane"},
		{"odd hex", nil, SetGrid{Kind: "hex", N: 33}, "grid.n", "33"},
		{"huge hex", nil, SetGrid{Kind: "hex", N: 100000}, "grid.n", "100000"},
		{"tiny quad", nil, SetGrid{Kind: "quad", N: 2}, "grid.n", "too small"},
		{"optimize on hex", nil, SetGrid{Optimize: "lloyd"}, "grid.optimize", "only icosahedral"},
		{"scheme not on hex", nil, SetScheme{"al81"}, "scheme.name", "al81"},
		{"unknown scheme", nil, SetScheme{"upwind"}, "scheme.name", "upwind"},
		{"unknown integrator", nil, SetIntegrator{"magic"}, "time.integrator", "magic"},
		{"unknown Hodge star", nil, SetHodge{"exact"}, "scheme.hodge", "consistent, diagonal"},
		{"negative hyperviscosity", nil, SetDissipation{Hyperviscosity: ptr(-1)}, "dissipation", "scheme.hyperviscosity = -1"},
		{"scrub out of range", nil, Scrub{99}, "scrub", "99"},
		{"scrub while running", Play{}, Scrub{0}, "scrub", "pause it first"},
		{"unknown scenario", nil, Load{"no-such-run"}, "scenario", "no-such-run"},
		{"label of two lines", nil, Mark{"a\nb"}, "label", "control character"},
		{"stop without a replay", nil, StopReplay{}, "replay", "no timeline"},
		{"unknown built-in timeline", nil, Replay{Builtin: "no-such-timeline"}, "timeline", "no-such-timeline"},
		{"bad timeline text", nil, Replay{Name: "x.toml", Text: []byte("[timeline]\nversion = 9\n")}, "timeline", "version"},
		{"rewind to a step never kept", nil, Rewind{ToStep: 999}, "to_step", "999"},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := newSession(t)
			if c.prepare != nil {
				if _, err := s.Apply(c.prepare); err != nil {
					t.Fatal(err)
				}
			}
			before := fingerprint(s)
			res, err := s.Apply(c.cmd)
			var se *Error
			if !errors.As(err, &se) {
				t.Fatalf("%+v: error %v, want an *Error", c.cmd, err)
			}
			if se.Field != c.field || !strings.Contains(se.Message, c.says) {
				t.Errorf("%+v: refused as %s: %q; want field %s and a message saying %q", c.cmd, se.Field, se.Message, c.field, c.says)
			}
			if !containsAny(se.Message, "allowed", "must be", "needs", "use one of", "want", "only", "first", "no timeline") {
				t.Errorf("%+v: message %q does not say what is allowed", c.cmd, se.Message)
			}
			if res.Effects != 0 || res.Event != nil {
				t.Errorf("%+v: refused, yet the result says %+v", c.cmd, res)
			}
			if after := fingerprint(s); after != before {
				t.Errorf("%+v: the refusal changed the session:\n%s\nthen\n%s", c.cmd, before, after)
			}
		})
	}
}

// TestApplyEffects: each command changes what it says, records the event
// it names with the choice now in effect, and reports its effects; a
// change to the choice in effect changes and records nothing.
func TestApplyEffects(t *testing.T) {
	for _, c := range []struct {
		name    string
		cmd     Command
		event   timeline.Cmd // "" none
		marker  string       // kind of the marker added, "" none
		effects Effect
		check   func(*Session) string // "" when right
	}{
		{"play", Play{}, timeline.Play, "", StateChanged, func(s *Session) string { return want(s.State() == Running, "not running") }},
		{"step", Step{}, "", "", Stepped | StateMoved | RingChanged, func(s *Session) string { return want(s.m.Steps() == 4, "not at step 4") }},
		{"scheme", SetScheme{"trisk-enstrophy"}, timeline.SetScheme, "scheme", ChoiceChanged, func(s *Session) string {
			return want(s.m.Config().Scheme.Name == "trisk-enstrophy" && s.rec.Events[0].Scheme == "trisk-enstrophy", "scheme not switched and recorded")
		}},
		{"same scheme", SetScheme{"trisk-energy"}, "", "", 0, nil},
		{"hodge", SetHodge{"diagonal"}, timeline.SetHodge, "hodge", ChoiceChanged, func(s *Session) string {
			return want(s.m.Config().Scheme.Hodge == "diagonal", "Hodge star not switched")
		}},
		{"integrator", SetIntegrator{"rk4"}, timeline.SetIntegrator, "integrator", ChoiceChanged, func(s *Session) string {
			return want(s.m.Config().Time.Integrator == "rk4", "integrator not switched")
		}},
		{"dt", SetDt{30}, timeline.SetDt, "dt", ChoiceChanged, func(s *Session) string {
			return want(s.m.Config().Time.Dt == 30 && s.rec.Events[0].Dt == 30 && s.rec.Events[0].Step == 3, "Δt not set, or recorded elsewhere than step 3")
		}},
		{"same dt", SetDt{60}, "", "", 0, nil},
		{"dissipation", SetDissipation{Viscosity: ptr(1e3)}, timeline.SetDissipation, "dissipation", ChoiceChanged, func(s *Session) string {
			return want(s.m.Dissipation().Viscosity == 1e3 && s.rec.Events[0].Dissipation.Viscosity == 1e3, "dissipation not set and recorded")
		}},
		{"grid", SetGrid{Kind: "quad", N: 8}, timeline.SetGrid, "grid", ChoiceChanged | MeshChanged | RingChanged, func(s *Session) string {
			e, _ := s.Ring()
			return want(s.m.Config().Grid.Kind == "quad" && s.m.Config().Grid.N == 8 && s.m.Steps() == 3 && len(e) == 1, "not on a quad 8 grid at step 3 with a fresh ring")
		}},
		{"resolution only", SetGrid{N: 8}, timeline.SetGrid, "grid", MeshChanged, func(s *Session) string {
			return want(s.m.Config().Grid.Kind == "hex" && s.m.Config().Grid.N == 8, "not hex 8")
		}},
		{"scrub", Scrub{0}, timeline.Rewind, "", StateMoved | RingChanged, func(s *Session) string {
			return want(s.m.Steps() == 0 && s.rewound && s.rec.Events[0].Step == 3 && s.rec.Events[0].ToStep == 0, "not rewound from 3 to 0")
		}},
		{"rewind", Rewind{ToStep: 1}, timeline.Rewind, "", StateMoved | HistoryCut, func(s *Session) string {
			return want(s.m.Steps() == 1 && len(s.series) > 0 && s.series[len(s.series)-1].Steps == 1, "not rewound to step 1 with the history cut")
		}},
		{"mark", Mark{"here"}, timeline.Mark, "mark", TimelineChanged, func(s *Session) string {
			return want(s.rec.Events[0].Label == "here", "label not recorded")
		}},
		{"reset", Reset{}, "", "", Installed, func(s *Session) string {
			return want(s.m.Steps() == 0 && len(s.rec.Events) == 0, "not back at step 0 with a fresh record")
		}},
		{"load", Load{"shear-rollup"}, "", "", Installed, func(s *Session) string {
			return want(s.Scenario() == "shear-rollup" && s.m.Steps() == 0, "scenario not loaded")
		}},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := newSession(t)
			s.ring.push(s.m) // the step reached is in the ring (every Step puts it there)
			res, err := s.Apply(c.cmd)
			if err != nil {
				t.Fatal(err)
			}
			switch {
			case c.event == "" && res.Event != nil:
				t.Errorf("recorded %+v, want nothing", *res.Event)
			case c.event != "" && (res.Event == nil || res.Event.Cmd != c.event):
				t.Errorf("recorded %+v, want a %s event", res.Event, c.event)
			}
			if c.marker != "" && (len(res.Markers()) == 0 || res.Markers()[len(res.Markers())-1].Kind != c.marker) {
				t.Errorf("markers %+v, want one of kind %s", res.Markers(), c.marker)
			}
			if c.marker == "" && len(res.Markers()) > 0 {
				t.Errorf("markers %+v, want none", res.Markers())
			}
			if res.Effects&c.effects != c.effects || c.effects == 0 && res.Effects != 0 {
				t.Errorf("effects %b, want at least %b", res.Effects, c.effects)
			}
			if c.check != nil {
				if msg := c.check(s); msg != "" {
					t.Error(msg)
				}
			}
		})
	}
}

func containsAny(s string, subs ...string) bool {
	for _, x := range subs {
		if strings.Contains(s, x) {
			return true
		}
	}
	return false
}

func want(ok bool, msg string) string {
	if ok {
		return ""
	}
	return msg
}

// TestUserChangeEndsReplay: a change by hand ends a replay, a mark does
// not.
func TestUserChangeEndsReplay(t *testing.T) {
	s := newSession(t)
	tl := &timeline.Timeline{Config: small(), EndStep: 50}
	if _, err := s.Apply(Replay{Name: "t.toml", Text: tl.Format()}); err != nil {
		t.Fatal(err)
	}
	if _, err := s.Apply(Mark{"x"}); err != nil || !s.Timeline().Replaying {
		t.Fatalf("a mark ended the replay (%v)", err)
	}
	if _, err := s.Apply(SetDt{30}); err != nil || s.Timeline().Replaying || !strings.Contains(s.Timeline().Note, "changed by hand") {
		t.Errorf("after a Δt change by hand: replaying %v, note %q (%v); want the replay ended", s.Timeline().Replaying, s.Timeline().Note, err)
	}
}
