package figure

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"strings"

	"gyrebench/sim/display"
	"gyrebench/sim/mesh"
)

// Location says where a field lives.
type Location string

// Locations, named as in UGRID.
const (
	Face Location = "face" // one value per cell, drawn on the cell
	Node Location = "node" // one value per vertex, drawn on its dual cell
)

// Options describes one figure.
type Options struct {
	Title  string // top line, e.g. from Title
	Label  string // what the field is, e.g. "fluid depth h"; shown above the colour bar
	Units  string // e.g. "m", "s-1"
	Signed bool   // diverging map centred on zero; otherwise sequential over [min, max]
	// Width and Height are the size in pixels (the SVG's user units).
	Width, Height int
	// Min and Max fix the colour range (for several figures on one scale)
	// when Min < Max; both zero means the field's own range. With Signed
	// the range is made symmetric: ±max(|Min|, |Max|).
	Min, Max float64
}

// Render draws field on mesh m and writes it to w as format "png" or
// "svg". Face fields have NumCells values, node fields NumVertices. Errors
// name the argument and what is allowed; nothing is written on error.
func Render(w io.Writer, format string, m *mesh.Mesh, field []float64, loc Location, opt Options) error {
	if format != "png" && format != "svg" {
		return fmt.Errorf("format = %q: unknown; allowed: png, svg", format)
	}
	lay, err := NewLayout(m, opt)
	if err != nil {
		return err
	}
	var n int
	switch loc {
	case Face:
		n = m.NumCells
	case Node:
		n = m.NumVertices
	default:
		return fmt.Errorf("location = %q: unknown; allowed: face, node", loc)
	}
	if len(field) != n {
		return fmt.Errorf("field: %d values for location %q, want %d (one per %s of the mesh)", len(field), loc, n, map[Location]string{Face: "cell", Node: "vertex"}[loc])
	}
	for i, v := range field {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("field[%d] = %g: values must be finite", i, v)
		}
	}
	lo, hi, err := valueRange(field, opt)
	if err != nil {
		return err
	}
	cmap := SequentialMap()
	if opt.Signed {
		cmap = DivergingMap()
	}
	var p painter
	if format == "png" {
		p, err = newRaster(lay)
		if err != nil {
			return err
		}
	} else {
		p = newSVG(lay)
	}
	draw(p, lay, m, field, loc, opt, cmap, lo, hi)
	return p.finish(w)
}

// snap rounds a pixel coordinate to 1/256 of a pixel, so that a corner
// shared by neighbouring polygons, reached through different periodic
// unwrappings, has the same coordinates to the bit in each.
func snap(v float64) float64 { return math.Round(v*256) / 256 }

