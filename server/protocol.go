package server

import (
	"encoding/binary"
	"encoding/json"
	"math"
	"strconv"

	"gyrebench/sim/mesh"
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

// wrap returns the periodic image of d nearest zero; period 0 means none.
func wrap(d, l float64) float64 {
	if l == 0 {
		return d
	}
	return d - l*math.Round(d/l)
}

// drawXY returns point i of the coordinate arrays in drawing coordinates:
// metres on the plane, longitude and latitude in degrees on the sphere.
func drawXY(m *mesh.Mesh, x, y, z []float64, i int) (num, num) {
	if !m.Surface.Sphere {
		return num(x[i]), num(y[i])
	}
	lon := math.Atan2(y[i], x[i]) * 180 / math.Pi
	lat := math.Asin(math.Max(-1, math.Min(1, z[i]/m.Surface.Radius))) * 180 / math.Pi
	return num(lon), num(lat)
}

// drawPeriods returns the periods of the drawing plane in x and y (0: none).
func drawPeriods(m *mesh.Mesh) (float64, float64) {
	if m.Surface.Sphere {
		return 360, 0
	}
	return m.Surface.Lx, m.Surface.Ly
}

// encodeGeometry writes the drawing geometry of a mesh: every cell polygon
// and every dual (vertex) polygon, unwrapped around its centre. The layout
// is in the package documentation; the sphere is drawn in longitude and
// latitude (degrees), periodic in longitude only.
func encodeGeometry(m *mesh.Mesh, gen uint32) []byte {
	nc, nv := m.NumCells, m.NumVertices
	px, py := drawPeriods(m)
	ncp, ndp := len(m.CellVertices), len(m.VertexCells)
	size := 48 + 4*(nc+1) + 4*(nv+1) + 8*ncp + 8*ndp
	b := make([]byte, size)
	le := binary.LittleEndian
	b[0] = binGeometry
	if m.Surface.Sphere {
		b[1] = 1
	}
	le.PutUint32(b[4:], gen)
	le.PutUint32(b[8:], uint32(nc))
	le.PutUint32(b[12:], uint32(nv))
	le.PutUint32(b[16:], uint32(ncp))
	le.PutUint32(b[20:], uint32(ndp))
	le.PutUint64(b[32:], math.Float64bits(px))
	le.PutUint64(b[40:], math.Float64bits(py))
	o := 48
	for _, s := range m.CellEdgeStart {
		le.PutUint32(b[o:], uint32(s))
		o += 4
	}
	for _, s := range m.VertexEdgeStart {
		le.PutUint32(b[o:], uint32(s))
		o += 4
	}
	polygon := func(cx, cy num, xs, ys, zs []float64, idx []int32) {
		for _, k := range idx {
			x, y := drawXY(m, xs, ys, zs, int(k))
			le.PutUint32(b[o:], math.Float32bits(float32(float64(cx)+wrap(float64(x-cx), px))))
			le.PutUint32(b[o+4:], math.Float32bits(float32(float64(cy)+wrap(float64(y-cy), py))))
			o += 8
		}
	}
	for i := 0; i < nc; i++ {
		cx, cy := drawXY(m, m.CellX, m.CellY, m.CellZ, i)
		lo, hi := m.EdgesOfCell(i)
		polygon(cx, cy, m.VertexX, m.VertexY, m.VertexZ, m.CellVertices[lo:hi])
	}
	for v := 0; v < nv; v++ {
		cx, cy := drawXY(m, m.VertexX, m.VertexY, m.VertexZ, v)
		lo, hi := m.EdgesOfVertex(v)
		polygon(cx, cy, m.CellX, m.CellY, m.CellZ, m.VertexCells[lo:hi])
	}
	return b
}

// putFrame writes a field frame into b (len frameHeader + 4·len(vals)),
// with the minimum and maximum of the finite values in the header.
func putFrame(b []byte, f *fieldDef, gen uint32, t float64, steps int64, vals []float64) {
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
