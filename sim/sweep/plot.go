package sweep

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Plot size: 960 × 600 pixels at 96 dots per inch (10 × 6.25 in).
const (
	plotDPI    = 96
	PlotWidth  = 960 // pixels of the PNG plots
	PlotHeight = 600
	maxLegend  = 12 // drift plots list at most this many runs
)

// palette is an ordered set of line colours chosen to stay apart from
// each other on white, in the project's own order: its teal first, then
// raspberry, ochre and deep blue.
var palette = []color.RGBA{
	{0x13, 0x7f, 0x73, 0xff}, // teal
	{0xb8, 0x32, 0x5a, 0xff}, // raspberry
	{0xb0, 0x86, 0x10, 0xff}, // ochre
	{0x1f, 0x5f, 0xa8, 0xff}, // deep blue
	{0x8c, 0x3d, 0x9b, 0xff}, // plum
	{0x4a, 0x4a, 0x4a, 0xff}, // graphite
	{0xd0, 0x61, 0x2b, 0xff}, // brick
	{0x2e, 0x8b, 0x57, 0xff}, // sea green
}

var dashes = [][]vg.Length{nil, {vg.Points(6), vg.Points(3)}, {vg.Points(2), vg.Points(2)}, {vg.Points(8), vg.Points(3), vg.Points(2), vg.Points(3)}}

// style returns the colour and dash pattern of curve i: the palette, then
// the palette again with the next dash pattern.
func style(i int) (color.Color, []vg.Length) {
	return palette[i%len(palette)], dashes[(i/len(palette))%len(dashes)]
}

type plotFile struct {
	name string
	data []byte
}

// plots renders error.{png,svg} when some group has a fitted order, and
// energy-drift.{png,svg} and enstrophy-drift.{png,svg}.
func (res *Result) plots() ([]plotFile, error) {
	var out []plotFile
	add := func(base string, f *figure) error {
		for _, format := range []string{"png", "svg"} {
			b, err := f.render(format)
			if err != nil {
				return fmt.Errorf("%s.%s: %w", base, format, err)
			}
			out = append(out, plotFile{base + "." + format, b})
		}
		return nil
	}
	if len(res.Fits) > 0 {
		f, err := res.errorPlot()
		if err != nil {
			return nil, err
		}
		if err := add("error", f); err != nil {
			return nil, err
		}
	}
	for _, d := range []struct {
		base, what string
		series     func(r *Row) []float64
	}{
		{"energy-drift", "energy", func(r *Row) []float64 { return r.EnergySeries }},
		{"enstrophy-drift", "potential enstrophy", func(r *Row) []float64 { return r.EnstrophySeries }},
	} {
		f, err := res.driftPlot(d.what, d.series)
		if err != nil {
			return nil, err
		}
		if err := add(d.base, f); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// figure is a plot with its legend in a column beside it, so that the
// legend never hides data.
type figure struct {
	p           *plot.Plot
	legend      plot.Legend
	legendTexts []string
}

// sans is the type face of every text of the plots.
func sans(size float64) font.Font {
	return font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(size)}
}

func newFigure(title, x, y string) *figure {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = sans(15)
	p.Title.Padding = vg.Points(8)
	p.X.Label.Text, p.Y.Label.Text = x, y
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = sans(12)
		a.Tick.Label.Font = sans(10)
	}
	p.Add(plotter.NewGrid())
	f := &figure{p: p, legend: plot.NewLegend()}
	f.legend.TextStyle.Font = sans(11)
	f.legend.Top, f.legend.Left = true, true
	f.legend.Padding = vg.Points(3)
	return f
}

// add adds a legend entry.
func (f *figure) add(text string, thumbs ...plot.Thumbnailer) {
	f.legend.Add(text, thumbs...)
	f.legendTexts = append(f.legendTexts, text)
}

func (f *figure) render(format string) ([]byte, error) {
	w := vg.Length(PlotWidth) * vg.Inch / plotDPI
	h := vg.Length(PlotHeight) * vg.Inch / plotDPI
	var buf bytes.Buffer
	switch format {
	case "png":
		cv := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(plotDPI))
		f.draw(draw.New(cv))
		if _, err := (vgimg.PngCanvas{Canvas: cv}).WriteTo(&buf); err != nil {
			return nil, err
		}
	case "svg":
		cv := vgsvg.New(w, h)
		f.draw(draw.New(cv))
		if _, err := cv.WriteTo(&buf); err != nil {
			return nil, err
		}
	default:
		return nil, fmt.Errorf("format %q: want png or svg", format)
	}
	return buf.Bytes(), nil
}

// draw puts the plot on the left and, when there are entries, the legend
// in a column on the right, starting below the title.
func (f *figure) draw(c draw.Canvas) {
	pad := vg.Points(10)
	legW := vg.Length(0)
	for _, e := range f.legendTexts {
		legW = max(legW, f.legend.TextStyle.Width(e))
	}
	if legW > 0 {
		legW += f.legend.ThumbnailWidth + 2*pad
		legW = min(legW, (c.Max.X-c.Min.X)*0.4)
	}
	f.p.Draw(draw.Crop(c, pad, -legW-pad, pad, -pad))
	if legW > 0 {
		top := f.p.Title.TextStyle.Height(f.p.Title.Text) + f.p.Title.Padding + 3*pad
		f.legend.Draw(draw.Crop(c, c.Max.X-c.Min.X-legW, -pad, pad, -top))
	}
}

