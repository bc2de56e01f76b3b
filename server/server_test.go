package server

import (
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"gyrebench/sim/display"
	"gyrebench/sim/mesh"
)

// area is the signed (shoelace) area of polygon k of a decoded section.
func area(start []uint32, xy []float32, k int) float64 {
	a := 0.0
	lo, hi := int(start[k]), int(start[k+1])
	for i := lo; i < hi; i++ {
		j := i + 1
		if j == hi {
			j = lo
		}
		a += float64(xy[2*i])*float64(xy[2*j+1]) - float64(xy[2*j])*float64(xy[2*i+1])
	}
	return a / 2
}

func decodeGeometry(b []byte) (cs, ds []uint32, cxy, dxy []float32, px, py float64) {
	le := binary.LittleEndian
	nc, nv := int(le.Uint32(b[8:])), int(le.Uint32(b[12:]))
	ncp, ndp := int(le.Uint32(b[16:])), int(le.Uint32(b[20:]))
	px, py = math.Float64frombits(le.Uint64(b[32:])), math.Float64frombits(le.Uint64(b[40:]))
	o := 48
	u32 := func(n int) []uint32 {
		s := make([]uint32, n)
		for i := range s {
			s[i] = le.Uint32(b[o:])
			o += 4
		}
		return s
	}
	f32 := func(n int) []float32 {
		s := make([]float32, n)
		for i := range s {
			s[i] = math.Float32frombits(le.Uint32(b[o:]))
			o += 4
		}
		return s
	}
	cs, ds = u32(nc+1), u32(nv+1)
	cxy, dxy = f32(2*ncp), f32(2*ndp)
	if o != len(b) {
		panic("geometry size does not match its header")
	}
	return
}

// The drawn polygons must tile the periodic domain: each cell polygon,
// unwrapped around its centre, is anticlockwise with the mesh's cell area,
// and each dual polygon has the vertex's dual area. A polygon unwrapped
// onto the wrong periodic image would be many times too large.
func TestGeometryTilesTheDomain(t *testing.T) {
	for _, kind := range []mesh.Kind{mesh.Quad, mesh.Hex, mesh.Tri} {
		m, err := mesh.New(mesh.Spec{Kind: kind, N: 8, Length: 1e6})
		if err != nil {
			t.Fatal(err)
		}
		cs, ds, cxy, dxy, px, py := decodeGeometry(encodeGeometry(display.Of(m), 3))
		if px != m.Surface.Lx || py != m.Surface.Ly {
			t.Errorf("%s: periods %g × %g, want the domain %g × %g", kind, px, py, m.Surface.Lx, m.Surface.Ly)
		}
		check := func(what string, start []uint32, xy []float32, want []float64) {
			total := 0.0
			for k := range want {
				a := area(start, xy, k)
				total += a
				if math.Abs(a-want[k]) > 1e-5*want[k] {
					t.Errorf("%s: %s polygon %d has area %g, the mesh says %g", kind, what, k, a, want[k])
					return
				}
			}
			if dom := m.Surface.Lx * m.Surface.Ly; math.Abs(total-dom) > 1e-5*dom {
				t.Errorf("%s: %s polygons cover %g, the domain is %g", kind, what, total, dom)
			}
		}
		check("cell", cs, cxy, m.CellArea)
		check("dual", ds, dxy, m.VertexArea)
	}
}

// A frame holds the values as float32 in order, with their finite range.
func TestPutFrame(t *testing.T) {
	vals := []float64{3, -1.5, math.NaN(), 1e30, 2}
	b := make([]byte, frameHeader+4*len(vals))
	putFrame(b, display.Fields()[1], 7, 3600, 30, vals)
	le := binary.LittleEndian
	if b[0] != binFrame || b[1] != display.Fields()[1].ID || b[2] != byte(display.OnVertices) || le.Uint32(b[4:]) != 7 || le.Uint32(b[12:]) != uint32(len(vals)) {
		t.Fatalf("header % x", b[:16])
	}
	if tt, st := math.Float64frombits(le.Uint64(b[16:])), math.Float64frombits(le.Uint64(b[24:])); tt != 3600 || st != 30 {
		t.Errorf("time %g, steps %g", tt, st)
	}
	if lo, hi := math.Float32frombits(le.Uint32(b[32:])), math.Float32frombits(le.Uint32(b[36:])); lo != -1.5 || hi != 1e30 {
		t.Errorf("range %g..%g, want -1.5..1e30 (NaN left out)", lo, hi)
	}
	for i, v := range vals {
		got := math.Float32frombits(le.Uint32(b[frameHeader+4*i:]))
		if float32(v) != got && !(math.IsNaN(v) && got != got) {
			t.Errorf("value %d = %g, want %g", i, got, v)
		}
	}
}

