// Package tests holds gyrebench's end-to-end tests: the real server on a
// loopback port, real websocket clients, and a real headless Chromium.
package tests

import (
	"bytes"
	"context"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"net"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/coder/websocket"

	"gyrebench/server"
	"gyrebench/sim/cli"
)

// hang bounds every wait in these tests. It is a guard against a hang,
// not a judgement of speed: a correct program meets it with room to spare
// even under the race detector beside two CPU-bound programs on two
// cores (where a two-run sweep with figures took over two minutes), and
// no test fails because something took long but less than this.
const hang = 10 * time.Minute

// analysisHang bounds a wait for the linear analysis or the structure
// report. The test servers run them at normal priority
// (Options.AnalysisAtNormalPriority, set by startServer): at the
// workbench's nice 19 two CPU-bound programs beside the tests starved a
// structure report for over ten minutes. Still a guard against a hang,
// not a judgement of speed.
const analysisHang = 10 * time.Minute

// startServer runs the workbench on 127.0.0.1 with a random port.
// Its analysis runs at normal priority, so that what the tests wait for is
// not starved by other work on the machine (see analysisHang).
func startServer(t testing.TB, opt server.Options) (*server.Server, string) {
	t.Helper()
	opt.AnalysisAtNormalPriority = true
	srv, err := server.New(opt)
	if err != nil {
		t.Fatalf("server.New: %v", err)
	}
	ts := httptest.NewUnstartedServer(nil)
	ts.Config = srv.HTTPServer()
	ts.Start()
	t.Cleanup(func() {
		srv.Close() // ends the websockets, which httptest does not track
		ts.Close()
	})
	return srv, ts.URL
}

// fPlaneScenario returns the text of a scenario on the f-plane (f0 =
// 1e-4 s⁻¹, depth 1000 m) with the trisk-energy scheme: the grid's kind,
// n and length, the integrator, Δt and duration, and the [initial]
// table's lines as given (numbers as TOML text).
func fPlaneScenario(title, kind string, n int, length, integrator, dt, duration, initial string) string {
	return fmt.Sprintf(`title = %q
[grid]
kind = %q
n = %d
length = %s
[physics]
f0 = 1.0e-4
depth = 1000.0
[scheme]
name = "trisk-energy"
[time]
integrator = %q
dt = %s
duration = %s
[initial]
%s`, title, kind, n, length, integrator, dt, duration, initial)
}

// Scenarios that tests in several files share.

// eddies is a small freely decaying turbulence run: fast enough for a
// test, with enough vorticity gradients that the choice of PV flux shows.
var eddies = fPlaneScenario("test: small decaying eddies", "hex", 32, "2.0e6", "rk4", "120.0", "864000.0", `case = "turbulence"
seed = 7.0
k_peak = 6.0
u_rms = 8.0
`)

// smallHex is a small planar run to start from; the sphere is loaded into
// it, as a user does from the scenario menu.
var smallHex = fPlaneScenario("test: small hexagonal bump", "hex", 16, "1.0e6", "rk3", "60.0", "86400.0", `case = "gaussian-bump"
`)

// hex128 is a large planar run (32 768 cells) of shear layers, for the
// speed benchmarks and the limits on large grids.
var hex128 = fPlaneScenario("speed: shear layers on hex n = 128", "hex", 128, "2.0e6", "rk3", "60.0", "1728000.0", `case = "shear-layer"
`)

// stopServe ends the context of a server.Serve (cancel) and waits, with
// hang as the guard, for it to return on done: nil, or the test fails.
func stopServe(t testing.TB, cancel context.CancelFunc, done <-chan error) {
	t.Helper()
	cancel()
	select {
	case err := <-done:
		if err != nil {
			t.Fatalf("Serve returned %v after its context ended, want nil", err)
		}
	case <-time.After(hang):
		t.Fatalf("Serve did not return within %v of its context ending (a guard against a hang)", hang)
	}
}

// writeScenario writes a scenario file for the test and returns its path.
func writeScenario(t testing.TB, name, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name+".toml")
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// frameHdr is the header of a binary message (server/doc.go).
type frameHdr struct {
	Kind    byte
	Gen     uint32
	Skipped uint32
	Count   uint32
	T       float64
	Steps   float64
}

