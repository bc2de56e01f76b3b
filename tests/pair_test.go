package tests

import (
	"bytes"
	"context"
	"encoding/binary"
	"encoding/json"
	"html"
	"io"
	"math"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/coder/websocket"

	"gyrebench/server"
	"gyrebench/sim"
	"gyrebench/sim/batch"
	"gyrebench/sim/ncout"
	"gyrebench/sim/scenario"
	"gyrebench/sim/timeline"
)

// pairStatus is the pair's own status message.
type pairStatus struct {
	Type     string     `json:"type"`
	State    string     `json:"state"`
	SameGrid bool       `json:"same_grid"`
	T        [2]float64 `json:"t"`
	Steps    [2]int64   `json:"steps"`
	Lead     string     `json:"lead"`
}

// pmsg is one message of a pair connection: the side it is tagged with
// ("a", "b", "" for the pair, "diff" for an A − B frame) and its content.
type pmsg struct {
	side string
	m    msg
	pair pairStatus
	vals []float32 // field frames: the values
	min  float32
	max  float32
}

type pairConn struct {
	t      testing.TB
	c      *websocket.Conn
	in     chan pmsg
	nextID int64
}

// pairSides names the sides of a pair in the order of pairConfigs.
var pairSides = [2]string{"a", "b"}

// pairConfigs returns the configurations the sides of a pair started from
// the scenario text should run: both the scenario's, side b changed by
// setB.
func pairConfigs(t testing.TB, text string, setB func(*sim.Config)) [2]sim.Config {
	t.Helper()
	sc, err := scenario.Parse([]byte(text), "scenario")
	if err != nil {
		t.Fatal(err)
	}
	cfgs := [2]sim.Config{sc.Config, sc.Config}
	setB(&cfgs[1])
	return cfgs
}

// firstDiff waits for the first A − B frame and returns the last pair
// status before it, and the frame.
func (pc *pairConn) firstDiff() (pairStatus, pmsg) {
	pc.t.Helper()
	var st pairStatus
	var first pmsg
	pc.until("the first A − B frame", func(p pmsg) bool {
		if p.m.Type == "pair" {
			st = p.pair
		}
		if p.side == "diff" && p.m.Type == "frame" {
			first = p
		}
		return first.vals != nil
	})
	return st, first
}

func dialPair(t testing.TB, base, id string) *pairConn {
	t.Helper()
	c, rctx := dialWS(t, base, "/pair/"+id+"/ws")
	pc := &pairConn{t: t, c: c, in: make(chan pmsg, 1<<14)}
	go pc.read(rctx)
	return pc
}

func (pc *pairConn) read(ctx context.Context) {
	defer close(pc.in)
	tags := map[byte]string{1: "a", 2: "b", 3: "diff"}
	for {
		typ, data, err := pc.c.Read(ctx)
		if err != nil {
			return
		}
		var p pmsg
		if typ == websocket.MessageBinary {
			le := binary.LittleEndian
			p.side = tags[data[3]]
			h := &frameHdr{Kind: data[0], Gen: le.Uint32(data[4:])}
			p.m.bin = h
			p.m.Type = "geometry"
			if h.Kind == 2 {
				p.m.Type = "frame"
				h.Count = le.Uint32(data[12:])
				h.T = math.Float64frombits(le.Uint64(data[16:]))
				h.Steps = math.Float64frombits(le.Uint64(data[24:]))
				p.min = math.Float32frombits(le.Uint32(data[32:]))
				p.max = math.Float32frombits(le.Uint32(data[36:]))
				p.vals = make([]float32, h.Count)
				for i := range p.vals {
					p.vals[i] = math.Float32frombits(le.Uint32(data[40+4*i:]))
				}
			}
		} else {
			var w struct {
				Side string          `json:"side"`
				Msg  json.RawMessage `json:"msg"`
			}
			if err := json.Unmarshal(data, &w); err != nil || len(w.Msg) == 0 {
				p.m.Type = "bad-json"
			} else {
				p.side = w.Side
				_ = json.Unmarshal(w.Msg, &p.m)
				if p.m.Type == "pair" {
					_ = json.Unmarshal(w.Msg, &p.pair)
				}
			}
		}
		select {
		case pc.in <- p:
		case <-ctx.Done():
			return
		}
	}
}

