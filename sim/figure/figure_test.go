package figure

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"strings"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/internal/testcheck"
	"gyrebench/sim/mesh"
)

// The maps' defining colours, as documented.
var (
	seqLow   = color.RGBA{0x16, 0x20, 0x3f, 0xff}
	seqHigh  = color.RGBA{0xf3, 0xec, 0xb8, 0xff}
	divLow   = color.RGBA{0x1d, 0x3a, 0x7a, 0xff}
	divZero  = color.RGBA{0xf4, 0xf1, 0xec, 0xff}
	divHigh  = color.RGBA{0x72, 0x1a, 0x0f, 0xff}
	white    = color.RGBA{0xff, 0xff, 0xff, 0xff}
	testSize = Options{Width: 640, Height: 420}
)

func mustMesh(t *testing.T, kind mesh.Kind, n int) *mesh.Mesh {
	t.Helper()
	return testcheck.Mesh(t, mesh.Spec{Kind: kind, N: n, Length: 1e6, Radius: 6.37122e6})
}

func rgba(img image.Image, x, y int) color.RGBA {
	r, g, b, a := img.At(x, y).RGBA()
	return color.RGBA{uint8(r >> 8), uint8(g >> 8), uint8(b >> 8), uint8(a >> 8)}
}

func decode(t *testing.T, b []byte) image.Image {
	t.Helper()
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("PNG does not decode: %v", err)
	}
	return img
}

// centres returns the display position of every element: metres on the
// plane, longitude and latitude in degrees on the sphere.
func centres(m *mesh.Mesh, loc Location) (xs, ys []float64) {
	x, y, z := m.CellX, m.CellY, m.CellZ
	if loc == Node {
		x, y, z = m.VertexX, m.VertexY, m.VertexZ
	}
	for i := range x {
		if m.Surface.Sphere {
			xs = append(xs, math.Atan2(y[i], x[i])*180/math.Pi)
			ys = append(ys, math.Atan2(z[i], math.Hypot(x[i], y[i]))*180/math.Pi)
		} else {
			xs, ys = append(xs, x[i]), append(ys, y[i])
		}
	}
	return xs, ys
}

func dist(a, b color.RGBA) float64 {
	dr, dg, db := float64(a.R)-float64(b.R), float64(a.G)-float64(b.G), float64(a.B)-float64(b.B)
	return math.Sqrt(dr*dr + dg*dg + db*db)
}

