package tests

import (
	"strings"
	"testing"
	"time"

	"github.com/coder/websocket"

	"gyrebench/server"
)

// Bad set-dissipation commands are refused naming the coefficient, the
// value and what is allowed, and change nothing; a good one is marked on
// the plot.
func TestDissipationCommand(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	cl := dial(t, base, "1")
	cl.until(10*time.Second, "the first frame", func(m msg) bool { return m.Type == "frame" })
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
			cl.until(10*time.Second, "an error reply", func(m msg) bool {
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
