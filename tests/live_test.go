package tests

import (
	"math"
	"strings"
	"testing"
	"time"

	"github.com/coder/websocket"

	"gyrebench/server"
)

// segment collects what streams between two changes.
type segment struct {
	points []msg
	frames []*frameHdr
}

func (s *segment) see(m msg) {
	switch m.Type {
	case "point":
		s.points = append(s.points, m)
	case "frame":
		s.frames = append(s.frames, m.bin)
	}
}

// advancing reports whether at least n frames arrived with strictly
// increasing step counts.
func (s *segment) advancing(n int) bool {
	k := 0
	last := -1.0
	for _, f := range s.frames {
		if f.Steps > last {
			k++
			last = f.Steps
		}
	}
	return k >= n
}

// energyRate is |ΔE/E₀| per simulated day over the segment's points.
func (s *segment) energyRate() float64 {
	a, b := s.points[0], s.points[len(s.points)-1]
	return math.Abs(b.Energy-a.Energy) / (b.T - a.T) * 86400
}

// runFor lets the run go on until a point at least steps further than
// the last one seen arrives, collecting into seg.
func runFor(cl *client, seg *segment, steps int64) {
	cl.t.Helper()
	start := int64(-1)
	if n := len(seg.points); n > 0 {
		start = seg.points[n-1].Steps
	}
	cl.until(hang, "the run to advance", func(m msg) bool {
		seg.see(m)
		if m.Type == "point" && start < 0 {
			start = m.Steps
		}
		return m.Type == "point" && start >= 0 && m.Steps >= start+steps && seg.advancing(3)
	})
}

// TestLiveRun plays a run over a real websocket and changes the scheme,
// the integrator, Δt and the grid while it runs.
func TestLiveRun(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, RingSize: 16, Scenario: writeScenario(t, "eddies", eddies)})
	cl := dial(t, base, "1")

	// On joining: hello, the config, the geometry, the history and a frame.
	var cfg msg
	var geomGen uint32
	cl.until(hang, "the initial messages", func(m msg) bool {
		switch m.Type {
		case "config":
			cfg = m
		case "geometry":
			geomGen = m.bin.Gen
		}
		return m.Type == "frame"
	})
	if cfg.Scheme != "trisk-energy" || cfg.Integrator != "rk4" || cfg.Grid.Kind != "hex" || cfg.Grid.N != 32 {
		t.Fatalf("config on joining = %+v, want the scenario file's choices", cfg)
	}
	if geomGen == 0 {
		t.Fatal("no geometry before the first frame")
	}

	var a segment
	cl.mustAck("play", nil, a.see)
	runFor(cl, &a, 600)

	// trisk-energy conserves energy in space, so with rk4 its drift is the
	// integrator's O(Δt⁴) error; the enstrophy-conserving PV flux gives up
	// energy conservation (Ringler, Thuburn, Klemp & Skamarock 2010,
	// J. Comput. Phys. 229, §4–5), so energy drifts at the rate of the
	// spatial truncation error, orders of magnitude faster.
	var b segment
	var mark msg
	cl.mustAck("set-scheme", "trisk-enstrophy", func(m msg) {
		if m.Type == "marker" {
			mark = m
		}
		if mark.Type == "" {
			a.see(m) // the point just before the change closes segment a
		} else {
			b.see(m)
		}
	})
	if mark.Kind != "scheme" || !strings.Contains(mark.Label, "trisk-enstrophy") {
		t.Errorf("marker for the scheme change = %+v, want kind scheme with the new name", mark)
	}
	runFor(cl, &b, 600)
	ra, rb := a.energyRate(), b.energyRate()
	t.Logf("energy drift: trisk-energy %.3g per day, trisk-enstrophy %.3g per day (ratio %.3g)", ra, rb, rb/ra)
	if !(rb > 100*ra) {
		t.Errorf("energy drift per day %.3g (trisk-energy) → %.3g (trisk-enstrophy): want a jump of at least 100×", ra, rb)
	}
	if !a.advancing(3) || !b.advancing(3) {
		t.Errorf("frames stalled: %d frames before the scheme change, %d after", len(a.frames), len(b.frames))
	}

	// Integrator, then Δt: frames keep coming and the clock follows Δt.
	var c segment
	conf := cl.mustAckConfig("set-integrator", "rk3")
	if conf.Integrator != "rk3" {
		t.Errorf("integrator after set-integrator rk3 = %q", conf.Integrator)
	}
	runFor(cl, &c, 200)
	var d segment
	conf = cl.mustAckConfig("set-dt", 60)
	if conf.Dt != 60 {
		t.Errorf("Δt after set-dt 60 = %g", conf.Dt)
	}
	runFor(cl, &d, 200)
	if !c.advancing(3) || !d.advancing(3) {
		t.Errorf("frames stalled: %d after the integrator change, %d after the Δt change", len(c.frames), len(d.frames))
	}
	if f0, f1 := d.frames[0], d.frames[len(d.frames)-1]; f1.Steps > f0.Steps {
		if got := (f1.T - f0.T) / (f1.Steps - f0.Steps); math.Abs(got-60) > 1e-9 {
			t.Errorf("simulated time per step after set-dt 60 = %g s", got)
		}
	}

	// Grid: hex → tri. The depth is remapped conservatively, so the mass
	// is the same to round-off on either side of the switch.
	geo, before, after := cl.switchGrid(map[string]any{"kind": "tri", "n": 32})
	if geo == nil || geo.Gen == geomGen {
		t.Fatalf("no new geometry after the grid switch (got %+v)", geo)
	}
	if before.Type == "" || after.Type == "" {
		t.Fatal("no invariant points on both sides of the grid switch")
	}
	if rel := math.Abs(after.MassAbs-before.MassAbs) / before.MassAbs; rel > 1e-12 {
		t.Errorf("mass across the hex → tri switch: %.17g → %.17g (relative change %.2g), want round-off (≤ 1e-12)", before.MassAbs, after.MassAbs, rel)
	}
	var e segment
	runFor(cl, &e, 200)
	var onNew int
	for _, f := range e.frames {
		if f.Gen == geo.Gen {
			onNew++
			if f.Count != geo.Count {
				t.Errorf("depth frame on the new grid has %d values, the grid %d cells", f.Count, geo.Count)
			}
		}
	}
	if onNew < 3 || !e.advancing(3) {
		t.Errorf("after the grid switch %d frames on the new grid, advancing %v", onNew, e.advancing(3))
	}
	last := e.points[len(e.points)-1]
	if math.Abs(last.Mass) > 1e-12 {
		t.Errorf("mass drift since the start, after running on the new grid = %.3g, want round-off", last.Mass)
	}
	cl.mustAck("pause", nil, nil)
}

