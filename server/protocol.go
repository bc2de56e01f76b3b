package server

import (
	"encoding/binary"
	"encoding/json"
	"math"
	"strconv"

	"gyrebench/sim/display"
)

// Binary message kinds (first byte).
const (
	binGeometry = 1
	binFrame    = 2
)

// frameHeader is the size of the field frame header in bytes.
const frameHeader = 40

// num is a float64 that encodes non-finite values as null, which JSON
// cannot carry otherwise.
type num float64

func (x num) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

func mustJSON(v any) []byte {
	b, err := json.Marshal(v)
	if err != nil {
		// Every message type here marshals; a failure is a programming error.
		panic("server: encoding a message: " + err.Error())
	}
	return b
}

// drawXY converts a point in drawing coordinates (package sim/display) to
// JSON numbers.
func drawXY(x, y float64) (num, num) { return num(x), num(y) }

// encodeGeometry writes the drawing geometry g (display.Of of the run's
// mesh): every cell polygon and every dual (vertex) polygon, unwrapped
// around its centre. The layout is in the package documentation; the
// sphere is drawn in longitude and latitude (degrees), periodic in
// longitude only.
func encodeGeometry(g *display.Geometry, gen uint32) []byte {
	nc, nv := g.Cells.Len(), g.Duals.Len()
	ncp, ndp := len(g.Cells.XY)/2, len(g.Duals.XY)/2
	size := 48 + 4*(nc+1) + 4*(nv+1) + 8*ncp + 8*ndp
	b := make([]byte, size)
	le := binary.LittleEndian
	b[0] = binGeometry
	if g.Sphere {
		b[1] = 1
	}
	le.PutUint32(b[4:], gen)
	le.PutUint32(b[8:], uint32(nc))
	le.PutUint32(b[12:], uint32(nv))
	le.PutUint32(b[16:], uint32(ncp))
	le.PutUint32(b[20:], uint32(ndp))
	le.PutUint64(b[32:], math.Float64bits(g.PeriodX))
	le.PutUint64(b[40:], math.Float64bits(g.PeriodY))
	o := 48
	for _, p := range []*display.Polygons{&g.Cells, &g.Duals} {
		for _, s := range p.Start {
			le.PutUint32(b[o:], uint32(s))
			o += 4
		}
	}
	for _, p := range []*display.Polygons{&g.Cells, &g.Duals} {
		for _, v := range p.XY {
			le.PutUint32(b[o:], math.Float32bits(float32(v)))
			o += 4
		}
	}
	return b
}

// putFrame writes a field frame into b (len frameHeader + 4·len(vals)),
// with the minimum and maximum of the finite values in the header.
func putFrame(b []byte, f display.Field, gen uint32, t float64, steps int64, vals []float64) {
	le := binary.LittleEndian
	b[0], b[1], b[2], b[3] = binFrame, f.ID, byte(f.Loc), 0
	le.PutUint32(b[4:], gen)
	le.PutUint32(b[8:], 0) // skipped: patched per subscriber
	le.PutUint32(b[12:], uint32(len(vals)))
	le.PutUint64(b[16:], math.Float64bits(t))
	le.PutUint64(b[24:], math.Float64bits(float64(steps)))
	lo, hi := math.Inf(1), math.Inf(-1)
	o := frameHeader
	for _, v := range vals {
		le.PutUint32(b[o:], math.Float32bits(float32(v)))
		o += 4
		if v-v != 0 { // NaN or ±Inf
			continue
		}
		lo, hi = min(lo, v), max(hi, v)
	}
	if lo > hi { // no finite value
		lo, hi = 0, 0
	}
	le.PutUint32(b[32:], math.Float32bits(float32(lo)))
	le.PutUint32(b[36:], math.Float32bits(float32(hi)))
}
