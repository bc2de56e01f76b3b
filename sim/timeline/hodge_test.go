package timeline

import (
	"strings"
	"testing"

	"gyrebench/sim"
)

// TestHodgeEventRefused: an unknown or empty Hodge choice is refused,
// naming the event and the field; a switch to the choice in effect is a
// no-op.
func TestHodgeEventRefused(t *testing.T) {
	for _, h := range []string{"", "exact"} {
		tl := &Timeline{Config: sim.DefaultConfig(), Events: []Event{{Step: 0, Cmd: SetHodge, Hodge: h}}}
		err := tl.Validate()
		if err == nil || !strings.Contains(err.Error(), "event 1 of 1") || !strings.Contains(err.Error(), "hodge") || !strings.Contains(err.Error(), "consistent, diagonal") {
			t.Errorf("hodge = %q: %v; want an error naming event 1 of 1, the field hodge and the choices", h, err)
		}
	}
	e := Event{Cmd: SetHodge, Hodge: "consistent"}
	if !e.Noop(sim.DefaultConfig()) || e.Noop(func() sim.Config { c := sim.DefaultConfig(); c.Scheme.Hodge = "diagonal"; return c }()) {
		t.Error("Noop: set-hodge consistent must be a no-op on the default (consistent) choice, and not on diagonal")
	}
	if got := e.String(); got != "Hodge star: consistent" {
		t.Errorf("event text %q", got)
	}
}
