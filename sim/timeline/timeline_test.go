package timeline

import (
	"reflect"
	"strings"
	"testing"

	"gyrebench/sim"
)

// good is a valid timeline file; the bad cases below each change a line.
const good = `title = "t"
[grid]
kind = "hex"
n = 16
length = 1.0e6
[time]
integrator = "rk3"
dt = 60.0
duration = 86400.0
[initial]
case = "gaussian-bump"

[timeline]
version = 1
end_step = 100
end_time = 6000.0

[[event]]
step = 10
time = 600.0
cmd = "set-scheme"
scheme = "apvm"

[[event]]
step = 20
time = 1200.0
cmd = "set-grid"
kind = "quad"
n = 16

[[event]]
step = 30
time = 1800.0
cmd = "rewind"
to_step = 25
`

func TestParseGood(t *testing.T) {
	tl, err := Parse([]byte(good), "good.toml")
	if err != nil {
		t.Fatal(err)
	}
	want := []Event{
		{Step: 10, Time: 600, Cmd: SetScheme, Scheme: "apvm"},
		{Step: 20, Time: 1200, Cmd: SetGrid, Kind: "quad", N: 16},
		{Step: 30, Time: 1800, Cmd: Rewind, ToStep: 25},
	}
	if !reflect.DeepEqual(tl.Events, want) || tl.EndStep != 100 || tl.Config.Grid.Kind != "hex" || tl.Config.Scheme.Name != "trisk-energy" {
		t.Errorf("parsed %+v, end %d, grid %s, scheme %s", tl.Events, tl.EndStep, tl.Config.Grid.Kind, tl.Config.Scheme.Name)
	}
	if !Is([]byte(good)) {
		t.Error("Is(a timeline) = false")
	}
	if Is([]byte("title = \"a scenario\"\n[grid]\nn = 8\n")) || Is([]byte("[[[not toml")) {
		t.Error("Is(a scenario or junk) = true")
	}
}

// TestParseBad: every malformed timeline is refused with a message naming
// the event (index and line) and the field.
func TestParseBad(t *testing.T) {
	cases := []struct {
		name, from, to string
		want           []string // all must appear in the message
	}{
		{"unknown command", `cmd = "set-scheme"`, `cmd = "set-colour"`, []string{"event 1 of 3", "line 18", "cmd", "set-colour", "allowed: set-scheme"}},
		{"out of order", "step = 20\n", "step = 5\n", []string{"event 2 of 3", "step", "step = 5 comes before step 10"}},
		{"past the end", "step = 10\n", "step = 300\n", []string{"event 1 of 3", "step = 300", "end_step = 100"}},
		{"end before the last event", "end_step = 100", "end_step = 12", []string{"end_step = 12", "before step 25"}},
		{"unknown scheme", `scheme = "apvm"`, `scheme = "upwind"`, []string{"event 1 of 3", "scheme", "upwind", "allowed"}},
		{"al81 off quad", `scheme = "apvm"`, `scheme = "al81"`, []string{"event 1 of 3", "scheme", "al81", "quad"}},
		{"odd hex n", "kind = \"quad\"\nn = 16", "kind = \"hex\"\nn = 15", []string{"event 2 of 3", "n", "15"}},
		{"unknown grid", `kind = "quad"`, `kind = "pentagon"`, []string{"event 2 of 3", "kind", "pentagon", "allowed"}},
		{"sphere from the plane", "kind = \"quad\"\nn = 16", "kind = \"icosahedral\"\nn = 3", []string{"event 2 of 3", "kind", "icosahedral", "plane"}},
		{"fractional step", "step = 10\n", "step = 10.5\n", []string{"event 1 of 3", "step", "whole number"}},
		{"step as text", "step = 10\n", "step = \"ten\"\n", []string{"event 1 of 3", "step", `"ten"`}},
		{"key of another command", `scheme = "apvm"`, "scheme = \"apvm\"\ndt = 30.0", []string{"event 1 of 3", "dt", "unknown key", "allowed: step, time, cmd, scheme"}},
		{"missing value", "kind = \"quad\"\nn = 16", `kind = "quad"`, []string{"event 2 of 3", "n", "missing"}},
		{"rewind forward", "to_step = 25", "to_step = 31", []string{"event 3 of 3", "to_step = 31"}},
		{"rewind across the grid change", "to_step = 25", "to_step = 15", []string{"event 3 of 3", "to_step = 15", "grid change at step 20"}},
		{"negative time", "time = 600.0", "time = -1.0", []string{"event 1 of 3", "time", "-1"}},
		{"no timeline table", "[timeline]\nversion = 1\nend_step = 100\nend_time = 6000.0\n", "", []string{"no [timeline] table"}},
		{"wrong version", "version = 1", "version = 2", []string{"timeline.version = 2"}},
		{"unknown timeline key", "end_time = 6000.0", "end_time = 6000.0\nspeed = 2", []string{"timeline.speed", "unknown key"}},
		{"bad scenario key", "[grid]\n", "[grid]\ncolour = \"red\"\n", []string{"grid.colour", "unknown key"}},
		{"not TOML", "[[event]]\nstep = 10", "[[event]]\nstep = = 10", []string{"bad.toml:"}},
		{"snapshots and a grid change", "[initial]", "[output]\nsnapshots = true\n[initial]", []string{"event 2 of 3", "snapshots"}},
		{"optimize on a planar grid", "kind = \"quad\"\nn = 16", "kind = \"quad\"\nn = 16\noptimize = \"lloyd\"", []string{"event 2 of 3", "optimize", "lloyd"}},
		{"negative hyperviscosity", `cmd = "set-scheme"` + "\nscheme = \"apvm\"", `cmd = "set-dissipation"` + "\nhyperviscosity = -1.0", []string{"event 1 of 3", "hyperviscosity", "-1", "≥ 0"}},
		{"viscosity as text", `cmd = "set-scheme"` + "\nscheme = \"apvm\"", `cmd = "set-dissipation"` + "\nviscosity = \"lots\"", []string{"event 1 of 3", "viscosity", "must be a number"}},
		{"optimize as a number", "kind = \"quad\"\nn = 16", "kind = \"quad\"\nn = 16\noptimize = 1", []string{"event 2 of 3", "optimize", "must be a string"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			src := strings.Replace(good, tc.from, tc.to, 1)
			if src == good {
				t.Fatalf("the case does not change the file (%q not found)", tc.from)
			}
			_, err := Parse([]byte(src), "bad.toml")
			if err == nil {
				t.Fatalf("accepted:\n%s", src)
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("message %q does not contain %q", err, w)
				}
			}
		})
	}
}