func (pc *pairConn) until(what string, f func(pmsg) bool) {
	pc.t.Helper()
	deadline := time.After(hang)
	for {
		select {
		case p, ok := <-pc.in:
			if !ok {
				pc.t.Fatalf("connection closed while waiting for %s", what)
			}
			if f(p) {
				return
			}
		case <-deadline:
			pc.t.Fatalf("timed out waiting for %s", what)
		}
	}
}

// do sends a command and returns its reply (ack or error), passing the
// messages before it to seen.
func (pc *pairConn) do(side, cmd string, value any, seen func(pmsg)) msg {
	pc.t.Helper()
	pc.nextID++
	id := pc.nextID
	m := map[string]any{"id": id, "cmd": cmd}
	if side != "" {
		m["side"] = side
	}
	if value != nil {
		m["value"] = value
	}
	b, _ := json.Marshal(m)
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	if err := pc.c.Write(ctx, websocket.MessageText, b); err != nil {
		pc.t.Fatal(err)
	}
	var r msg
	pc.until("the reply to "+cmd, func(p pmsg) bool {
		if p.side == "" && (p.m.Type == "ack" || p.m.Type == "error") && p.m.ID == id {
			r = p.m
			return true
		}
		if seen != nil {
			seen(p)
		}
		return false
	})
	return r
}

func (pc *pairConn) must(side, cmd string, value any, seen func(pmsg)) {
	pc.t.Helper()
	if r := pc.do(side, cmd, value, seen); r.Type != "ack" {
		pc.t.Fatalf("%s %s %v refused: %s", side, cmd, value, r.Message)
	}
}

// startPair posts the new-pair form and returns the pair's id.
func startPair(t testing.TB, base string, form url.Values) string {
	t.Helper()
	resp, err := http.PostForm(base+"/pairs", form)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusOK || !strings.HasPrefix(resp.Request.URL.Path, "/pair/") {
		t.Fatalf("POST /pairs %v: %s at %s", form, resp.Status, resp.Request.URL)
	}
	return strings.TrimPrefix(resp.Request.URL.Path, "/pair/")
}

