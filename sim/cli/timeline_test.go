package cli

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/batch"
	"gyrebench/sim/timeline"
)

// liveTimeline drives a model directly with a scheme switch, a grid switch
// and a rewind, as the workbench would, and returns the timeline it wrote
// down and the model at its end.
func liveTimeline(t *testing.T) (*timeline.Timeline, *sim.Model) {
	t.Helper()
	cfg := sim.DefaultConfig()
	cfg.Title = "cli timeline test"
	cfg.Grid = sim.GridConfig{Kind: "hex", N: 16, Length: 1e6}
	cfg.Initial.Params = map[string]float64{"amplitude": 20, "width": 0.1}
	cfg.Output.Every = 600
	m, err := sim.NewModel(cfg, 1)
	if err != nil {
		t.Fatal(err)
	}
	tl := &timeline.Timeline{Config: cfg, Description: "recorded in a test"}
	steps := func(n int) {
		for i := 0; i < n; i++ {
			if err := m.Step(); err != nil {
				t.Fatal(err)
			}
		}
	}
	note := func(e timeline.Event) {
		e.Step, e.Time = m.Steps(), m.Time()
		tl.Events = append(tl.Events, e)
	}
	steps(20)
	note(timeline.Event{Cmd: timeline.SetScheme, Scheme: "apvm"})
	if err := m.SetScheme("apvm"); err != nil {
		t.Fatal(err)
	}
	steps(15)
	note(timeline.Event{Cmd: timeline.SetGrid, Kind: "tri", N: 16})
	nm, err := m.Regrid("tri", 16)
	if err != nil {
		t.Fatal(err)
	}
	m.Close()
	m = nm
	steps(5)
	back := append([]float64(nil), m.State()...)
	backT, backSteps := m.Time(), m.Steps()
	steps(12)
	note(timeline.Event{Cmd: timeline.Rewind, ToStep: backSteps, ToTime: backT})
	if err := m.SetState(back, backT, backSteps); err != nil {
		t.Fatal(err)
	}
	note(timeline.Event{Cmd: timeline.SetDt, Dt: 45})
	if err := m.SetDt(45); err != nil {
		t.Fatal(err)
	}
	steps(9)
	tl.EndStep, tl.EndTime = m.Steps(), m.Time()
	t.Cleanup(m.Close)
	return tl, m
}

