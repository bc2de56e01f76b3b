package server

import (
	"encoding/binary"
	"math"
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