// stateOf reads h and u from a final.nc.
func stateOf(t testing.TB, data []byte) []float64 {
	t.Helper()
	f, err := ncout.Read(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	var x []float64
	for _, name := range []string{"h", "u"} {
		v := f.Var(name)
		if v == nil {
			t.Fatalf("final.nc has no %s", name)
		}
		x = append(x, v.Data.([]float64)...)
	}
	return x
}

func soloState(t testing.TB, cfg sim.Config, steps int) ([]float64, []byte) {
	t.Helper()
	m, err := sim.NewModel(cfg, 2)
	if err != nil {
		t.Fatal(err)
	}
	defer m.Close()
	for i := 0; i < steps; i++ {
		if err := m.Step(); err != nil {
			t.Fatal(err)
		}
	}
	p := filepath.Join(t.TempDir(), "final.nc")
	if err := batch.WriteFinal(p, m); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	return stateOf(t, b), b
}

// TestPairSchemeOnly: a pair that differs only in scheme, on the same
// grid, has A − B = 0 everywhere at t = 0, and after N lockstep steps each
// side's state is bit for bit that of a solo run with the same choices
// (sim.Model stepped N times in the test); A − B is then not zero.
func TestPairSchemeOnly(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	id := startPair(t, base, url.Values{"base": {"run:1"}, "b.scheme": {"trisk-enstrophy"}})
	pc := dialPair(t, base, id)

	st, zero := pc.firstDiff()
	if !st.SameGrid {
		t.Fatal("the pair says its sides are on different grids")
	}
	if zero.m.bin.Steps != 0 || len(zero.vals) == 0 {
		t.Fatalf("first A − B frame: step %g, %d values", zero.m.bin.Steps, len(zero.vals))
	}
	for i, v := range zero.vals {
		if math.Float32bits(v) != 0 {
			t.Fatalf("A − B at t = 0 is %g in cell %d, want exactly 0", v, i)
		}
	}
	if zero.min != 0 || zero.max != 0 {
		t.Errorf("A − B frame at t = 0: range [%g, %g], want [0, 0]", zero.min, zero.max)
	}

	const n = 30
	for i := 0; i < n; i++ {
		pc.must("", "step", nil, nil)
	}
	var last pmsg
	pc.must("", "set-field", "depth", func(p pmsg) {
		if p.side == "diff" && p.m.Type == "frame" {
			last = p
		}
	})
	// The frame may come before the ack or after it.
	if last.vals == nil || last.m.bin.Steps != n {
		pc.until("an A − B frame after the steps", func(p pmsg) bool {
			if p.side == "diff" && p.m.Type == "frame" {
				last = p
			}
			return last.vals != nil && last.m.bin.Steps == n
		})
	}
	if last.max-last.min <= 0 {
		t.Errorf("after %d steps A − B of the depth is [%g, %g]: the schemes should differ by now", n, last.min, last.max)
	}
	t.Logf("after %d steps: A − B depth in [%.3g, %.3g] m", n, last.min, last.max)

	for i, cfg := range pairConfigs(t, eddies, func(b *sim.Config) { b.Scheme.Name = "trisk-enstrophy" }) {
		side := pairSides[i]
		want, wantFile := soloState(t, cfg, n)
		gotFile := get(t, base+"/pair/"+id+"/"+side+"/final.nc")
		got := stateOf(t, gotFile)
		if len(got) != len(want) {
			t.Fatalf("side %s: %d state values, the solo run %d", side, len(got), len(want))
		}
		for k := range got {
			if math.Float64bits(got[k]) != math.Float64bits(want[k]) {
				t.Fatalf("side %s after %d steps: state[%d] = %.17g, the solo %s run has %.17g", side, n, k, got[k], cfg.Scheme.Name, want[k])
			}
		}
		if !bytes.Equal(gotFile, wantFile) {
			t.Errorf("side %s: final.nc differs from the solo run's (the states agree)", side)
		}
	}
}

// TestPairLockstep: with Δt_A = 60 s and Δt_B = 120 s, each pair step
// advances the side behind in time, both when they agree; a grid change on
// one side is one command, after which there is no A − B.
func TestPairLockstep(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	id := startPair(t, base, url.Values{"base": {"run:1"}, "a.dt": {"60"}})
	pc := dialPair(t, base, id)
	want := []struct {
		steps [2]int64
		t     [2]float64
	}{
		{[2]int64{1, 1}, [2]float64{60, 120}},
		{[2]int64{2, 1}, [2]float64{120, 120}},
		{[2]int64{3, 2}, [2]float64{180, 240}},
		{[2]int64{4, 2}, [2]float64{240, 240}},
		{[2]int64{5, 3}, [2]float64{300, 360}},
	}
	for k, w := range want {
		var st pairStatus
		pc.must("", "step", nil, func(p pmsg) {
			if p.m.Type == "pair" {
				st = p.pair
			}
		})
		if st.Steps != w.steps || st.T != w.t {
			t.Errorf("after pair step %d: steps %v, t %v; want %v, %v", k+1, st.Steps, st.T, w.steps, w.t)
		}
	}

	// A side's change is one command naming the side; without one it is
	// refused, and a command for both sides may not name one.
	if r := pc.do("", "set-scheme", "apvm", nil); r.Type != "error" || r.fieldName() != "side" {
		t.Errorf("set-scheme without a side: %s %q", r.Type, r.Message)
	}
	if r := pc.do("b", "play", nil, nil); r.Type != "error" || r.fieldName() != "side" {
		t.Errorf("play for side b: %s %q", r.Type, r.Message)
	}
	if r := pc.do("", "scrub", 0, nil); r.Type != "error" || r.fieldName() != "cmd" {
		t.Errorf("scrub in a pair: %s %q", r.Type, r.Message)
	}
	var st pairStatus
	var confB msg
	pc.must("b", "set-grid", map[string]any{"kind": "quad", "n": 32}, func(p pmsg) {
		if p.m.Type == "pair" {
			st = p.pair
		}
		if p.side == "b" && p.m.Type == "config" {
			confB = p.m
		}
	})
	if confB.Grid.Kind != "quad" || st.SameGrid {
		t.Errorf("after B's grid change: B on %q, same_grid %v; want quad and false", confB.Grid.Kind, st.SameGrid)
	}
	// Both run on, in lockstep, with no A − B frames.
	pc.must("", "play", nil, nil)
	pc.until("both sides past t = 1 h", func(p pmsg) bool {
		if p.side == "diff" {
			t.Fatal("an A − B frame while the sides are on different grids")
		}
		return p.m.Type == "pair" && p.pair.T[0] > 3600 && p.pair.T[1] > 3600
	})
	var fin pairStatus
	pc.must("", "pause", nil, func(p pmsg) {
		if p.m.Type == "pair" {
			fin = p.pair
		}
	})
	if d := math.Abs(fin.T[0] - fin.T[1]); fin.State != "paused" || d > 120 {
		t.Errorf("paused pair: state %q, times %v apart by %g s; want at most one step (120 s)", fin.State, fin.T, d)
	}

	// Each side records its own timeline; replayed solo and headless, it
	// ends on the side's final.nc.
	for _, side := range []string{"a", "b"} {
		solo := replayHeadless(t, get(t, base+"/pair/"+id+"/"+side+"/timeline.toml"))
		if live := get(t, base+"/pair/"+id+"/"+side+"/final.nc"); !bytes.Equal(solo, live) {
			t.Errorf("side %s: its timeline replayed headless does not end on its final.nc", side)
		}
	}
}

// TestPairFormRefusals: a bad choice on the new-pair form is refused with
// a message naming the side and the field, and starts nothing.
func TestPairFormRefusals(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	cases := []struct {
		form url.Values
		want []string
	}{
		{url.Values{"base": {"run:1"}, "b.dt": {"-5"}}, []string{"B: time.dt", "-5"}},
		{url.Values{"base": {"run:1"}, "b.dt": {"1e6"}}, []string{"side B", "time.dt", "allowed"}},
		{url.Values{"base": {"run:1"}, "b.grid": {"pentagon"}}, []string{"B: grid.kind", "pentagon", "allowed"}},
		{url.Values{"base": {"run:1"}, "a.scheme": {"al81"}}, []string{"A: scheme.name", "al81", "quad"}},
		{url.Values{"base": {"run:1"}, "a.n": {"33"}}, []string{"A: ", "33"}},
		{url.Values{"base": {"run:1"}, "a.n": {"5000"}}, []string{"A: ", "5000"}},
		{url.Values{"base": {"nowhere"}}, []string{"base", "nowhere"}},
		{url.Values{"base": {"run:1"}, "b.viscosity": {"-1"}}, []string{`B: scheme.viscosity = "-1"`, "≥ 0"}},
		{url.Values{"base": {"run:1"}, "a.hyperviscosity": {"lots"}}, []string{`A: scheme.hyperviscosity = "lots"`, "m⁴ s⁻¹"}},
		{url.Values{"base": {"run:1"}, "b.divergence_damping": {"Inf"}}, []string{`B: scheme.divergence_damping = "Inf"`, "finite"}},
	}
	for _, tc := range cases {
		resp, err := http.PostForm(base+"/pairs", tc.form)
		if err != nil {
			t.Fatal(err)
		}
		body := new(bytes.Buffer)
		_, _ = body.ReadFrom(resp.Body)
		resp.Body.Close()
		if resp.StatusCode != http.StatusBadRequest {
			t.Errorf("%v: %s, want 400", tc.form, resp.Status)
		}
		text := strings.ReplaceAll(body.String(), "&#34;", `"`)
		for _, w := range tc.want {
			if !strings.Contains(text, w) {
				t.Errorf("%v: the page does not say %q", tc.form, w)
			}
		}
	}
	if got := strings.TrimSpace(string(get(t, base+"/api/pairs"))); got != "[]" {
		t.Errorf("refused forms started pairs: %s", got)
	}
}

// TestPairDissipation: the new-pair form sets each side's explicit
// dissipation; a side left blank keeps the base's, and each side's
// recorded timeline starts from its own coefficients.
func TestPairDissipation(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	id := startPair(t, base, url.Values{"base": {"run:1"}, "b.hyperviscosity": {"2e14"}, "b.viscosity": {" 350 "}})
	for _, c := range []struct {
		side             string
		viscosity, hyper float64
	}{{"a", 0, 0}, {"b", 350, 2e14}} {
		tl, err := timeline.Parse(get(t, base+"/pair/"+id+"/"+c.side+"/timeline.toml"), c.side+"/timeline.toml")
		if err != nil {
			t.Fatal(err)
		}
		if s := tl.Config.Scheme; s.Viscosity != c.viscosity || s.Hyperviscosity != c.hyper || s.DivergenceDamping != 0 {
			t.Errorf("side %s starts with ν₂ = %g, ν₄ = %g, divergence damping %g; want %g, %g, 0",
				c.side, s.Viscosity, s.Hyperviscosity, s.DivergenceDamping, c.viscosity, c.hyper)
		}
	}
}

// TestPairCubedAndHodge: the pair form starts a pair of consistent
// against diagonal Hodge star on one cubed sphere, which is one grid (so
// A − B is sent), zero at the start and not zero after steps (the two
// stars differ on the cubed sphere's non-orthogonal dual); and a pair of
// icosahedral level 3 against cubed n = 12, at similar cell counts (642
// and 864), which says its grids differ. An unknown Hodge star is refused
// naming the side and the field.
func TestPairCubedAndHodge(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "sphere3", sphere3)})

	id := startPair(t, base, url.Values{"base": {"run:1"}, "a.grid": {"cubed"}, "a.n": {"12"}, "b.grid": {"cubed"}, "b.n": {"12"}, "b.hodge": {"diagonal"}})
	pc := dialPair(t, base, id)
	st, first := pc.firstDiff()
	if !st.SameGrid {
		t.Fatal("consistent against diagonal H on one cubed sphere: the pair says its grids differ")
	}
	if first.min != 0 || first.max != 0 {
		t.Errorf("A − B at t = 0: range [%g, %g], want [0, 0]", first.min, first.max)
	}
	// The frame of the fifth step may come before or after its ack (the
	// frame slot and the reply queue are written in either order), so
	// the frames that arrive while waiting for the acks are looked at too.
	var later pmsg
	see := func(p pmsg) {
		if p.side == "diff" && p.m.Type == "frame" && p.m.bin.Steps >= 5 {
			later = p
		}
	}
	for i := 0; i < 5; i++ {
		pc.must("", "step", nil, see)
	}
	if later.vals == nil {
		pc.until("an A − B frame after 5 steps", func(p pmsg) bool {
			see(p)
			return later.vals != nil
		})
	}
	if later.min == 0 && later.max == 0 {
		t.Error("A − B after 5 steps is exactly 0: the diagonal H changed nothing on the cubed sphere")
	}
	t.Logf("consistent − diagonal depth after 5 steps: [%g, %g] m", later.min, later.max)

	id2 := startPair(t, base, url.Values{"base": {"run:1"}, "b.grid": {"cubed"}, "b.n": {"12"}})
	pc2 := dialPair(t, base, id2)
	var st2 pairStatus
	pc2.until("the pair status", func(p pmsg) bool {
		if p.m.Type == "pair" {
			st2 = p.pair
			return true
		}
		return false
	})
	if st2.SameGrid {
		t.Error("icosahedral against cubed: the pair says its sides share a grid")
	}

	resp, err := http.PostForm(base+"/pairs", url.Values{"base": {"run:1"}, "b.hodge": {"exact"}})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	body := html.UnescapeString(string(b))
	if resp.StatusCode != http.StatusBadRequest || !strings.Contains(body, `B: scheme.hodge = "exact"`) {
		t.Errorf("b.hodge = exact: HTTP %d; want 400 naming B and scheme.hodge", resp.StatusCode)
	}
}
