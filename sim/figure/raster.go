package figure

import (
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"slices"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
)

// raster paints into an RGBA image. Polygons are filled without
// anti-aliasing by the pixel-centre rule: pixel (i, j) takes the colour of
// the polygon that contains (i+½, j+½), with half-open edges, so that
// neighbouring cells sharing an edge leave neither gaps nor overlaps and a
// cell's pixels carry exactly its colour. Text goes through gonum/plot's
// image canvas at 72 dots per inch, so that one point is one pixel.
type raster struct {
	l    *Layout
	cv   *vgimg.Canvas
	img  *image.RGBA
	clip image.Rectangle // the map, in whole pixels
	xs   []float64       // scan-line crossings, reused
	tmp  []pt
}

func newRaster(l *Layout) (*raster, error) {
	cv := vgimg.NewWith(vgimg.UseWH(vg.Length(l.Width), vg.Length(l.Height)), vgimg.UseDPI(72))
	img, ok := cv.Image().(*image.RGBA)
	if !ok {
		return nil, fmt.Errorf("figure: the image canvas is a %T, want *image.RGBA", cv.Image())
	}
	if img.Bounds().Dx() != l.Width || img.Bounds().Dy() != l.Height {
		return nil, fmt.Errorf("figure: canvas of %v, want %d × %d", img.Bounds(), l.Width, l.Height)
	}
	clip := image.Rect(int(l.Map.X0), int(l.Map.Y0), int(l.Map.X1), int(l.Map.Y1))
	return &raster{l: l, cv: cv, img: img, clip: clip}, nil
}

func (r *raster) polygon(_ int, pts []pt, c color.RGBA) { r.fill(pts, c, r.clip) }

func (r *raster) copyOf(_ int, pts []pt, dx, dy float64, c color.RGBA) {
	r.tmp = r.tmp[:0]
	for _, q := range pts {
		r.tmp = append(r.tmp, pt{q.x + dx, q.y + dy})
	}
	r.fill(r.tmp, c, r.clip)
}

func (r *raster) endMap() {}

// fill paints the pixels of clip whose centres lie inside the polygon
// (even-odd rule, so a non-convex band round a pole fills correctly).
func (r *raster) fill(pts []pt, c color.RGBA, clip image.Rectangle) {
	ymin, ymax := math.Inf(1), math.Inf(-1)
	for _, q := range pts {
		ymin, ymax = math.Min(ymin, q.y), math.Max(ymax, q.y)
	}
	j0 := max(int(math.Ceil(ymin-0.5)), clip.Min.Y)
	j1 := min(int(math.Ceil(ymax-0.5)), clip.Max.Y) // exclusive
	n := len(pts)
	for j := j0; j < j1; j++ {
		yc := float64(j) + 0.5
		r.xs = r.xs[:0]
		for k := range n {
			a, b := pts[k], pts[(k+1)%n]
			if (a.y <= yc) != (b.y <= yc) {
				// The same orientation for both polygons that share the
				// edge, so that both find the same crossing to the bit.
				if a.y > b.y {
					a, b = b, a
				}
				r.xs = append(r.xs, a.x+(yc-a.y)*(b.x-a.x)/(b.y-a.y))
			}
		}
		slices.Sort(r.xs)
		row := r.img.Pix[j*r.img.Stride:]
		for k := 0; k+1 < len(r.xs); k += 2 {
			i0 := max(int(math.Ceil(r.xs[k]-0.5)), clip.Min.X)
			i1 := min(int(math.Ceil(r.xs[k+1]-0.5)), clip.Max.X)
			for i := i0; i < i1; i++ {
				o := 4 * i
				row[o], row[o+1], row[o+2], row[o+3] = c.R, c.G, c.B, c.A
			}
		}
	}
}

func (r *raster) rect(q Rect, c color.RGBA) {
	full := r.img.Bounds()
	r.fill([]pt{{q.X0, q.Y0}, {q.X1, q.Y0}, {q.X1, q.Y1}, {q.X0, q.Y1}}, c, full)
}

func (r *raster) text(x, y float64, s string, size float64, anchor int, c color.RGBA) {
	f := face(size)
	w := f.Width(s).Points()
	switch anchor {
	case 0:
		x -= w / 2
	case 1:
		x -= w
	}
	r.cv.SetColor(c)
	r.cv.FillString(f, vg.Point{X: vg.Length(x), Y: vg.Length(float64(r.l.Height) - y)}, s)
}

func (r *raster) finish(w io.Writer) error {
	if err := png.Encode(w, r.img); err != nil {
		return fmt.Errorf("png: %w", err)
	}
	return nil
}