// msg is any message from the server, JSON or binary.
type msg struct {
	Type    string          `json:"type"`
	ID      int64           `json:"id"`
	Cmd     string          `json:"cmd"`
	Field   json.RawMessage `json:"field"` // a string in both config and error
	Value   string          `json:"value"`
	Message string          `json:"message"`

	State       string   `json:"state"`
	Steps       int64    `json:"steps"`
	T           float64  `json:"t"`
	StepsPerSec float64  `json:"steps_per_s"`
	WallS       float64  `json:"wall_s"`
	Skipped     int64    `json:"frames_skipped"`
	Watchers    int      `json:"watchers"`
	BlowUp      *blowUp  `json:"blowup"`
	Scheme      string   `json:"scheme"`
	Integrator  string   `json:"integrator"`
	Dt          float64  `json:"dt"`
	Grid        gridInfo `json:"grid"`
	Kind        string   `json:"kind"`
	Label       string   `json:"label"`

	Mass      float64 `json:"mass"`
	Energy    float64 `json:"energy"`
	Enstrophy float64 `json:"enstrophy"`
	MassAbs   float64 `json:"mass_abs"`

	Hodge string `json:"hodge"` // config
	Role  string `json:"role"`  // role, on a shared workbench

	// history: the server's series of points and its markers.
	Points []struct {
		Mass *float64 `json:"mass"`
	} `json:"points"`
	Markers []struct {
		Label string `json:"label"`
	} `json:"markers"`

	bin *frameHdr
}

type gridInfo struct {
	Kind     string `json:"kind"`
	N        int    `json:"n"`
	Cells    int    `json:"cells"`
	Vertices int    `json:"vertices"`
	Optimize string `json:"optimize"`
}

type blowUp struct {
	Step int64   `json:"step"`
	T    float64 `json:"t"`
	Cell int     `json:"cell"`
	Edge int     `json:"edge"`
}

func (m msg) fieldName() string {
	var s string
	_ = json.Unmarshal(m.Field, &s)
	return s
}

// client is a websocket client that reads every message into a channel.
type client struct {
	t      testing.TB
	c      *websocket.Conn
	in     chan msg
	nextID int64
}

// dial connects to run id; the client reads until the test ends.
func dial(t testing.TB, base, id string) *client {
	t.Helper()
	c, rctx := dialWS(t, base, "/run/"+id+"/ws")
	cl := &client{t: t, c: c, in: make(chan msg, 1<<14)}
	go cl.read(rctx)
	return cl
}

// mustAckConfig sends the command, waits for its ack and returns the last
// config message that came before it (Type "" if none).
func (cl *client) mustAckConfig(cmd string, value any) (conf msg) {
	cl.t.Helper()
	cl.mustAck(cmd, value, func(m msg) {
		if m.Type == "config" {
			conf = m
		}
	})
	return conf
}

// switchGrid sends set-grid with value and waits for its ack. It returns
// the new geometry's header (nil if none came), the last invariant point
// before the grid marker and the first after it (Type "" if none).
func (cl *client) switchGrid(value map[string]any) (geo *frameHdr, before, after msg) {
	cl.t.Helper()
	marked := false
	cl.mustAck("set-grid", value, func(m msg) {
		switch {
		case m.Type == "geometry":
			geo = m.bin
		case m.Type == "marker":
			marked = m.Kind == "grid"
		case m.Type == "point" && !marked:
			before = m
		case m.Type == "point" && marked && after.Type == "":
			after = m
		}
	})
	return geo, before, after
}

// dialWS opens the websocket at path on the server at base. It returns
// the connection and the context its reader should use; both end with
// the test.
func dialWS(t testing.TB, base, path string) (*websocket.Conn, context.Context) {
	t.Helper()
	return dialWSWith(t, base, path, nil)
}

// dialWSWith is dialWS with dial options (an HTTP client with cookies).
func dialWSWith(t testing.TB, base, path string, opts *websocket.DialOptions) (*websocket.Conn, context.Context) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	u := "ws" + strings.TrimPrefix(base, "http") + path
	c, _, err := websocket.Dial(ctx, u, opts)
	if err != nil {
		t.Fatalf("dial %s: %v", u, err)
	}
	c.SetReadLimit(64 << 20)
	rctx, stop := context.WithCancel(context.Background())
	t.Cleanup(func() {
		stop()
		c.CloseNow()
	})
	return c, rctx
}

func (cl *client) read(ctx context.Context) {
	defer close(cl.in)
	for {
		typ, data, err := cl.c.Read(ctx)
		if err != nil {
			return
		}
		var m msg
		if typ == websocket.MessageBinary {
			if len(data) < 32 {
				m.Type = "bad-binary"
			} else {
				le := binary.LittleEndian
				h := &frameHdr{Kind: data[0], Gen: le.Uint32(data[4:])}
				if h.Kind == 2 {
					h.Skipped, h.Count = le.Uint32(data[8:]), le.Uint32(data[12:])
					h.T = math.Float64frombits(le.Uint64(data[16:]))
					h.Steps = math.Float64frombits(le.Uint64(data[24:]))
					m.Type = "frame"
				} else {
					h.Count = le.Uint32(data[8:]) // cells
					m.Type = "geometry"
				}
				m.bin = h
			}
		} else if err := json.Unmarshal(data, &m); err != nil {
			m.Type = "bad-json"
			m.Message = string(data)
		}
		select {
		case cl.in <- m:
		case <-ctx.Done():
			return
		}
	}
}

