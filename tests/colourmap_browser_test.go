package tests

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"testing"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
)

// The canvas and the server's figures draw with one colour map: the
// colours down the page's colour bar (a Chromium screenshot) and those
// down the colour bar of the run's figure PNG are the same set, each
// within 4 levels per channel of one in the other (the two bars have
// different heights, so their rows sample the map at different
// fractions; 4 levels is a few rows of the steepest stretch of either
// bar). Two different maps miss by far more: the canvas's old map began
// at #0d1b2a where the figures' begins at #16203f, 21 levels apart in
// blue.
func TestColourBarsMatch(t *testing.T) {
	ctx := browser(t)
	_, base := startServer(t, server.Options{Workers: 1})
	do(t, ctx, chromedp.Navigate(base+"/"))
	poll(t, ctx, "the first frame", role("field-canvas")+`.dataset.frames > 0`, hang)
	if f := eval[string](t, ctx, role("field-select")+`.value`); f != "depth" {
		t.Fatalf("the page opens on field %q; this test compares the depth maps", f)
	}
	page := screenshot(t, ctx, sel("colour-bar"), "colour-bar-page.png")
	img, err := png.Decode(bytes.NewReader(get(t, base+"/run/1/figure.png")))
	if err != nil {
		t.Fatalf("figure.png: %v", err)
	}
	onPage, err := barColumn(page, false)
	if err != nil {
		t.Fatalf("page colour bar: %v", err)
	}
	inFigure, err := barColumn(img, true)
	if err != nil {
		t.Fatalf("figure colour bar: %v", err)
	}
	t.Logf("page bar %d rows from %v to %v; figure bar %d rows from %v to %v",
		len(onPage), onPage[0], onPage[len(onPage)-1], len(inFigure), inFigure[0], inFigure[len(inFigure)-1])
	if d, c := farthest(onPage, inFigure); d > 4 {
		t.Errorf("the page's bar has %v, %d levels from every colour of the figure's bar", c, d)
	}
	if d, c := farthest(inFigure, onPage); d > 4 {
		t.Errorf("the figure's bar has %v, %d levels from every colour of the page's bar", c, d)
	}
}

// barColumn finds the colour bar in an image and returns the colours down
// its middle, top to bottom. The bar is the horizontal run of at least 8
// identical tinted pixels on a row near the middle, nearest the right edge
// (the figure, whose bar is the rightmost coloured thing) or the left edge
// (the page's bar canvas, which draws the bar at its left); the colours
// are those of the rows above and below that change smoothly (at most 8
// levels a row), so the frame and the background end them.
func barColumn(img image.Image, fromRight bool) ([]color.RGBA, error) {
	b := img.Bounds()
	var err error
	// A tick mark or a label may cross the middle row; try rows near it.
	for k := 0; k < 12; k++ {
		y := (b.Min.Y+b.Max.Y)/2 + (k/2+1)*7*(1-2*(k%2))
		var out []color.RGBA
		if out, err = barColumnAt(img, y, fromRight); err == nil {
			return out, nil
		}
	}
	return nil, err
}

func barColumnAt(img image.Image, y int, fromRight bool) ([]color.RGBA, error) {
	b := img.Bounds()
	at := func(x, y int) color.RGBA {
		r, g, bl, _ := img.At(x, y).RGBA()
		return color.RGBA{uint8(r >> 8), uint8(g >> 8), uint8(bl >> 8), 255}
	}
	ground := at(b.Min.X, b.Min.Y)
	x0, x1, dx := b.Min.X, b.Max.X, 1
	if fromRight {
		x0, x1, dx = b.Max.X-1, b.Min.X-1, -1
	}
	cx := -1
	for x := x0; x != x1; x += dx {
		c := at(x, y)
		// Skip the background and the greys of text, ticks and frames:
		// the map's colours are all tinted.
		if c == ground || max(c.R, c.G, c.B)-min(c.R, c.G, c.B) < 10 {
			continue
		}
		n := 0
		for x2 := x; x2 != x1 && at(x2, y) == c; x2 += dx {
			n++
		}
		if n >= 8 {
			cx = x + dx*n/2
			break
		}
	}
	if cx < 0 {
		return nil, fmt.Errorf("no run of 8 identical tinted pixels on row %d", y)
	}
	smooth := func(a, c color.RGBA) bool { return levels(a, c) <= 8 }
	top, bottom := y, y
	for top > b.Min.Y && smooth(at(cx, top-1), at(cx, top)) {
		top--
	}
	for bottom < b.Max.Y-1 && smooth(at(cx, bottom+1), at(cx, bottom)) {
		bottom++
	}
	if bottom-top < 100 {
		return nil, fmt.Errorf("the bar at column %d, row %d spans rows %d–%d only", cx, y, top, bottom)
	}
	var out []color.RGBA
	for yy := top; yy <= bottom; yy++ {
		out = append(out, at(cx, yy))
	}
	return out, nil
}

// levels is the largest difference of one channel between a and c.
func levels(a, c color.RGBA) int {
	d := 0
	for _, p := range [][2]uint8{{a.R, c.R}, {a.G, c.G}, {a.B, c.B}} {
		d = max(d, abs(int(p[0])-int(p[1])))
	}
	return d
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// farthest returns the colour of a farthest (in levels) from every colour
// of b, and that distance.
func farthest(a, b []color.RGBA) (int, color.RGBA) {
	worst, which := -1, color.RGBA{}
	for _, c := range a {
		best := 256
		for _, d := range b {
			best = min(best, levels(c, d))
		}
		if best > worst {
			worst, which = best, c
		}
	}
	return worst, which
}
