package tests

import (
	"math"
	"net/url"
	"strings"
	"testing"

	"github.com/coder/websocket"

	"gyrebench/server"
	"gyrebench/sim"
)

// Bad set-dissipation commands are refused naming the coefficient, the
// value and what is allowed, and change nothing; a good one is marked on
// the plot.
func TestDissipationCommand(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
	cl.mustAck("step", nil, nil)
	before := srv.Run("1").Info()
	for _, tc := range []struct{ name, raw, field, text string }{
		{"negative", `{"cmd":"set-dissipation","value":{"hyperviscosity":-1}}`, "dissipation", "scheme.hyperviscosity = -1"},
		{"text", `{"cmd":"set-dissipation","value":{"viscosity":"lots"}}`, "scheme.viscosity", "lots"},
		{"unknown key", `{"cmd":"set-dissipation","value":{"smagorinsky":0.1}}`, "dissipation", "smagorinsky"},
		{"not an object", `{"cmd":"set-dissipation","value":5}`, "dissipation", "5"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cl.t = t
			cl.sendRaw(websocket.MessageText, []byte(tc.raw))
			var r msg
			cl.until(hang, "an error reply", func(m msg) bool {
				if m.Type == "ack" || m.Type == "marker" || m.Type == "config" {
					t.Fatalf("%s was accepted (%s)", tc.raw, m.Type)
				}
				r = m
				return m.Type == "error"
			})
			if r.fieldName() != tc.field || !strings.Contains(r.Message, tc.text) || !containsAny(r.Message, "≥ 0", "must be", "want") {
				t.Errorf("error field %q message %q; want field %q quoting %q and saying what is allowed", r.fieldName(), r.Message, tc.field, tc.text)
			}
		})
	}
	cl.t = t
	if after := srv.Run("1").Info(); after != before {
		t.Errorf("refused commands changed the run:\n%+v\n%+v", before, after)
	}
	var mark msg
	cl.mustAck("set-dissipation", map[string]any{"hyperviscosity": 1e14}, func(m msg) {
		if m.Type == "marker" {
			mark = m
		}
	})
	if mark.Kind != "dissipation" || !strings.Contains(mark.Label, "ν₄ = 1e+14") {
		t.Errorf("marker %+v, want kind dissipation labelled with ν₄", mark)
	}
}

// In a pair, set-dissipation changes the side it names: after it and N
// lockstep steps, side B is bit for bit a solo run that had the
// hyperviscosity from the start, and side A the inviscid run.
func TestPairDissipationSide(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	id := startPair(t, base, url.Values{"base": {"run:1"}})
	pc := dialPair(t, base, id)
	pc.must("b", "set-dissipation", map[string]any{"hyperviscosity": 1e14}, nil)
	const n = 12
	for i := 0; i < n; i++ {
		pc.must("", "step", nil, nil)
	}
	for i, cfg := range pairConfigs(t, eddies, func(b *sim.Config) { b.Scheme.Hyperviscosity = 1e14 }) {
		side := pairSides[i]
		want, _ := soloState(t, cfg, n)
		got := stateOf(t, get(t, base+"/pair/"+id+"/"+side+"/final.nc"))
		for k := range got {
			if math.Float64bits(got[k]) != math.Float64bits(want[k]) {
				t.Fatalf("side %s after %d steps: state[%d] = %.17g, the solo run (ν₄ = %g) has %.17g", side, n, k, got[k], cfg.Scheme.Hyperviscosity, want[k])
			}
		}
	}
}
