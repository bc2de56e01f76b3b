package tests

import (
	"bytes"
	"fmt"
	"io"
	"net/http"
	"strings"
	"testing"

	"gyrebench/server"
	"gyrebench/sim/timeline"
)

// get fetches a URL and fails the test unless the answer is 200 OK.
func get(t testing.TB, url string) []byte {
	t.Helper()
	resp, b := httpGet(t, url)
	if resp.StatusCode != http.StatusOK {
		t.Fatalf("GET %s: %s: %s", url, resp.Status, b)
	}
	return b
}

// httpGet GETs a URL and returns the response with its whole body (closed).
func httpGet(t testing.TB, url string) (*http.Response, []byte) {
	t.Helper()
	resp, err := http.Get(url)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	if err != nil {
		t.Fatal(err)
	}
	return resp, b
}

// savedRun fetches run 1's recorded timeline and its final.nc, and parses
// the timeline.
func savedRun(t testing.TB, base string) (data, live []byte, tl *timeline.Timeline) {
	t.Helper()
	data = get(t, base+"/run/1/timeline.toml")
	live = get(t, base+"/run/1/final.nc")
	tl, err := timeline.Parse(data, "saved.toml")
	if err != nil {
		t.Fatalf("the saved timeline does not parse: %v\n%s", err, data)
	}
	return data, live, tl
}

// eventCmds returns the command of each event of tl, in order.
func eventCmds(tl *timeline.Timeline) []string {
	var cmds []string
	for _, e := range tl.Events {
		cmds = append(cmds, string(e.Cmd))
	}
	return cmds
}

// advance waits until the run's step count reaches at least n.
func advance(cl *client, n int64) int64 {
	cl.t.Helper()
	var at int64
	cl.until(hang, "the run to advance", func(m msg) bool {
		if (m.Type == "status" || m.Type == "point") && m.Steps >= n {
			at = m.Steps
			return true
		}
		return false
	})
	return at
}

// stepsNow pauses the run and returns the step count it is at.
func stepsNow(cl *client, srv *server.Server, id string) int64 {
	cl.t.Helper()
	cl.mustAck("pause", nil, nil) // after the ack the run has stopped stepping
	return srv.Run(id).Info().Steps
}

