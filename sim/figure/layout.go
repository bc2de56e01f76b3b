package figure

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"

	"gyrebench/sim/mesh"
)

// Size limits of a figure, in pixels.
const (
	MinWidth, MinHeight = 200, 150
	MaxSide             = 8192
)

// Rect is an axis-aligned rectangle in pixels, y downwards.
type Rect struct{ X0, Y0, X1, Y1 float64 }

// Layout places the parts of a figure. Pixel coordinates have their
// origin at the top-left corner and y downwards; pixel (i, j) covers
// [i, i+1) × [j, j+1). The map shows the whole domain at equal scales in x
// and y: on the plane x, y in metres over [0, Lx] × [0, Ly]; on the sphere
// longitude and latitude in degrees over [−180, 180] × [−90, 90].
type Layout struct {
	Width, Height int
	Map           Rect // the field
	Bar           Rect // the colour bar; its top row is the top of the range
	TitleSize     float64
	LabelSize     float64
	Pad           float64
	TitleY        float64 // offset of the title band from the top

	sphere         bool
	x0, x1, y0, y1 float64 // domain in display coordinates
}

// Pixel returns the pixel position of a point of the domain: (x, y) in
// metres on the plane, (longitude, latitude) in degrees on the sphere.
func (l *Layout) Pixel(x, y float64) (px, py float64) {
	sx := (l.Map.X1 - l.Map.X0) / (l.x1 - l.x0)
	sy := (l.Map.Y1 - l.Map.Y0) / (l.y1 - l.y0)
	return l.Map.X0 + (x-l.x0)*sx, l.Map.Y1 - (y-l.y0)*sy
}

// BarFraction returns the fraction of the range at pixel row py of the
// colour bar: 1 at its top row, 0 at its bottom row.
func (l *Layout) BarFraction(py float64) float64 {
	top, bottom := math.Floor(l.Bar.Y0), math.Ceil(l.Bar.Y1)-1
	return (bottom - math.Floor(py)) / (bottom - top)
}

// tick is one labelled tick: its position in display (or value)
// coordinates and its text.
type tick struct {
	v     float64
	label string
}

func face(size float64) font.Face {
	return font.DefaultCache.Lookup(font.Font{Typeface: "Liberation", Variant: "Sans"}, vg.Points(size))
}

// textWidth is the advance width of s in pixels at size px.
func textWidth(s string, size float64) float64 {
	f := face(size)
	return f.Width(s).Points()
}

func majorTicks(lo, hi float64) []tick {
	var out []tick
	for _, t := range (plot.DefaultTicks{}).Ticks(lo, hi) {
		if t.Label != "" && t.Value >= lo-1e-9*(hi-lo) && t.Value <= hi+1e-9*(hi-lo) {
			out = append(out, tick{t.Value, t.Label})
		}
	}
	return out
}

func degreeTicks(lo, hi, step float64) []tick {
	var out []tick
	for v := lo; v <= hi+1e-9; v += step {
		s := fmt.Sprintf("%g°", math.Abs(v))
		if v < 0 {
			s = "−" + s
		}
		out = append(out, tick{v, s})
	}
	return out
}

// axisTicks returns the ticks along x and y in display coordinates,
// labelled in km on the plane and degrees on the sphere.
func (l *Layout) axisTicks() (xs, ys []tick) {
	if l.sphere {
		return degreeTicks(-180, 180, 60), degreeTicks(-90, 90, 30)
	}
	km := func(ts []tick) []tick {
		for i := range ts {
			ts[i].v *= 1000
		}
		return ts
	}
	return km(majorTicks(l.x0/1000, l.x1/1000)), km(majorTicks(l.y0/1000, l.y1/1000))
}

// NewLayout places the map, the colour bar and the texts for mesh m at
// the size in opt.
func NewLayout(m *mesh.Mesh, opt Options) (*Layout, error) {
	if m == nil {
		return nil, fmt.Errorf("mesh: nil; want a mesh")
	}
	if opt.Width < MinWidth || opt.Width > MaxSide {
		return nil, fmt.Errorf("Options.Width = %d: must be between %d and %d pixels", opt.Width, MinWidth, MaxSide)
	}
	if opt.Height < MinHeight || opt.Height > MaxSide {
		return nil, fmt.Errorf("Options.Height = %d: must be between %d and %d pixels", opt.Height, MinHeight, MaxSide)
	}
	W, H := float64(opt.Width), float64(opt.Height)
	l := &Layout{Width: opt.Width, Height: opt.Height, sphere: m.Surface.Sphere}
	if l.sphere {
		l.x0, l.x1, l.y0, l.y1 = -180, 180, -90, 90
	} else {
		l.x0, l.x1, l.y0, l.y1 = 0, m.Surface.Lx, 0, m.Surface.Ly
	}
	l.TitleSize = math.Max(10, math.Min(40, math.Min(H/26, W/40)))
	l.LabelSize = 0.75 * l.TitleSize
	l.Pad = math.Round(math.Max(6, 0.02*math.Min(W, H)))
	ls, pad := l.LabelSize, l.Pad

	_, yt := l.axisTicks()
	leftW := 0.0
	for _, t := range yt {
		leftW = math.Max(leftW, textWidth(t.label, ls))
	}
	tickLen := math.Round(0.4 * ls)
	top := pad + 1.4*l.TitleSize + 1.6*ls           // title, then the axis caption and the bar's units
	bottom := H - (pad + tickLen + 1.3*ls + 1.4*ls) // tick labels, then the axis caption
	left := pad + leftW + tickLen + 0.4*ls

	barW := math.Round(math.Max(10, 0.03*W))
	barLabelW := textWidth("−0.00000", ls) // room for the widest usual tick label
	groupExtra := pad + barW + tickLen + 0.4*ls + barLabelW
	availW := W - pad - left - groupExtra
	availH := bottom - top
	if availW < 40 || availH < 40 {
		return nil, fmt.Errorf("Options.Width = %d, Options.Height = %d: too small for the map, the colour bar and the texts", opt.Width, opt.Height)
	}
	dw, dh := l.x1-l.x0, l.y1-l.y0
	s := math.Min(availW/dw, availH/dh)
	mw, mh := math.Round(dw*s), math.Round(dh*s)
	// The map, the bar and the title move together, so that the spare
	// height is split above and below the whole figure.
	x0 := math.Round(left + (availW-mw)/2)
	y0 := math.Round(top + (availH-mh)/2) // whole pixels: the frame sits just outside
	l.TitleY = y0 - top
	l.Map = Rect{x0, y0, x0 + mw, y0 + mh}
	bx := l.Map.X1 + pad
	l.Bar = Rect{bx, l.Map.Y0, bx + barW, l.Map.Y1}
	return l, nil
}