// hex64 is a run with large frames (4096 cells, 16 KiB each): a client
// that does not read fills its socket buffers within a second or two.
var hex64 = fPlaneScenario("test: hexagonal bump, n = 64", "hex", 64, "1.0e6", "rk3", "60.0", "86400.0", `case = "gaussian-bump"
`)

const (
	// slowReaderSteps is how far the run must step while a client is
	// stalled.
	slowReaderSteps = 100
	// slowReaderBytes of frames sent after a client stopped reading are
	// three times more than the socket buffers between the server and
	// it can hold (the server's send buffer, sendBuffer in server.go, and
	// the client's receive buffer, 64 KiB; the kernel doubles each), so by
	// then the server's writes to it are blocked.
	slowReaderBytes = 2 << 20
)

// frameRec is what a frame header says about the frames around it.
type frameRec struct {
	steps   float64
	skipped uint32
}

// TestSlowReader: a client that stops reading entirely holds back neither
// the run nor its other watchers, and when it reads again each frame tells
// it exactly how many frames it missed. Every judgement is a count or an
// ordering; the deadlines are guards against hangs. How much a slow
// client costs in steps per second is measured by BenchmarkSlowReader.
func TestSlowReader(t *testing.T) {
	// The server disconnects a client that has not accepted a write for
	// Options.WriteTimeout; here that is the hang guard, so that however
	// slow the machine, the stall ends when the test says.
	_, base := startServer(t, server.Options{Workers: 1, MaxFPS: server.MaxFPSLimit, WriteTimeout: hang, Scenario: writeScenario(t, "hex64", hex64)})
	cl := dial(t, base, "1")
	other := dial(t, base, "1")
	var seen []frameRec // every frame cl receives, in order
	watch := func(m msg) {
		if m.Type == "frame" {
			seen = append(seen, frameRec{m.bin.Steps, m.bin.Skipped})
		}
	}
	cl.mustAck("play", nil, watch)

	// Never read: the server's writes to it stall once the socket
	// buffers fill, and its frames are replaced in its slot.
	slow := dialRaw(t, base, "1")
	joined := false
	sent := 0
	var s0 float64 // the step by which the slow client is stalled
	cl.until(hang, "frames enough to fill the socket buffers of the client that does not read", func(m msg) bool {
		watch(m)
		switch {
		case m.Type == "status" && m.Watchers == 3:
			joined = true
		case m.Type == "frame" && joined:
			sent += 32 + 4*int(m.bin.Count)
			s0 = m.bin.Steps
		}
		return sent >= slowReaderBytes
	})

	// The run steps on while the client is stalled, and the other
	// watchers keep receiving frames.
	stalled := time.Now() // for the log
	first := len(seen)
	end := s0 + slowReaderSteps
	cl.until(hang, "the run to step on while a client does not read", func(m msg) bool {
		watch(m)
		return m.Type == "frame" && m.bin.Steps >= end
	})
	if !advancing(seen[first:], 3) {
		t.Errorf("while a client did not read, the run went %d steps and a watcher got %d frames, want at least 3 with increasing steps", slowReaderSteps, len(seen)-first)
	}
	var others []frameRec
	for len(others) == 0 || others[len(others)-1].steps < end {
		m := other.next(hang)
		if m.Type == "frame" && m.bin.Steps >= s0 {
			others = append(others, frameRec{m.bin.Steps, m.bin.Skipped})
		}
	}
	if !advancing(others, 3) {
		t.Errorf("while a client did not read, the second watcher got %d frames over %d steps, want at least 3 with increasing steps", len(others), slowReaderSteps)
	}

	// Now the stalled client reads: what its socket held, then the frame
	// in its slot, sent after the run passed end.
	sc := &client{t: t, c: slow, in: make(chan msg, 1<<14)}
	ctx, stop := contextFor(t)
	defer stop()
	go sc.read(ctx)
	var got []frameRec
	sc.until(hang, "a frame sent after the stall", func(m msg) bool {
		if m.Type == "frame" {
			got = append(got, frameRec{m.bin.Steps, m.bin.Skipped})
		}
		return m.Type == "frame" && m.bin.Steps >= end
	})
	q := got[len(got)-1]
	cl.until(hang, "the watcher to pass the stalled client's last frame", func(m msg) bool {
		watch(m)
		return m.Type == "frame" && m.bin.Steps > q.steps
	})
	// It received nothing while the run went from s0 to end ...
	if n := len(got); n < 2 || got[n-2].steps > s0 {
		t.Errorf("the client that did not read got frames while stalled (steps, skipped): %v; want none between step %.0f and %.0f", got, s0, end)
	}
	// ... and each frame says how many were replaced in its slot since the
	// one before: the frames the run sent in between.
	for i := 1; i < len(got); i++ {
		lo, hi := sentBetween(seen, got[i-1].steps, got[i].steps)
		if got[i].skipped < lo || got[i].skipped > hi {
			t.Errorf("the stalled client's frame at step %.0f says %d skipped since step %.0f; the run sent between %d and %d frames in between", got[i].steps, got[i].skipped, got[i-1].steps, lo, hi)
		}
	}
	if q.skipped < 3 {
		t.Errorf("the stalled client's frame after the stall (step %.0f) says %d skipped, want at least the 3 the watchers got meanwhile", q.steps, q.skipped)
	}
	t.Logf("stalled from step %.0f (%d frames received before) to %.0f, at least %.1f s; its next frame says %d skipped", got[len(got)-2].steps, len(got)-1, q.steps, time.Since(stalled).Seconds(), q.skipped)
	// And the run is still there for everyone.
	cl.mustAck("pause", nil, nil)
}