// A subscriber that does not take keeps only the newest frame and counts
// the ones it missed; control messages keep their order; a full queue is
// reported, not grown.
func TestSubscriberLatestWins(t *testing.T) {
	pool := make(chan *frame, 8)
	s := newClient(1).subs[0]
	var frames []*frame
	for i := 0; i < 5; i++ {
		f := &frame{buf: []byte{byte(i)}, pool: pool}
		f.refs.Store(1)
		s.offer(f)
		f.release() // the run's own reference
		frames = append(frames, f)
	}
	s.send(outMsg{data: []byte("a")})
	s.send(outMsg{data: []byte("b")})
	msgs, f, skipped, overflow := s.take(nil)
	if f != frames[4] || skipped != 4 || overflow {
		t.Fatalf("take: frame %v, skipped %d, overflow %v; want the newest, 4, false", f.buf, skipped, overflow)
	}
	if len(msgs) != 2 || string(msgs[0].data) != "a" || string(msgs[1].data) != "b" {
		t.Errorf("control messages %v, want a then b", msgs)
	}
	if len(pool) != 4 {
		t.Errorf("%d replaced frames returned to the pool, want 4", len(pool))
	}
	f.release()
	if len(pool) != 5 {
		t.Errorf("the taken frame did not return to the pool on release")
	}
	if _, f, skipped, _ := s.take(nil); f != nil || skipped != 0 {
		t.Errorf("second take: frame %v, skipped %d; want nothing", f, skipped)
	}
	for i := 0; i <= maxQueued; i++ {
		s.send(outMsg{data: []byte("x")})
	}
	if msgs, _, _, overflow := s.take(nil); !overflow || len(msgs) != maxQueued {
		t.Errorf("after %d messages: %d queued, overflow %v; want %d and true", maxQueued+1, len(msgs), overflow, maxQueued)
	}
}

// pinMeshes are the meshes whose geometry message is pinned: two small
// ones byte for byte (testdata/geometry-*.bin, written by the encoder
// before the geometry moved to package sim/display) and larger ones of
// every family by their SHA-256. The icosahedral pins were written again
// when that mesh was renumbered for locality, by the same encoder: the
// old pins still held for the mesh in its old numbering.
var pinMeshes = []struct {
	name string
	spec mesh.Spec
	file string // the whole message, in testdata; "" for a hash only
	hash string // SHA-256 of the message
}{
	{"hex-4", mesh.Spec{Kind: mesh.Hex, N: 4, Length: 1e6}, "geometry-hex-4.bin", ""},
	{"icosahedral-1", mesh.Spec{Kind: mesh.Icosahedral, N: 1, Radius: 6.371e6}, "geometry-icosahedral-1.bin", ""},
	{"quad-8", mesh.Spec{Kind: mesh.Quad, N: 8, Length: 1e6}, "", "48b2d4aa381c42f989aa42fb6897686a017dc3c2018fc08ffd7e08bbdc39ad8f"},
	{"tri-8", mesh.Spec{Kind: mesh.Tri, N: 8, Length: 1e6}, "", "d1692ba5e3c45f136c2a7973aa37e103abf1bc43e547feacb79c91d2041c7479"},
	{"hex-12-distorted", mesh.Spec{Kind: mesh.Hex, N: 12, Length: 2e6, Distort: 0.2}, "", "30487467fdb7928ed1d5995f5193d21f9a02a2a6531b2b24f9510aed06bc9896"},
	{"icosahedral-3", mesh.Spec{Kind: mesh.Icosahedral, N: 3, Radius: 6.371e6}, "", "f9cea3f1df700c3e2d1719827b5a9aaa83d90e917b7e2d756aa8a0306d30dc89"},
	{"icosahedral-3-lloyd", mesh.Spec{Kind: mesh.Icosahedral, N: 3, Radius: 6.371e6, Optimize: mesh.OptimizeLloyd}, "", "66190982fd8d36d191cc5b43528c844261d52aa8a0a83c727301fa32edd6c3d0"},
	{"cubed-6", mesh.Spec{Kind: mesh.Cubed, N: 6, Radius: 6.371e6}, "", "0f82c7dc159016eadf29160a6544a75dcfdd229d5b1785b0f518027ccff2d82f"},
}