// A field rising with x (plus a little y, so values differ) on each grid
// and location. Checked in the decoded PNG: its size; the colour bar's
// ends are the documented end colours; the pixel at the centre of the
// largest and smallest element has the end colour; the pixel at the
// centre of every element has (within one level per channel) the colour
// of the bar row its value maps to (± 2 rows); and no pixel of the map is left blank, so the periodic
// copies and the polar bands cover the domain.
func TestRenderPNG(t *testing.T) {
	for _, tc := range []struct {
		kind   mesh.Kind
		n      int
		loc    Location
		signed bool
	}{
		{mesh.Hex, 8, Face, false},
		{mesh.Quad, 8, Face, true},
		{mesh.Tri, 8, Face, false},
		{mesh.Hex, 8, Node, true},
		{mesh.Icosahedral, 2, Face, false},
		{mesh.Icosahedral, 2, Node, true},
		{mesh.Cubed, 4, Face, false}, // a vertex at each pole
		{mesh.Cubed, 5, Node, true},  // a cell centre at each pole
	} {
		name := fmt.Sprintf("%s-%d-%s-signed=%v", tc.kind, tc.n, tc.loc, tc.signed)
		m := mustMesh(t, tc.kind, tc.n)
		xs, ys := centres(m, tc.loc)
		field := make([]float64, len(xs))
		for i := range field {
			// Plane: x in km, centred on the domain's middle; sphere:
			// longitude. Signed fields keep the centring, positive ones
			// are lifted by 1000.
			x, y := xs[i], ys[i]
			if !m.Surface.Sphere {
				x, y = (x-m.Surface.Lx/2)/1000, y/1000
			}
			field[i] = x + 1e-3*y
			if !tc.signed {
				field[i] += 1000
			}
		}
		opt := testSize
		opt.Signed, opt.Title, opt.Units = tc.signed, name, "m"
		var buf bytes.Buffer
		if err := Render(&buf, "png", m, field, tc.loc, opt); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		img := decode(t, buf.Bytes())
		if sz := img.Bounds().Size(); sz.X != opt.Width || sz.Y != opt.Height {
			t.Errorf("%s: image %v, want %d × %d", name, sz, opt.Width, opt.Height)
		}
		lay, err := NewLayout(m, opt)
		if err != nil {
			t.Fatal(err)
		}
		low, high := seqLow, seqHigh
		if tc.signed {
			low, high = divLow, divHigh
		}
		bx := int((lay.Bar.X0 + lay.Bar.X1) / 2)
		top, bottom := int(math.Floor(lay.Bar.Y0)), int(math.Ceil(lay.Bar.Y1))-1
		if c := rgba(img, bx, top); c != high {
			t.Errorf("%s: bar top %v, want %v", name, c, high)
		}
		if c := rgba(img, bx, bottom); c != low {
			t.Errorf("%s: bar bottom %v, want %v", name, c, low)
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		ilo, ihi := 0, 0
		for i, v := range field {
			if v < lo {
				lo, ilo = v, i
			}
			if v > hi {
				hi, ihi = v, i
			}
		}
		if tc.signed {
			a := math.Max(-lo, hi)
			lo, hi = -a, a
		}
		// The pixel of an element's centre, moved inside the map where
		// the centre lies on its edge (longitude 180° on the sphere).
		px := func(i int) (int, int) {
			x, y := lay.Pixel(xs[i], ys[i])
			x = math.Max(lay.Map.X0, math.Min(lay.Map.X1-1, math.Floor(x)))
			y = math.Max(lay.Map.Y0, math.Min(lay.Map.Y1-1, math.Floor(y)))
			return int(x), int(y)
		}
		// The extreme element of the range's own end.
		if !tc.signed || -field[ilo] > field[ihi] {
			x, y := px(ilo)
			if c := rgba(img, x, y); c != low {
				t.Errorf("%s: smallest element %d at (%d,%d) is %v, want %v", name, ilo, x, y, c, low)
			}
		}
		if !tc.signed || field[ihi] >= -field[ilo] {
			x, y := px(ihi)
			if c := rgba(img, x, y); c != high {
				t.Errorf("%s: largest element %d at (%d,%d) is %v, want %v", name, ihi, x, y, c, high)
			}
		}
		bad := 0
		for i, v := range field {
			x, y := px(i)
			c := rgba(img, x, y)
			best, bj := math.Inf(1), 0
			for j := top; j <= bottom; j++ {
				if d := dist(c, rgba(img, bx, j)); d < best {
					best, bj = d, j
				}
			}
			want := float64(bottom) - (v-lo)/(hi-lo)*float64(bottom-top)
			// The bar samples the same table more coarsely than the
			// cells do: a neighbouring table entry is one level off.
			if best > 2 || math.Abs(float64(bj)-want) > 2 {
				if bad++; bad <= 3 {
					t.Errorf("%s: element %d (value %g) at (%d,%d) is %v: nearest bar row %d (distance %.1f), want row %.1f",
						name, i, v, x, y, c, bj, best, want)
				}
			}
		}
		if blank := blankPixels(img, lay); blank > 0 {
			t.Errorf("%s: %d map pixels left blank", name, blank)
		}
	}
}

// A signed field's zero takes the diverging map's middle colour.
func TestSignedZeroIsTheMiddleColour(t *testing.T) {
	m := mustMesh(t, mesh.Quad, 8)
	field := make([]float64, m.NumCells)
	field[0], field[1] = -2, 1
	opt := testSize
	opt.Signed = true
	var buf bytes.Buffer
	if err := Render(&buf, "png", m, field, Face, opt); err != nil {
		t.Fatal(err)
	}
	img := decode(t, buf.Bytes())
	lay, _ := NewLayout(m, opt)
	x, y := lay.Pixel(m.CellX[20], m.CellY[20])
	if c := rgba(img, int(x), int(y)); c != divZero {
		t.Errorf("zero cell is %v, want %v", c, divZero)
	}
	x, y = lay.Pixel(m.CellX[0], m.CellY[0])
	if c := rgba(img, int(x), int(y)); c != divLow {
		t.Errorf("−2 cell (the range is ±2) is %v, want %v", c, divLow)
	}
}

type svgDoc struct {
	root     string
	polygons []map[string]string
	uses     int
	text     string
}

func parseSVG(t *testing.T, b []byte) svgDoc {
	t.Helper()
	var doc svgDoc
	d := xml.NewDecoder(bytes.NewReader(b))
	for {
		tok, err := d.Token()
		if err == io.EOF {
			return doc
		}
		if err != nil {
			t.Fatalf("SVG does not parse: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if doc.root == "" {
				doc.root = e.Name.Local
			}
			switch e.Name.Local {
			case "polygon":
				a := map[string]string{}
				for _, at := range e.Attr {
					a[at.Name.Local] = at.Value
				}
				doc.polygons = append(doc.polygons, a)
			case "use":
				doc.uses++
			}
		case xml.CharData:
			doc.text += string(e)
		}
	}
}

// The SVG parses, has one polygon per element, in element order, with
// the colour of its value, periodic copies as <use>, and the texts.
func TestRenderSVG(t *testing.T) {
	for _, tc := range []struct {
		kind mesh.Kind
		n    int
		loc  Location
	}{
		{mesh.Hex, 8, Face}, {mesh.Quad, 6, Node}, {mesh.Icosahedral, 1, Face}, {mesh.Cubed, 3, Face},
	} {
		m := mustMesh(t, tc.kind, tc.n)
		xs, _ := centres(m, tc.loc)
		field := make([]float64, len(xs))
		imax := 0
		for i := range field {
			field[i] = 100 + xs[i]
			if field[i] > field[imax] {
				imax = i
			}
		}
		opt := testSize
		opt.Title, opt.Label, opt.Units = "depth <h> & co", "fluid depth", "m"
		var buf bytes.Buffer
		if err := Render(&buf, "svg", m, field, tc.loc, opt); err != nil {
			t.Fatal(err)
		}
		doc := parseSVG(t, buf.Bytes())
		name := fmt.Sprintf("%s-%d-%s", tc.kind, tc.n, tc.loc)
		if doc.root != "svg" {
			t.Errorf("%s: root %q", name, doc.root)
		}
		if len(doc.polygons) != len(field) {
			t.Fatalf("%s: %d polygons, want %d", name, len(doc.polygons), len(field))
		}
		if doc.polygons[imax]["fill"] != "#f3ecb8" {
			t.Errorf("%s: largest element's polygon fill %q, want #f3ecb8", name, doc.polygons[imax]["fill"])
		}
		if doc.uses == 0 {
			t.Errorf("%s: no periodic copies (<use>) of polygons that cross the domain edge", name)
		}
		for _, s := range []string{"depth <h> & co", "fluid depth (m)"} {
			if !strings.Contains(doc.text, s) {
				t.Errorf("%s: text %q missing", name, s)
			}
		}
	}
}

func TestRenderRejects(t *testing.T) {
	m := mustMesh(t, mesh.Hex, 8)
	good := make([]float64, m.NumCells)
	nan := make([]float64, m.NumCells)
	nan[5] = math.NaN()
	for _, tc := range []struct {
		name    string
		format  string
		m       *mesh.Mesh
		field   []float64
		loc     Location
		opt     Options
		wantErr []string
	}{
		{"wrong length", "png", m, good[:10], Face, testSize, []string{"field", "10 values", fmt.Sprint(m.NumCells)}},
		{"node length", "svg", m, good, Node, testSize, []string{"field", fmt.Sprint(m.NumVertices), "vertex"}},
		{"unknown format", "jpeg", m, good, Face, testSize, []string{`format = "jpeg"`, "png, svg"}},
		{"unknown location", "png", m, good, "edge", testSize, []string{`location = "edge"`, "face, node"}},
		{"zero width", "png", m, good, Face, Options{Height: 400}, []string{"Options.Width = 0", "between"}},
		{"zero height", "svg", m, good, Face, Options{Width: 400}, []string{"Options.Height = 0"}},
		{"huge", "png", m, good, Face, Options{Width: 100000, Height: 400}, []string{"Options.Width = 100000"}},
		{"not finite", "png", m, nan, Face, testSize, []string{"field[5] = NaN", "finite"}},
		{"nil mesh", "png", nil, good, Face, testSize, []string{"mesh"}},
		{"inverted range", "png", m, good, Face, Options{Width: 400, Height: 300, Min: 2, Max: 1}, []string{"Options.Min = 2", "Options.Max = 1"}},
	} {
		var buf bytes.Buffer
		err := Render(&buf, tc.format, tc.m, tc.field, tc.loc, tc.opt)
		if !testcheck.ErrorSays(t, tc.name, err, tc.wantErr...) {
			continue
		}
		if buf.Len() != 0 {
			t.Errorf("%s: %d bytes written on error", tc.name, buf.Len())
		}
	}
}

// The maps: documented end colours; the Oklab conversion's forward and
// inverse matrices undo each other on every control colour; lightness
// rises along the sequential map and rises then falls along the
// diverging one, symmetric within 0.05.
func TestColorMaps(t *testing.T) {
	seq, div := SequentialMap(), DivergingMap()
	for _, tc := range []struct {
		m    *ColorMap
		f    float64
		want color.RGBA
	}{
		{seq, 0, seqLow}, {seq, 1, seqHigh}, {seq, -3, seqLow}, {seq, 7, seqHigh},
		{div, 0, divLow}, {div, 0.5, divZero}, {div, 1, divHigh},
	} {
		if got := tc.m.At(tc.f); got != tc.want {
			t.Errorf("%s.At(%g) = %v, want %v", tc.m.Name, tc.f, got, tc.want)
		}
	}
	for _, m := range []*ColorMap{seq, div} {
		for _, s := range m.Stops {
			if got := fromOklab(toOklab(s)); dist(got, s) > 1 {
				t.Errorf("%s: Oklab round trip of %v gives %v", m.Name, s, got)
			}
		}
	}
	L := func(m *ColorMap, f float64) float64 { return toOklab(m.At(f))[0] }
	for k := 1; k <= 100; k++ {
		f0, f1 := float64(k-1)/100, float64(k)/100
		if L(seq, f1) < L(seq, f0)-1e-3 {
			t.Errorf("sequential lightness falls from %g to %g: %.4f → %.4f", f0, f1, L(seq, f0), L(seq, f1))
		}
		if f1 <= 0.5 && L(div, f1) < L(div, f0)-1e-3 || f0 >= 0.5 && L(div, f1) > L(div, f0)+1e-3 {
			t.Errorf("diverging lightness not peaked at the middle between %g and %g", f0, f1)
		}
	}
	if d := math.Abs(L(div, 0) - L(div, 1)); d > 0.05 {
		t.Errorf("diverging ends differ in lightness by %.3f", d)
	}
}

func TestTitle(t *testing.T) {
	c := sim.DefaultConfig()
	c.Title = "Jet"
	c.Grid.Kind, c.Grid.N = "quad", 32
	c.Scheme.Name, c.Time.Integrator, c.Time.Dt = "al81", "rk4", 30
	got := Title(c, 1.5*86400)
	want := "Jet · quad n=32 · al81 · rk4 Δt=30 s · t = 36.00 h"
	if got != want {
		t.Errorf("Title = %q, want %q", got, want)
	}
	c.Grid.Kind, c.Grid.N = "icosahedral", 5
	if got := Title(c, 5*86400); !strings.Contains(got, "icosahedral level 5") || !strings.HasSuffix(got, "t = 5.00 d") {
		t.Errorf("Title = %q", got)
	}
}

func ExampleRender() {
	m, _ := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 8, Length: 1e6})
	depth := make([]float64, m.NumCells)
	for i := range depth {
		depth[i] = 1000 + 10*math.Sin(2*math.Pi*m.CellY[i]/m.Surface.Ly)
	}
	var buf bytes.Buffer
	err := Render(&buf, "png", m, depth, Face, Options{Title: "a zonal jet", Label: "fluid depth h", Units: "m", Width: 800, Height: 500})
	img, _ := png.Decode(&buf)
	fmt.Println(err, img.Bounds().Size())
	// Output: <nil> (800,500)
}