// send sends a command and returns its id.
func (cl *client) send(cmd string, value any) int64 {
	cl.t.Helper()
	cl.nextID++
	m := map[string]any{"id": cl.nextID, "cmd": cmd}
	if value != nil {
		m["value"] = value
	}
	b, _ := json.Marshal(m)
	cl.sendRaw(websocket.MessageText, b)
	return cl.nextID
}

func (cl *client) sendRaw(typ websocket.MessageType, b []byte) {
	cl.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	if err := cl.c.Write(ctx, typ, b); err != nil {
		cl.t.Fatalf("write %s: %v", b, err)
	}
}

// next returns the next message, failing the test after timeout.
func (cl *client) next(timeout time.Duration) msg {
	cl.t.Helper()
	select {
	case m, ok := <-cl.in:
		if !ok {
			cl.t.Fatal("the server closed the connection")
		}
		return m
	case <-time.After(timeout):
		cl.t.Fatalf("no message from the server within %v", timeout)
	}
	return msg{}
}

// until reads messages, passing each to f, until f returns true.
func (cl *client) until(timeout time.Duration, what string, f func(msg) bool) {
	cl.t.Helper()
	deadline := time.Now().Add(timeout)
	for {
		left := time.Until(deadline)
		if left <= 0 {
			cl.t.Fatalf("timed out after %v waiting for %s", timeout, what)
		}
		select {
		case m, ok := <-cl.in:
			if !ok {
				cl.t.Fatalf("connection closed while waiting for %s", what)
			}
			if f(m) {
				return
			}
		case <-time.After(left):
			cl.t.Fatalf("timed out after %v waiting for %s", timeout, what)
		}
	}
}

// reply waits for the ack or error of command id, passing every message
// before it to seen (which may be nil), and returns the reply.
func (cl *client) reply(id int64, seen func(msg)) msg {
	cl.t.Helper()
	var r msg
	cl.until(hang, "the reply to a command", func(m msg) bool {
		if (m.Type == "ack" || m.Type == "error") && m.ID == id {
			r = m
			return true
		}
		if seen != nil {
			seen(m)
		}
		return false
	})
	return r
}

// mustAck sends a command and fails unless it is acknowledged.
func (cl *client) mustAck(cmd string, value any, seen func(msg)) {
	cl.t.Helper()
	r := cl.reply(cl.send(cmd, value), seen)
	if r.Type != "ack" {
		cl.t.Fatalf("%s %v refused: %s", cmd, value, r.Message)
	}
}

// dialRaw connects to run id with a small socket receive buffer, and
// reads nothing: a client that has stopped reading, whose socket fills
// after a few frames rather than after megabytes.
func dialRaw(t testing.TB, base, id string) *websocket.Conn {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	u := "ws" + strings.TrimPrefix(base, "http") + "/run/" + id + "/ws"
	var d net.Dialer
	tr := &http.Transport{DialContext: func(ctx context.Context, network, addr string) (net.Conn, error) {
		c, err := d.DialContext(ctx, network, addr)
		if tc, ok := c.(*net.TCPConn); ok {
			err = errors.Join(err, tc.SetReadBuffer(64<<10))
		}
		return c, err
	}}
	c, _, err := websocket.Dial(ctx, u, &websocket.DialOptions{HTTPClient: &http.Client{Transport: tr}})
	if err != nil {
		t.Fatalf("dial %s: %v", u, err)
	}
	c.SetReadLimit(64 << 20)
	t.Cleanup(func() { c.CloseNow() })
	return c
}

// contextFor is a context that ends with the test.
func contextFor(t testing.TB) (context.Context, context.CancelFunc) {
	ctx, cancel := context.WithCancel(context.Background())
	t.Cleanup(cancel)
	return ctx, cancel
}

// replayHeadless writes a timeline file, replays it with 'gyrebench run'
// (in this process, through the command-line entry point) and returns the
// final.nc it wrote.
func replayHeadless(t testing.TB, timelineTOML []byte) []byte {
	t.Helper()
	dir := t.TempDir()
	file := filepath.Join(dir, "saved.toml")
	if err := os.WriteFile(file, timelineTOML, 0o644); err != nil {
		t.Fatal(err)
	}
	var stdout, stderr bytes.Buffer
	out := filepath.Join(dir, "replay")
	if code := cli.Main(context.Background(), []string{"run", file, "--out", out}, &stdout, &stderr); code != cli.ExitOK {
		t.Fatalf("gyrebench run saved.toml: exit %d: %s", code, stderr.String())
	}
	nc, err := os.ReadFile(filepath.Join(out, "final.nc"))
	if err != nil {
		t.Fatal(err)
	}
	return nc
}