// The binary geometry message is what the browser decodes
// (static/protocol.js): it must not change by a bit when the code that
// builds it does.
func TestGeometryMessagePinned(t *testing.T) {
	for _, c := range pinMeshes {
		t.Run(c.name, func(t *testing.T) {
			m, err := mesh.New(c.spec)
			if err != nil {
				t.Fatal(err)
			}
			got := encodeGeometry(display.Of(m), 3)
			if c.file != "" {
				path := filepath.Join("testdata", c.file)
				want, err := os.ReadFile(path)
				if err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(got, want) {
					n := 0
					for n < min(len(got), len(want)) && got[n] == want[n] {
						n++
					}
					t.Fatalf("geometry message of %d bytes differs from the pinned %d bytes, first at byte %d", len(got), len(want), n)
				}
				return
			}
			sum := sha256.Sum256(got)
			if h := hex.EncodeToString(sum[:]); h != c.hash {
				t.Errorf("geometry message SHA-256 = %s, pinned %s", h, c.hash)
			}
		})
	}
}

// FuzzParseClient: any websocket text message is either a known command
// or refused with an error that names a field and says what is allowed;
// the refusal is valid JSON; an accepted command survives re-encoding.
//
//	go test -run '^$' -fuzz FuzzParseClient -fuzztime 60s ./server/
func FuzzParseClient(f *testing.F) {
	for _, s := range []string{
		`{"cmd":"play"}`, `{"id":3,"cmd":"set-dt","value":60}`, `{"cmd":"set-grid","value":{"kind":"hex","n":32}}`,
		`{"cmd":"load","value":"dipole"}`, `play please`, `{"cmd":"play","speed":2}`, `{"cmd":"fly"}`,
		`{"cmd":"play"}{"cmd":"pause"}`, `[]`, `null`, `{"cmd":7}`, `{"id":1e400,"cmd":"play"}`, "\xff\xfe",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		m, ce := parseMsg(data, false)
		if ce != nil {
			if ce.Field == "" || ce.Message == "" {
				t.Fatalf("%q: refusal without a field or a message: %+v", data, ce)
			}
			if !strings.Contains(ce.Message, "want") && !strings.Contains(ce.Message, "allowed") && !strings.Contains(ce.Message, "send") {
				t.Fatalf("%q: refusal %q does not say what is allowed", data, ce.Message)
			}
			reply := errorReply(m, ce)
			var e struct {
				Type  string `json:"type"`
				Field string `json:"field"`
			}
			if !json.Valid(reply.data) || json.Unmarshal(reply.data, &e) != nil || e.Type != "error" || e.Field != ce.Field {
				t.Fatalf("%q: error reply %s is not an error message naming %q", data, reply.data, ce.Field)
			}
			return
		}
		if !slices.Contains(commands, m.Cmd) {
			t.Fatalf("%q: accepted unknown command %q", data, m.Cmd)
		}
		again, err := json.Marshal(m)
		if err != nil {
			t.Fatalf("%q: accepted, but does not re-encode: %v", data, err)
		}
		m2, ce := parseMsg(again, false)
		var want bytes.Buffer
		_ = json.Compact(&want, m.Value) // Marshal compacts a raw value
		if ce != nil || m2.ID != m.ID || m2.Cmd != m.Cmd || string(m2.Value) != want.String() {
			t.Fatalf("%q: re-encoded as %s, which parses as %+v (%v)", data, again, m2, ce)
		}
	})
}