// TestTimelineReplaysLiveRun drives a live run through a real websocket
// (play, a scheme switch, a dissipation change and a grid switch while running, a pause, a scrub
// back, a Δt change, single steps, a mark), saves its timeline over HTTP
// and replays it headless with 'gyrebench run': the replay's final.nc is
// the live run's final.nc at the same step, byte for byte. Then the same
// timeline replayed in the workbench pauses at the mark and ends on the
// same final.nc too.
func TestTimelineReplaysLiveRun(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, RingSize: 16, Scenario: writeScenario(t, "eddies", eddies)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })

	cl.mustAck("play", nil, nil)
	at := advance(cl, 40)
	cl.mustAck("set-scheme", "apvm", nil)
	at = advance(cl, at+40)
	cl.mustAck("set-dissipation", map[string]any{"hyperviscosity": 1e14, "divergence_damping": "2e4"}, nil)
	advance(cl, at+20)
	cl.mustAck("set-grid", map[string]any{"kind": "quad", "n": 24}, nil)
	at = advance(cl, at+100)
	paused := stepsNow(cl, srv, "1")
	cl.mustAck("scrub", 0, nil) // the oldest state kept since the grid switch
	cl.mustAck("scrub", 1, nil) // a second scrub before moving on: still one rewind
	cl.mustAck("set-dt", 90, nil)
	for i := 0; i < 7; i++ {
		cl.mustAck("step", nil, nil)
	}
	cl.mustAck("mark", "seven steps after the rewind", nil)
	end := stepsNow(cl, srv, "1")
	t.Logf("live run: paused at step %d, rewound and stepped to %d", paused, end)

	data, live, tl := savedRun(t, base)
	cmds := eventCmds(tl)
	want := "play set-scheme set-dissipation set-grid pause rewind set-dt mark"
	if got := strings.Join(cmds, " "); got != want {
		t.Errorf("recorded events %q, want %q", got, want)
	}
	if tl.EndStep != end {
		t.Errorf("timeline end_step = %d, the run is at step %d", tl.EndStep, end)
	}
	if d := tl.Events[2].Dissipation; d.Hyperviscosity != 1e14 || d.DivergenceDamping != 2e4 || d.Viscosity != 0 {
		t.Errorf("set-dissipation event recorded %+v, want ν₄ = 1e14, ν_δ = 2e4", d)
	}
	if rw := tl.Events[5]; rw.Step != paused || rw.ToStep >= paused || rw.ToStep+7 != end {
		t.Errorf("rewind event %+v: want from step %d back to step %d", rw, paused, end-7)
	}

	headless := replayHeadless(t, data)
	if !bytes.Equal(headless, live) {
		t.Fatalf("the headless replay's final.nc (%d bytes) differs from the live run's (%d bytes)", len(headless), len(live))
	}

	// The same timeline replayed in the workbench: it pauses at the mark,
	// and a final Play ends the replay on the same state.
	cl.mustAck("replay", map[string]string{"name": "saved.toml", "toml": string(data)}, nil)
	cl.mustAck("play", nil, nil)
	var mark msg
	cl.until(hang, "the replay to pause at the mark", func(m msg) bool {
		if m.Type == "marker" && m.Kind == "mark" {
			mark = m
		}
		return mark.Type != "" && m.Type == "status" && m.State == server.StatePaused
	})
	if mark.Label != "seven steps after the rewind" || mark.Steps != end {
		t.Errorf("replay paused at mark %q at step %d; want the recorded mark at step %d", mark.Label, mark.Steps, end)
	}
	cl.mustAck("play", nil, nil) // on from the mark: the replay ends at once
	cl.until(hang, "the replay to finish", func(m msg) bool {
		return m.Type == "status" && m.State == server.StatePaused && m.Steps == end
	})
	if again := get(t, base+"/run/1/final.nc"); !bytes.Equal(again, live) {
		t.Errorf("after the workbench replay, final.nc (%d bytes) differs from the live run's (%d bytes)", len(again), len(live))
	}
	// What the replay recorded is the same timeline (play and pause
	// presses aside, which are the replayer's own).
	re, err := timeline.Parse(get(t, base+"/run/1/timeline.toml"), "re-recorded.toml")
	if err != nil {
		t.Fatal(err)
	}
	if a, b := stateEvents(re), stateEvents(tl); a != b {
		t.Errorf("the replayed run recorded\n%s\nthe original\n%s", a, b)
	}
}

// stateEvents lists the events that change a run, one a line.
func stateEvents(tl *timeline.Timeline) string {
	var b strings.Builder
	for _, e := range tl.Events {
		if e.Cmd != timeline.Play && e.Cmd != timeline.Pause {
			fmt.Fprintf(&b, "%s at step %d\n", e, e.Step)
		}
	}
	return b.String()
}

// TestTimelineRefusals: bad replays and marks are refused with a message
// naming the field, and leave the run as it was.
func TestTimelineRefusals(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
	cl.mustAck("step", nil, nil)
	good := string(get(t, base+"/run/1/timeline.toml"))
	cases := []struct {
		cmd   string
		value any
		field string
		text  string
	}{
		{"replay", map[string]string{"builtin": "no-such-tour"}, "timeline", "no-such-tour"},
		{"replay", map[string]string{"name": "x.toml", "toml": strings.Replace(good, "[timeline]", "[timeline]\nspeed = 2", 1)}, "timeline", "timeline.speed"},
		{"replay", map[string]string{"name": "x.toml", "toml": good + "\n[[event]]\nstep = 0\ncmd = \"fly\"\n"}, "timeline", `cmd = "fly"`},
		{"replay", "just text", "timeline", "just text"},
		{"mark", "two\nlines", "label", "control character"},
		{"stop-replay", nil, "replay", "no timeline"},
	}
	for _, tc := range cases {
		r := cl.reply(cl.send(tc.cmd, tc.value), nil)
		if r.Type != "error" || r.fieldName() != tc.field || !strings.Contains(r.Message, tc.text) {
			t.Errorf("%s %v: reply %s field %q message %q; want an error on %q quoting %q", tc.cmd, tc.value, r.Type, r.fieldName(), r.Message, tc.field, tc.text)
		}
	}
	if after := string(get(t, base+"/run/1/timeline.toml")); after != good {
		t.Errorf("refused commands changed the record:\n%s", after)
	}
}