func TestCheckLabel(t *testing.T) {
	for _, tc := range []struct {
		label string
		ok    bool
	}{
		{"the vortices merge", true},
		{"Δt halves: “watch”", true},
		{"two\nlines", false},
		{strings.Repeat("x", MaxLabel+1), false},
	} {
		if err := CheckLabel(tc.label); (err == nil) != tc.ok {
			t.Errorf("CheckLabel(%.20q) = %v, want ok = %v", tc.label, err, tc.ok)
		}
	}
}

// sphereGood is a timeline on the sphere that switches the Lloyd
// relaxation off and on, and changes the level keeping it.
const sphereGood = `title = "t"
[grid]
kind = "icosahedral"
n = 3
optimize = "lloyd"
[time]
integrator = "rk3"
dt = 600.0
duration = 86400.0
[initial]
case = "williamson-2"

[timeline]
version = 1
end_step = 30

[[event]]
step = 10
cmd = "set-grid"
kind = "icosahedral"
n = 3
optimize = "none"

[[event]]
step = 20
cmd = "set-grid"
kind = "icosahedral"
n = 2
`

// TestOptimizeEvents: set-grid carries grid.optimize when it is given,
// keeps the run's when it is not, survives Format and Parse, and is
// refused for an unknown value.
func TestOptimizeEvents(t *testing.T) {
	tl, err := Parse([]byte(sphereGood), "sphere.toml")
	if err != nil {
		t.Fatal(err)
	}
	want := []Event{
		{Step: 10, Cmd: SetGrid, Kind: "icosahedral", N: 3, Optimize: "none"},
		{Step: 20, Cmd: SetGrid, Kind: "icosahedral", N: 2},
	}
	if !reflect.DeepEqual(tl.Events, want) {
		t.Fatalf("parsed %+v, want %+v", tl.Events, want)
	}
	again, err := Parse(tl.Format(), "formatted.toml")
	if err != nil || !reflect.DeepEqual(again.Events, want) {
		t.Fatalf("Format then Parse: %+v, %v; want %+v", again.Events, err, want)
	}
	if s := want[0].String(); !strings.Contains(s, "none") {
		t.Errorf("event text %q does not name the optimisation", s)
	}
	if !want[1].Noop(sim.Config{Grid: sim.GridConfig{Kind: "icosahedral", N: 2, Optimize: "lloyd"}}) ||
		want[0].Noop(sim.Config{Grid: sim.GridConfig{Kind: "icosahedral", N: 3, Optimize: "lloyd"}}) ||
		!want[0].Noop(sim.Config{Grid: sim.GridConfig{Kind: "icosahedral", N: 3}}) {
		t.Error("Noop: a set-grid without optimize must match any optimisation; one with optimize = none must match none (or unset) only")
	}

	bad := strings.Replace(sphereGood, `optimize = "none"`, `optimize = "spring"`, 1)
	if _, err := Parse([]byte(bad), "bad.toml"); err == nil || !strings.Contains(err.Error(), "spring") || !strings.Contains(err.Error(), "event 1 of 2") {
		t.Errorf("optimize = spring: %v; want an error naming event 1 of 2 and the value", err)
	}
}