// valueRange returns the range the colour bar spans.
func valueRange(field []float64, opt Options) (lo, hi float64, err error) {
	if opt.Min != 0 || opt.Max != 0 {
		if !(opt.Min < opt.Max) || math.IsInf(opt.Min, 0) || math.IsInf(opt.Max, 0) {
			return 0, 0, fmt.Errorf("Options.Min = %g, Options.Max = %g: want finite Min < Max, or both 0 for the field's range", opt.Min, opt.Max)
		}
		lo, hi = opt.Min, opt.Max
	} else {
		lo, hi = math.Inf(1), math.Inf(-1)
		for _, v := range field {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if opt.Signed {
		a := math.Max(math.Abs(lo), math.Abs(hi))
		if a == 0 {
			a = 1
		}
		return -a, a, nil
	}
	if lo == hi {
		d := math.Abs(lo) * 0.01
		if d == 0 {
			d = 1
		}
		lo, hi = lo-d, hi+d
	}
	return lo, hi, nil
}

// pt is a point in pixels.
type pt struct{ x, y float64 }

// painter is what a format must draw: filled polygons (clipped to the
// map), each with an id so that its periodic copies can refer to it,
// rectangles, and text.
type painter interface {
	polygon(id int, pts []pt, c color.RGBA)
	copyOf(id int, pts []pt, dx, dy float64, c color.RGBA)
	endMap()
	rect(r Rect, c color.RGBA)
	// text draws s with its baseline at y; anchor −1 left, 0 centre, 1 right.
	text(x, y float64, s string, size float64, anchor int, c color.RGBA)
	finish(w io.Writer) error
}

var (
	ink   = color.RGBA{0x22, 0x22, 0x22, 0xff}
	frame = color.RGBA{0x44, 0x44, 0x44, 0xff}
)

// draw lays the whole figure out on p.
func draw(p painter, l *Layout, m *mesh.Mesh, field []float64, loc Location, opt Options, cmap *ColorMap, lo, hi float64) {
	g := display.Of(m)
	elems := &g.Cells
	if loc == Node {
		elems = &g.Duals
	}
	polys := g.Map(elems)
	var pix []pt
	period := [2]float64{g.PeriodX, g.PeriodY}
	for i, v := range field {
		pix = pix[:0]
		bx0, by0, bx1, by1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		corners := polys.Corners(i)
		for k := 0; k < len(corners); k += 2 {
			q := pt{corners[k], corners[k+1]}
			bx0, bx1 = math.Min(bx0, q.x), math.Max(bx1, q.x)
			by0, by1 = math.Min(by0, q.y), math.Max(by1, q.y)
			x, y := l.Pixel(q.x, q.y)
			pix = append(pix, pt{snap(x), snap(y)})
		}
		c := cmap.At((v - lo) / (hi - lo))
		p.polygon(i, pix, c)
		// Periodic copies of polygons that cross the edge of the domain.
		for sx := -1.0; sx <= 1; sx++ {
			for sy := -1.0; sy <= 1; sy++ {
				if sx == 0 && sy == 0 || sx != 0 && period[0] == 0 || sy != 0 && period[1] == 0 {
					continue
				}
				dx, dy := sx*period[0], sy*period[1]
				if bx1+dx <= l.x0 || bx0+dx >= l.x1 || by1+dy <= l.y0 || by0+dy >= l.y1 {
					continue
				}
				// The map spans whole pixels, so a period is a whole
				// number of pixels and the shifted copy's corners stay on
				// the snapping grid: they meet their neighbours exactly.
				p.copyOf(i, pix, sx*(l.Map.X1-l.Map.X0), -sy*(l.Map.Y1-l.Map.Y0), c)
			}
		}
	}
	p.endMap()

	ls, pad := l.LabelSize, l.Pad
	tickLen := math.Round(0.4 * ls)
	mp := l.Map
	// Frame and axes.
	p.rect(Rect{mp.X0 - 1, mp.Y0 - 1, mp.X1 + 1, mp.Y0}, frame)
	p.rect(Rect{mp.X0 - 1, mp.Y1, mp.X1 + 1, mp.Y1 + 1}, frame)
	p.rect(Rect{mp.X0 - 1, mp.Y0, mp.X0, mp.Y1}, frame)
	p.rect(Rect{mp.X1, mp.Y0, mp.X1 + 1, mp.Y1}, frame)
	xt, yt := l.axisTicks()
	for _, t := range xt {
		x, _ := l.Pixel(t.v, l.y0)
		x = math.Round(x)
		p.rect(Rect{x - 0.5, mp.Y1 + 1, x + 0.5, mp.Y1 + 1 + tickLen}, frame)
		p.text(x, mp.Y1+1+tickLen+1.05*ls, t.label, ls, 0, ink)
	}
	for _, t := range yt {
		_, y := l.Pixel(l.x0, t.v)
		y = math.Round(y)
		p.rect(Rect{mp.X0 - 1 - tickLen, y - 0.5, mp.X0 - 1, y + 0.5}, frame)
		p.text(mp.X0-1-tickLen-0.3*ls, y+0.35*ls, t.label, ls, 1, ink)
	}
	xcap, ycap := "x (km)", "y (km)"
	if l.sphere {
		xcap, ycap = "longitude", "latitude"
	}
	p.text((mp.X0+mp.X1)/2, mp.Y1+1+tickLen+2.4*ls, xcap, ls, 0, ink)
	p.text(mp.X0, mp.Y0-0.5*ls, ycap, ls, -1, ink)

	// Colour bar: row j from the top shows fraction BarFraction(j).
	b := l.Bar
	for j := math.Floor(b.Y0); j < math.Ceil(b.Y1); j++ {
		p.rect(Rect{b.X0, j, b.X1, j + 1}, cmap.At(l.BarFraction(j)))
	}
	p.rect(Rect{b.X0 - 1, b.Y0 - 1, b.X1 + 1, b.Y0}, frame)
	p.rect(Rect{b.X0 - 1, b.Y1, b.X1 + 1, b.Y1 + 1}, frame)
	p.rect(Rect{b.X0 - 1, b.Y0, b.X0, b.Y1}, frame)
	p.rect(Rect{b.X1, b.Y0, b.X1 + 1, b.Y1}, frame)
	for _, t := range majorTicks(lo, hi) {
		f := (t.v - lo) / (hi - lo)
		top, bottom := math.Floor(b.Y0), math.Ceil(b.Y1)-1
		y := bottom - f*(bottom-top) + 0.5
		p.rect(Rect{b.X1 + 1, y - 0.5, b.X1 + 1 + tickLen, y + 0.5}, frame)
		label := t.label
		if rest, ok := strings.CutPrefix(label, "-"); ok {
			label = "−" + rest
		}
		p.text(b.X1+1+tickLen+0.3*ls, y+0.35*ls, label, ls, -1, ink)
	}
	units := opt.Label
	if opt.Units != "" {
		if units != "" {
			units += " "
		}
		units += "(" + opt.Units + ")"
	}
	if units != "" {
		p.text(b.X1, b.Y0-0.5*ls, units, ls, 1, ink)
	}

	// Title, shrunk to fit and then shortened.
	if opt.Title != "" {
		size := l.TitleSize
		maxW := float64(l.Width) - 2*pad
		for size > 0.6*l.TitleSize && textWidth(opt.Title, size) > maxW {
			size *= 0.95
		}
		title := []rune(opt.Title)
		for len(title) > 1 && textWidth(string(title), size) > maxW {
			title = append(title[:len(title)-2], '…')
		}
		p.text(pad, l.TitleY+pad+size, string(title), size, -1, ink)
	}
}