// label is a short legend text for choices: "n=32 apvm" for grid.n=32,
// scheme.name=apvm (numbers keep the key's last part, words stand alone).
func label(cs []Choice) string {
	var s []string
	for _, c := range cs {
		if _, err := strconv.ParseFloat(c.Value, 64); err == nil || c.Value == "true" || c.Value == "false" {
			k := c.Key
			if i := strings.LastIndexByte(k, '.'); i >= 0 {
				k = k[i+1:]
			}
			s = append(s, k+"="+c.Value)
		} else {
			s = append(s, c.Value)
		}
	}
	return strings.Join(s, " ")
}

func (res *Result) errorPlot() (*figure, error) {
	// gonum/plot shrinks the data area to fit a y label longer than the
	// axis, so the label stays short and the norm is named in the title.
	fig := newFigure("Depth error (normalised l2 of Williamson et al. 1992) against grid spacing",
		"mean distance between neighbouring cell centres (km)", "l2 error of h")
	p := fig.p
	p.X.Scale, p.Y.Scale = plot.LogScale{}, plot.LogScale{}
	p.X.Tick.Marker, p.Y.Tick.Marker = logTicks{}, logTicks{}
	xmin, xmax := math.Inf(1), math.Inf(-1)
	for i, f := range res.Fits {
		col, dash := style(i)
		pts := make(plotter.XYs, len(f.SpacingM))
		for k := range f.SpacingM {
			pts[k] = plotter.XY{X: f.SpacingM[k] / 1000, Y: f.L2H[k]}
			xmin, xmax = math.Min(xmin, pts[k].X), math.Max(xmax, pts[k].X)
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Color = col
		sc.GlyphStyle.Radius = vg.Points(3.5)
		sc.GlyphStyle.Shape = draw.CircleGlyph{}
		lo, hi := minMax(f.SpacingM)
		line, err := plotter.NewLine(plotter.XYs{
			{X: lo / 1000, Y: math.Exp(f.LogIntercept) * math.Pow(lo, f.Order)},
			{X: hi / 1000, Y: math.Exp(f.LogIntercept) * math.Pow(hi, f.Order)},
		})
		if err != nil {
			return nil, err
		}
		line.Color, line.Dashes, line.Width = col, dash, vg.Points(1.5)
		p.Add(line, sc)
		name := label(f.Group)
		if name != "" {
			name += ": "
		}
		fig.add(fmt.Sprintf("%sorder l2 %.2f, l∞ %.2f", name, f.Order, f.OrderLInf), line, sc)
	}
	// A second-order guide below the middle of the first curve.
	f := res.Fits[0]
	lo, hi := minMax(f.SpacingM)
	mid := math.Sqrt(lo * hi)
	ymid := math.Exp(f.LogIntercept) * math.Pow(mid, f.Order) * 0.5
	guide, err := plotter.NewLine(plotter.XYs{
		{X: lo / 1000, Y: ymid * (lo / mid) * (lo / mid)},
		{X: hi / 1000, Y: ymid * (hi / mid) * (hi / mid)},
	})
	if err != nil {
		return nil, err
	}
	guide.Color, guide.Dashes = color.Gray{Y: 0x88}, []vg.Length{vg.Points(2), vg.Points(3)}
	p.Add(guide)
	fig.add("slope 2 (guide)", guide)
	p.X.Min, p.X.Max = xmin/1.15, xmax*1.15
	return fig, nil
}

func minMax(v []float64) (float64, float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, x := range v {
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return lo, hi
}

func (res *Result) driftPlot(what string, series func(r *Row) []float64) (*figure, error) {
	tmax := 0.0
	for i := range res.Rows {
		if t := res.Rows[i].TimeSeries; len(t) > 0 {
			tmax = math.Max(tmax, t[len(t)-1])
		}
	}
	unit, scale := "h", 3600.0
	if tmax >= 2*86400 {
		unit, scale = "days", 86400
	}
	fig := newFigure("Relative "+what+" drift", "time ("+unit+")", "(X(t) − X(0)) / |X(0)|")
	for i := range res.Rows {
		r := &res.Rows[i]
		y := series(r)
		if len(y) == 0 {
			continue
		}
		pts := make(plotter.XYs, len(y))
		for k := range y {
			pts[k] = plotter.XY{X: r.TimeSeries[k] / scale, Y: y[k]}
		}
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", r.Run, err)
		}
		col, dash := style(i)
		line.Color, line.Dashes, line.Width = col, dash, vg.Points(1.5)
		fig.p.Add(line)
		if len(res.Rows) <= maxLegend {
			name := label(r.Choices)
			if r.BlewUp {
				name += " (blew up)"
			}
			fig.add(name, line)
		}
	}
	return fig, nil
}

// logTicks labels 1, 2 and 5 times powers of ten and marks the other
// integer multiples as minor ticks, so that a range of less than a decade
// still carries labels.
type logTicks struct{}

func (logTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	var ticks []plot.Tick
	for e := math.Floor(math.Log10(lo)); e <= math.Ceil(math.Log10(hi)); e++ {
		p := math.Pow(10, e)
		for m := 1; m <= 9; m++ {
			v := float64(m) * p
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if m == 1 || m == 2 || m == 5 {
				t.Label = tickLabel(v)
			}
			ticks = append(ticks, t)
		}
	}
	return ticks
}

// tickLabel writes 0.0005, 20 or 2000 plainly and very small or large
// values as 1e-08.
func tickLabel(v float64) string {
	g := strconv.FormatFloat(v, 'g', 3, 64)
	if a := math.Abs(v); a >= 1e-4 && a < 1e5 {
		r, _ := strconv.ParseFloat(g, 64) // rounded to 3 digits: no 0.0005000000000000001
		return strconv.FormatFloat(r, 'f', -1, 64)
	}
	return g
}
