package tests

import (
	"bytes"
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"

	"gyrebench/server"
)

// sphere3 is Williamson et al. (1992) case 2 on icosahedral level 3.
const sphere3 = `title = "case 2, level 3"
[grid]
kind = "icosahedral"
n = 3
[physics]
depth = 3000.0
[scheme]
name = "trisk-energy"
[time]
integrator = "rk4"
dt = 900.0
duration = 432000.0
[initial]
case = "williamson-2"
alpha = 0.0
`

// structureReport is what the tests read of the structure report.
type structureReport struct {
	Grid               string  `json:"grid"`
	N                  int     `json:"n"`
	Hodge              string  `json:"hodge"`
	HodgeMatrix        string  `json:"hodge_matrix"`
	IncidenceDefect    int     `json:"incidence_defect"`
	EnergyRate         float64 `json:"energy_rate_relative"`
	EnergyConserving   bool    `json:"energy_conserving"`
	Consistent         bool    `json:"consistent"`
	HodgeMinEigenvalue float64 `json:"hodge_min_eigenvalue"`
}

// waitStructure waits for the structure message of the Hodge choice
// hodge on grid (kind and n, as "cubed 12") in the state ready, and
// returns its report. The message's "grid" is a label, not the config's
// object, so the client hands it over undecoded.
func waitStructure(cl *client, grid, hodge string) structureReport {
	cl.t.Helper()
	var rep structureReport
	// The report is computed at the lowest CPU priority, like the linear
	// analysis, so its guard is analysisHang.
	cl.until(analysisHang, "the structure report of "+grid+" with the "+hodge+" Hodge star", func(m msg) bool {
		var sm struct {
			Type, State, Hodge string
			Report             *structureReport
		}
		if m.Type != "bad-json" || json.Unmarshal([]byte(m.Message), &sm) != nil || sm.Type != "structure" {
			return false
		}
		if sm.State == "failed" {
			cl.t.Fatalf("structure report failed: %s", m.Message)
		}
		if sm.State != "ready" || sm.Hodge != hodge || sm.Report == nil {
			return false
		}
		rep = *sm.Report
		return rep.Grid+" "+strconv.Itoa(rep.N) == grid
	})
	return rep
}

// TestCubedAndHodgeLive drives a sphere run through a real websocket:
// icosahedral level 3 → cubed n = 12 → the diagonal Hodge star → back to
// icosahedral level 3, running between the switches. The mass is kept to
// round-off across both remaps (package sim/remap is conservative) and
// the flux-form steps; each switch is a marker; the structure report
// follows every switch (the diagonal H on the cubed sphere: energy
// conserving yes, consistent no); the saved timeline replays headless to
// the live run's final.nc, byte for byte.
func TestCubedAndHodgeLive(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, RingSize: 8, Scenario: writeScenario(t, "sphere3", sphere3)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
	cl.mustAck("structure", nil, nil)
	if r := waitStructure(cl, "icosahedral 3", "consistent"); !r.EnergyConserving || !r.Consistent || r.HodgeMatrix != "diagonal" {
		t.Errorf("icosahedral level 3: %+v; want energy conserving and consistent with a diagonal H (orthogonal dual)", r)
	}

	var markers []string
	var grid gridInfo
	worstMass := 0.0
	seen := func(m msg) {
		switch m.Type {
		case "config":
			grid = m.Grid
		case "marker":
			markers = append(markers, m.Label)
		case "point":
			worstMass = max(worstMass, math.Abs(m.Mass))
		}
	}
	// Runs of a few steps between the switches; paused while a report
	// is awaited, so that the run does not go on for weeks meanwhile.
	var end int64
	burst := func() {
		cl.mustAck("play", nil, seen)
		advance(cl, end+6)
		cl.mustAck("pause", nil, seen)
		end = srv.Run("1").Info().Steps
	}
	burst()
	cl.mustAck("set-grid", map[string]any{"kind": "cubed", "n": 12}, seen)
	if grid.Kind != "cubed" || grid.N != 12 || grid.Cells != 6*12*12 || grid.Vertices != 6*12*12+2 {
		t.Errorf("after the switch to cubed n = 12 the config says %+v; want 864 cells, 866 vertices", grid)
	}
	burst()
	cl.mustAck("set-hodge", "diagonal", seen)
	r := waitStructure(cl, "cubed 12", "diagonal")
	if !r.EnergyConserving || r.Consistent || r.IncidenceDefect != 0 || !(r.HodgeMinEigenvalue > 0) {
		t.Errorf("cubed n = 12, diagonal H: %+v; want energy conserving yes, consistent no, incidence defect 0, H positive", r)
	}
	burst()
	cl.mustAck("set-grid", map[string]any{"kind": "icosahedral", "n": 3, "optimize": "none"}, seen)
	burst()
	cl.mustAck("step", nil, seen) // the point of the last state
	end++

	if worstMass > 1e-12 {
		t.Errorf("largest relative mass drift in the series: %.3g, want ≤ 1e-12", worstMass)
	}
	t.Logf("largest relative mass drift over two remaps: %.2e; markers %q", worstMass, markers)
	want := []string{"grid: cubed n = 12", "Hodge star: diagonal", "grid: icosahedral level 3"}
	if got := strings.Join(markers, " | "); !strings.Contains(got, strings.Join(want, " | ")) {
		t.Errorf("markers %q, want %q in order", got, want)
	}

	data, live, tl := savedRun(t, base)
	cmds := eventCmds(tl)
	if got := strings.Join(cmds, " "); got != "play pause set-grid play pause set-hodge play pause set-grid play pause" {
		t.Errorf("recorded events %q", got)
	}
	if tl.EndStep != end {
		t.Errorf("timeline end_step = %d, the run is at step %d", tl.EndStep, end)
	}
	if headless := replayHeadless(t, data); !bytes.Equal(headless, live) {
		t.Fatalf("the headless replay's final.nc (%d bytes) differs from the live run's (%d bytes)", len(headless), len(live))
	}
}

// TestCubedAndHodgeRefusals: bad grid and Hodge commands on a sphere run
// are refused with a message naming the field and what is allowed, and
// change nothing.
func TestCubedAndHodgeRefusals(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "sphere3", sphere3)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
	before := string(get(t, base+"/run/1/timeline.toml"))
	for _, tc := range []struct {
		cmd   string
		value any
		field string
		text  string
	}{
		{"set-hodge", "exact", "scheme.hodge", "consistent, diagonal"},
		{"set-hodge", 3, "scheme.hodge", "must be a string"},
		{"set-grid", map[string]any{"kind": "cubed", "n": 3}, "grid.n", "4 ≤ n ≤"},
		{"set-grid", map[string]any{"kind": "cubed", "n": 200}, "grid.n", "6n² cells"},
		{"set-grid", map[string]any{"kind": "cubed", "n": 12, "optimize": "lloyd"}, "grid.optimize", "only icosahedral"},
		{"set-grid", map[string]any{"kind": "quad", "n": 12}, "grid.kind", "icosahedral, cubed"},
		{"structure", 5, "structure", "takes no value"},
	} {
		r := cl.reply(cl.send(tc.cmd, tc.value), nil)
		if r.Type != "error" || r.fieldName() != tc.field || !strings.Contains(r.Message, tc.text) {
			t.Errorf("%s %v: reply %s field %q message %q; want an error on %q saying %q", tc.cmd, tc.value, r.Type, r.fieldName(), r.Message, tc.field, tc.text)
		}
	}
	if after := string(get(t, base+"/run/1/timeline.toml")); after != before {
		t.Errorf("refused commands changed the record:\n%s", after)
	}
}
