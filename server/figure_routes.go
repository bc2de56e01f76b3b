package server

import (
	"bytes"
	"context"
	"fmt"
	"net/http"
	"net/url"
	"strconv"
	"strings"

	"gyrebench/sim/display"
	"gyrebench/sim/figure"
)

// Figures for slides: GET /run/{id}/figure.png and /run/{id}/figure.svg
// render the run's displayed field (or ?field=NAME) as it is now, with a
// colour bar and a title naming the run's choices and simulated time
// (figure.Title), on the server with package sim/figure, so that a figure
// does not depend on the browser. ?width= and ?height= set the size in
// pixels (default defaultFigureW × defaultFigureH). The sphere is drawn as
// a longitude–latitude map.

const (
	defaultFigureW, defaultFigureH = 1600, 900
	// maxFigureSide bounds a live figure below figure.MaxSide: a
	// 4096 × 4096 PNG is 64 MB of pixels while it is painted.
	maxFigureSide = 4096
)

// figureSnap is what a figure needs from a run, copied on the run's
// goroutine; render draws it (the mesh is immutable and shared).
type figureSnap struct {
	def    display.Field
	vals   []float64
	title  string
	t      float64
	render func(w *bytes.Buffer, format string, loc figure.Location, opt figure.Options) error
}

// figureData copies field name ("" = the displayed one) of the run's
// current state on its goroutine.
func (r *Run) figureData(ctx context.Context, name string) (figureSnap, error) {
	var snap figureSnap
	var err error
	if !r.await(ctx, func() {
		v := r.v
		def := v.field
		if name != "" {
			if def, err = display.LookupField(name); err != nil {
				return
			}
		}
		m := v.s.Model()
		msh, vals := m.Mesh(), append([]float64(nil), v.scratch.Values(def, m)...)
		snap = figureSnap{def: def, vals: vals, title: figure.Title(m.Config(), m.Time()), t: m.Time(),
			render: func(w *bytes.Buffer, format string, loc figure.Location, opt figure.Options) error {
				return figure.Render(w, format, msh, vals, loc, opt)
			}}
	}) {
		return figureSnap{}, fmt.Errorf("run %s has stopped", r.id)
	}
	return snap, err
}

// figureSize reads a size parameter: absent means def.
func figureSize(q url.Values, key string, def, lo int) (int, error) {
	s := strings.TrimSpace(q.Get(key))
	if s == "" {
		return def, nil
	}
	v, err := strconv.Atoi(s)
	if err != nil || v < lo || v > maxFigureSide {
		return 0, fmt.Errorf("%s = %q: allowed a whole number of pixels from %d to %d", key, s, lo, maxFigureSide)
	}
	return v, nil
}

func (s *Server) serveFigure(format string) http.HandlerFunc {
	return func(w http.ResponseWriter, req *http.Request) {
		run, id := s.runOf(w, req)
		if run == nil {
			return
		}
		q := req.URL.Query()
		for k := range q {
			if k != "width" && k != "height" && k != "field" {
				http.Error(w, fmt.Sprintf("%s: unknown parameter; allowed: width, height, field", k), http.StatusBadRequest)
				return
			}
		}
		width, err := figureSize(q, "width", defaultFigureW, figure.MinWidth)
		if err != nil {
			http.Error(w, err.Error(), http.StatusBadRequest)
			return
		}
		height, err := figureSize(q, "height", defaultFigureH, figure.MinHeight)
		if err != nil {
			http.Error(w, err.Error(), http.StatusBadRequest)
			return
		}
		snap, err := run.figureData(req.Context(), q.Get("field"))
		if err != nil {
			http.Error(w, err.Error(), http.StatusBadRequest)
			return
		}
		loc := figure.Face
		if snap.def.Loc == display.OnVertices {
			loc = figure.Node
		}
		signed := snap.def.Map == "diverging" || snap.def.Map == "auto" && figure.StraddlesZero(snap.vals)
		var b bytes.Buffer
		err = snap.render(&b, format, loc, figure.Options{
			Title: snap.title, Label: snap.def.Label, Units: figure.PlainUnits(snap.def.Units),
			Signed: signed, Width: width, Height: height,
		})
		if err != nil {
			http.Error(w, "rendering the figure: "+err.Error(), http.StatusInternalServerError)
			return
		}
		h := w.Header()
		if format == "png" {
			h.Set("Content-Type", "image/png")
		} else {
			h.Set("Content-Type", "image/svg+xml; charset=utf-8")
		}
		h.Set("Cache-Control", "no-store")
		h.Set("Content-Disposition", fmt.Sprintf(`inline; filename="gyrebench-run%s-%s-%s.%s"`, id, snap.def.Name, strings.ReplaceAll(figure.SimTime(snap.t), " ", ""), format))
		_, _ = w.Write(b.Bytes())
	}
}