// TestRunTimeline: 'gyrebench run timeline.toml' replays a recorded run
// headless; its final.nc is the live model's, written by the same writer,
// byte for byte.
func TestRunTimeline(t *testing.T) {
	tl, m := liveTimeline(t)
	dir := t.TempDir()
	file := filepath.Join(dir, "recorded.toml")
	if err := os.WriteFile(file, tl.Format(), 0o644); err != nil {
		t.Fatal(err)
	}
	want := filepath.Join(dir, "live-final.nc")
	if err := batch.WriteFinal(want, m); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	code, stdout, stderr := gyre(t, "run", file, "--out", out, "--workers", "2")
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	a, _ := os.ReadFile(want)
	b, err := os.ReadFile(filepath.Join(out, "final.nc"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, b) {
		t.Errorf("final.nc of the replay (%d bytes) differs from the live model's (%d bytes)", len(b), len(a))
	}
	s := readSummary(t, out)
	if s.Steps != tl.EndStep || s.Grid != "tri" || s.Scheme != "apvm" || s.Dt != 45 {
		t.Errorf("summary: %d steps on %s with %s, Δt = %g; want %d steps on tri with apvm, Δt = 45", s.Steps, s.Grid, s.Scheme, s.Dt, tl.EndStep)
	}
	if !strings.Contains(stdout, strconv.FormatInt(tl.EndStep, 10)+" steps") {
		t.Errorf("stdout %q does not report the %d steps", stdout, tl.EndStep)
	}
	// recipe.toml is the timeline, so rerunning the folder's recipe repeats
	// the run.
	if r, _ := os.ReadFile(filepath.Join(out, "recipe.toml")); !bytes.Equal(r, tl.Format()) {
		t.Errorf("recipe.toml is not the timeline:\n%s", r)
	}
	// The rewind dropped the rows it undid: times increase down the file,
	// and the last row is the end.
	csv, _ := os.ReadFile(filepath.Join(out, "series.csv"))
	rows := strings.Split(strings.TrimSpace(string(csv)), "\n")[1:]
	last := -1.0
	for _, row := range rows {
		ts, _, _ := strings.Cut(row, ",")
		tv, err := strconv.ParseFloat(ts, 64)
		if err != nil || tv <= last {
			t.Fatalf("series.csv times not increasing at row %q (after %g)", row, last)
		}
		last = tv
	}
	if last != tl.EndTime {
		t.Errorf("series.csv ends at t = %g, the timeline at %g", last, tl.EndTime)
	}
}

// TestRunBadTimeline: a broken timeline exits 1 before writing anything,
// with a message naming the event and the field.
func TestRunBadTimeline(t *testing.T) {
	tl, _ := liveTimeline(t)
	good := string(tl.Format())
	cases := []struct {
		name, from, to string
		args           []string
		want           []string
	}{
		{"unknown command", `cmd = "set-dt"`, `cmd = "set-speed"`, nil, []string{"event 4 of 4", "cmd", "set-speed"}},
		{"events out of order", "step = 35\n", "step = 3\n", nil, []string{"event 2 of 4", "step = 3 comes before step 20"}},
		{"event past the end", "\nstep = 40\n", "\nstep = 60\n", nil, []string{"event 4 of 4", "step = 60", "end_step = 49"}},
		{"end before the rewound-to step", "end_step = 49", "end_step = 30", nil, []string{"event 4 of 4", "step = 40", "end_step = 30"}},
		{"bad Δt", "dt = 45.0", "dt = -45.0", nil, []string{"event 4 of 4", "dt = -45"}},
		{"bad grid", `kind = "tri"`, `kind = "octagon"`, nil, []string{"event 2 of 4", "kind", "octagon"}},
		{"unknown key", `scheme = "apvm"`, "scheme = \"apvm\"\ncolour = 3", nil, []string{"event 1 of 4", "colour", "unknown key"}},
		{"--set of a choice", "", "", []string{"--set", "time.dt=30"}, []string{"--set time.dt=30", "only output.* keys"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			src := strings.Replace(good, tc.from, tc.to, 1)
			if tc.from != "" && src == good {
				t.Fatalf("%q not in the timeline", tc.from)
			}
			dir := t.TempDir()
			file := filepath.Join(dir, "bad.toml")
			if err := os.WriteFile(file, []byte(src), 0o644); err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(dir, "out")
			code, _, stderr := gyre(t, append([]string{"run", file, "--out", out}, tc.args...)...)
			if code != ExitBadInput {
				t.Fatalf("exit %d, want %d; stderr %s", code, ExitBadInput, stderr)
			}
			for _, w := range tc.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr %q does not contain %q", stderr, w)
				}
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("a refused timeline wrote %s", out)
			}
		})
	}

	// output.* may be set; other commands refuse a timeline by name.
	dir := t.TempDir()
	file := filepath.Join(dir, "ok.toml")
	if err := os.WriteFile(file, []byte(good), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := gyre(t, "run", file, "--set", "output.every=1200", "--out", filepath.Join(dir, "out")); code != ExitOK {
		t.Errorf("--set output.every on a timeline: exit %d: %s", code, stderr)
	}
	if code, _, stderr := gyre(t, "sweep", file, "--vary", "grid.n=8,16", "--out", filepath.Join(dir, "sw")); code != ExitBadInput || !strings.Contains(stderr, "is a timeline file") {
		t.Errorf("sweep of a timeline: exit %d, stderr %q; want 1 and a message saying it is a timeline", code, stderr)
	}
}
