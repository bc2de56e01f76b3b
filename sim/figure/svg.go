package figure

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image/color"
	"io"
	"strconv"
)

// svgPainter writes SVG 1.1 text: one <polygon> per mesh element inside a
// group clipped to the map, and one <use> per periodic copy of an element
// that crosses the domain's edge. The map group asks for crisp edges:
// with edge smoothing, viewers leave faint seams between neighbours.
type svgPainter struct {
	l       *Layout
	b       bytes.Buffer
	pending bytes.Buffer // the last polygon, written once we know whether it has copies
	pid     int
	pcopies []string
	num     []byte
}

func newSVG(l *Layout) *svgPainter {
	s := &svgPainter{l: l, pid: -1}
	fmt.Fprintf(&s.b, `<?xml version="1.0" encoding="UTF-8"?>`+"\n")
	fmt.Fprintf(&s.b, `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="%d" height="%d" viewBox="0 0 %d %d">`+"\n",
		l.Width, l.Height, l.Width, l.Height)
	fmt.Fprintf(&s.b, `<rect width="%d" height="%d" fill="#ffffff"/>`+"\n", l.Width, l.Height)
	m := l.Map
	fmt.Fprintf(&s.b, `<defs><clipPath id="map"><rect x="%s" y="%s" width="%s" height="%s"/></clipPath></defs>`+"\n",
		s.f(m.X0), s.f(m.Y0), s.f(m.X1-m.X0), s.f(m.Y1-m.Y0))
	fmt.Fprintf(&s.b, `<g clip-path="url(#map)" shape-rendering="crispEdges">`+"\n")
	return s
}

// f formats a coordinate with one decimal, trimmed: a tenth of a pixel
// is finer than any viewer shows, and files of large meshes stay small.
func (s *svgPainter) f(v float64) string {
	s.num = strconv.AppendFloat(s.num[:0], v, 'f', 1, 64)
	n := s.num
	for len(n) > 0 && n[len(n)-1] == '0' {
		n = n[:len(n)-1]
	}
	if len(n) > 0 && n[len(n)-1] == '.' {
		n = n[:len(n)-1]
	}
	if string(n) == "-0" {
		return "0"
	}
	return string(n)
}

func hex(c color.RGBA) string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

func (s *svgPainter) flush() {
	if s.pid < 0 {
		return
	}
	if len(s.pcopies) > 0 {
		fmt.Fprintf(&s.b, `<polygon id="p%d"`, s.pid)
	} else {
		s.b.WriteString(`<polygon`)
	}
	s.b.Write(s.pending.Bytes())
	for _, c := range s.pcopies {
		s.b.WriteString(c)
	}
	s.pending.Reset()
	s.pcopies = s.pcopies[:0]
	s.pid = -1
}

func (s *svgPainter) polygon(id int, pts []pt, c color.RGBA) {
	s.flush()
	s.pid = id
	s.pending.WriteString(` points="`)
	for k, q := range pts {
		if k > 0 {
			s.pending.WriteByte(' ')
		}
		s.pending.WriteString(s.f(q.x))
		s.pending.WriteByte(',')
		s.pending.WriteString(s.f(q.y))
	}
	fmt.Fprintf(&s.pending, `" fill="%s"/>`+"\n", hex(c))
}

func (s *svgPainter) copyOf(id int, _ []pt, dx, dy float64, _ color.RGBA) {
	s.pcopies = append(s.pcopies, fmt.Sprintf(`<use xlink:href="#p%d" x="%s" y="%s"/>`+"\n", id, s.f(dx), s.f(dy)))
}

func (s *svgPainter) endMap() {
	s.flush()
	s.b.WriteString("</g>\n")
}

func (s *svgPainter) rect(q Rect, c color.RGBA) {
	fmt.Fprintf(&s.b, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"/>`+"\n",
		s.f(q.X0), s.f(q.Y0), s.f(q.X1-q.X0), s.f(q.Y1-q.Y0), hex(c))
}

func (s *svgPainter) text(x, y float64, str string, size float64, anchor int, c color.RGBA) {
	a := map[int]string{-1: "start", 0: "middle", 1: "end"}[anchor]
	fmt.Fprintf(&s.b, `<text x="%s" y="%s" font-family="Liberation Sans, sans-serif" font-size="%s" text-anchor="%s" fill="%s">`,
		s.f(x), s.f(y), s.f(size), a, hex(c))
	xml.EscapeText(&s.b, []byte(str))
	s.b.WriteString("</text>\n")
}

func (s *svgPainter) finish(w io.Writer) error {
	s.b.WriteString("</svg>\n")
	if _, err := w.Write(s.b.Bytes()); err != nil {
		return fmt.Errorf("svg: %w", err)
	}
	return nil
}