// advancing reports whether at least n of the frames have strictly
// increasing step counts.
func advancing(fs []frameRec, n int) bool {
	k, last := 0, -1.0
	for _, f := range fs {
		if f.steps > last {
			k, last = k+1, f.steps
		}
	}
	return k >= n
}

// sentBetween bounds the number of frames the run sent with a step count
// strictly between a and b, from the frames one watcher received (seen, in
// order). Frames sent while running carry distinct step counts, so each
// received frame in (a, b) is one of them; a frame the watcher itself
// skipped is counted in the next frame it received, at or after the first
// one past b.
func sentBetween(seen []frameRec, a, b float64) (lo, hi uint32) {
	for _, f := range seen {
		if f.steps <= a {
			continue
		}
		if f.steps < b {
			lo++
		}
		hi += f.skipped
		if f.steps >= b {
			break
		}
	}
	return lo, lo + hi
}

// TestBadCommands sends malformed and out-of-range commands: each gets an
// error naming the field and the value and saying what is allowed, and
// none changes the run.
func TestBadCommands(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
	cl.mustAck("step", nil, nil) // a state with a ring entry and a few invariants
	before := srv.Run("1").Info()

	cases := []struct {
		name, raw   string
		binary      bool
		field, text string // the reply names this field and quotes this text
	}{
		{"not JSON", `play please`, false, "message", "play please"},
		{"binary", "\x01\x02", true, "message", "binary"},
		{"unknown key", `{"cmd":"play","speed":2}`, false, "message", "speed"},
		{"unknown command", `{"cmd":"fly"}`, false, "cmd", "fly"},
		{"negative dt", `{"cmd":"set-dt","value":-5}`, false, "time.dt", "-5"},
		{"huge dt", `{"cmd":"set-dt","value":1e9}`, false, "time.dt", "1e9"},
		{"dt not a number", `{"cmd":"set-dt","value":"soon"}`, false, "time.dt", "soon"},
		{"dt missing", `{"cmd":"set-dt"}`, false, "time.dt", "missing"},
		{"huge resolution", `{"cmd":"set-grid","value":{"kind":"hex","n":100000}}`, false, "grid.n", "100000"},
		{"odd resolution", `{"cmd":"set-grid","value":{"kind":"hex","n":33}}`, false, "grid.n", "33"},
		{"fractional resolution", `{"cmd":"set-grid","value":{"kind":"tri","n":2.5}}`, false, "grid.n", "2.5"},
		{"unknown grid", `{"cmd":"set-grid","value":{"kind":"pentagon","n":32}}`, false, "grid.kind", "pentagon"},
		{"scheme not on hex", `{"cmd":"set-scheme","value":"al81"}`, false, "scheme.name", "al81"},
		{"unknown scheme", `{"cmd":"set-scheme","value":"upwind"}`, false, "scheme.name", "upwind"},
		{"unknown integrator", `{"cmd":"set-integrator","value":"magic"}`, false, "time.integrator", "magic"},
		{"unknown field", `{"cmd":"set-field","value":"temperature"}`, false, "field", "temperature"},
		{"unknown scenario", `{"cmd":"load","value":"no-such-run"}`, false, "scenario", "no-such-run"},
		{"scrub out of range", `{"cmd":"scrub","value":99}`, false, "scrub", "99"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			cl.t = t
			typ := websocket.MessageText
			if tc.binary {
				typ = websocket.MessageBinary
			}
			cl.sendRaw(typ, []byte(tc.raw))
			var r msg
			cl.until(hang, "an error reply", func(m msg) bool {
				switch m.Type {
				case "config", "marker", "geometry", "history":
					t.Errorf("a refused command changed the run: got a %s message", m.Type)
				}
				if m.Type == "ack" {
					t.Fatalf("%s was accepted", tc.raw)
				}
				r = m
				return m.Type == "error"
			})
			if r.fieldName() != tc.field {
				t.Errorf("error names field %q, want %q (message %q)", r.fieldName(), tc.field, r.Message)
			}
			if !strings.Contains(r.Message, tc.text) {
				t.Errorf("message %q does not quote %q", r.Message, tc.text)
			}
			if !containsAny(r.Message, "allowed", "must be", "needs", "use one of", "want", "send ") {
				t.Errorf("message %q does not say what is allowed", r.Message)
			}
		})
	}
	cl.t = t
	if after := srv.Run("1").Info(); after != before {
		t.Errorf("the run changed under refused commands:\nbefore %+v\nafter  %+v", before, after)
	}
	// The connection still works.
	conf := cl.mustAckConfig("set-dt", 60)
	if conf.Dt != 60 {
		t.Errorf("after the refused commands, set-dt 60 gave Δt = %g", conf.Dt)
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