// Neighbouring polygons meet without gaps at any size: no pixel of the
// map keeps the white background, whatever the scale and however the
// polygons were unwrapped across the periodic edges or the date line.
func TestNoSeams(t *testing.T) {
	if testing.Short() {
		t.Skip("long and serial; runs in the full suite")
	}
	for _, g := range []struct {
		kind mesh.Kind
		n    int
	}{
		{mesh.Quad, 12}, {mesh.Hex, 12}, {mesh.Tri, 12}, {mesh.Icosahedral, 3},
		{mesh.Cubed, 7}, // odd n: a cell centre at each pole
		{mesh.Cubed, 8}, // even n: a vertex at each pole
	} {
		kind, n := g.kind, g.n
		m := mustMesh(t, kind, n)
		for _, loc := range []Location{Face, Node} {
			count := m.NumCells
			if loc == Node {
				count = m.NumVertices
			}
			field := make([]float64, count)
			for i := range field {
				field[i] = float64(i % 7)
			}
			for _, sz := range [][2]int{{641, 421}, {777, 555}, {1000, 703}} {
				opt := Options{Width: sz[0], Height: sz[1]}
				var buf bytes.Buffer
				if err := Render(&buf, "png", m, field, loc, opt); err != nil {
					t.Fatal(err)
				}
				img := decode(t, buf.Bytes())
				lay, _ := NewLayout(m, opt)
				if blank := blankPixels(img, lay); blank > 0 {
					t.Errorf("%s %s at %v: %d map pixels left blank", kind, loc, sz, blank)
				}
			}
		}
	}
}

// blankPixels counts the pixels of the map of layout lay that are still
// the background white.
func blankPixels(img image.Image, lay *Layout) int {
	blank := 0
	for y := int(lay.Map.Y0); y < int(lay.Map.Y1); y++ {
		for x := int(lay.Map.X0); x < int(lay.Map.X1); x++ {
			if rgba(img, x, y) == white {
				blank++
			}
		}
	}
	return blank
}
