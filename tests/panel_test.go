package tests

import (
	"bytes"
	"context"
	"encoding/json"
	"encoding/xml"
	"errors"
	"image/png"
	"io"
	"math"
	"net/http"
	"strings"
	"testing"
	"time"

	"github.com/coder/websocket"

	"gyrebench/server"
	"gyrebench/sim/linear"
	"gyrebench/sim/scenario"
)

// quadBump is a quad f-plane run at rest apart from a small bump, so that
// the flow's depth and speed are those of the linearisation: the guide
// equals the prediction.
var quadBump = fPlaneScenario("test: quad bump", "quad", 32, "1.0e6", "rk3", "60.0", "86400.0", `case = "gaussian-bump"
amplitude = 1.0
`)

// stability is the message "stability" (server/linear_panel.go).
type stability struct {
	Type       string             `json:"type"`
	State      string             `json:"state"`
	Integrator string             `json:"integrator"`
	Dt         float64            `json:"dt"`
	DtStable   float64            `json:"dt_stable"`
	DtGuide    float64            `json:"dt_guide"`
	Limits     map[string]float64 `json:"limits"`
	Courant    float64            `json:"courant"`
	Message    string             `json:"message"`
}

// dispersion is the message "dispersion".
type dispersion struct {
	Type    string         `json:"type"`
	State   string         `json:"state"`
	Grid    string         `json:"grid"`
	Copy    bool           `json:"copy"`
	Dx      float64        `json:"dx"`
	F       float64        `json:"f"`
	G       float64        `json:"g"`
	Depth   float64        `json:"depth"`
	Counts  map[string]int `json:"counts"`
	Growing int            `json:"growing"`
	Classes []string       `json:"classes"`
	K       []float64      `json:"k"`
	W       []float64      `json:"w"`
	Class   []int          `json:"class"`
	Message string         `json:"message"`
}

// rawJSON is a text message kept whole, for the message types the shared
// client does not decode.
type rawJSON struct {
	Type string `json:"type"`
	ID   int64  `json:"id"`
}

// TestLinearPanel: the run's stable-Δt prediction is linear.StableDt of its
// config, exactly; a Δt past it is accepted with a warning; and the
// dispersion diagram of the quad grid has the C-grid's mode counts and
// frequencies below the continuous relation.
func TestLinearPanel(t *testing.T) {
	path := writeScenario(t, "quad-bump", quadBump)
	sc, err := scenario.Parse([]byte(quadBump), "quad-bump")
	if err != nil {
		t.Fatal(err)
	}
	_, base := startServer(t, server.Options{Workers: 1, Scenario: path})
	raw := dialRawJSON(t, base, "1")
	cl := dial(t, base, "1")
	cl.mustAck("linear", nil, nil)

	st := raw.waitStability(t, func(s stability) bool { return s.State == "ready" && s.Integrator == "rk3" })
	ctx := context.Background()
	for _, in := range []string{"rk3", "rk4", "leapfrog", "euler"} {
		want, err := linear.StableDt(ctx, sc.Config, in)
		if err != nil {
			t.Fatal(err)
		}
		if got := st.Limits[in]; got != want {
			t.Errorf("predicted stable Δt for %s = %.17g s, linear.StableDt = %.17g s", in, got, want)
		}
	}
	if st.DtStable != st.Limits["rk3"] || st.DtGuide != st.DtStable {
		t.Errorf("rk3 run: dt_stable %g, dt_guide %g, limits[rk3] %g; want all equal (flow at rest, depth H)", st.DtStable, st.DtGuide, st.Limits["rk3"])
	}
	if st.Limits["euler"] != 0 {
		t.Errorf("euler limit %g, want 0 (unstable for every Δt)", st.Limits["euler"])
	}

	// Past the prediction: accepted, with a warning before the ack.
	over := 1.2 * st.DtStable
	var warned *msg
	r := cl.reply(cl.send("set-dt", over), func(m msg) {
		if m.Type == "warning" {
			warned = &m
		}
	})
	if r.Type != "ack" {
		t.Fatalf("set-dt %g (1.2 × the predicted limit, below the hard limit): %s %q, want it accepted", over, r.Type, r.Message)
	}
	if warned == nil || warned.ID != r.ID || warned.fieldName() != "time.dt" || !strings.Contains(warned.Message, "stable") {
		t.Errorf("set-dt past the limit: warning %+v, want one for time.dt with the command's id", warned)
	}
	st = raw.waitStability(t, func(s stability) bool { return s.State == "ready" && s.Dt == over })
	if st.Dt <= st.DtGuide {
		t.Errorf("stability after set-dt %g: dt %g ≤ guide %g", over, st.Dt, st.DtGuide)
	}
	// Below it: no warning. An integrator that no Δt suits: a warning.
	for _, c := range []struct {
		cmd  string
		v    any
		warn bool
	}{
		{"set-dt", 0.5 * st.DtStable, false},
		{"set-integrator", "euler", true},
		{"set-integrator", "rk4", false},
	} {
		warned = nil
		r := cl.reply(cl.send(c.cmd, c.v), func(m msg) {
			if m.Type == "warning" {
				warned = &m
			}
		})
		if r.Type != "ack" || (warned != nil) != c.warn {
			t.Errorf("%s %v: reply %s %q, warning %v; want ack, warning %v", c.cmd, c.v, r.Type, r.Message, warned != nil, c.warn)
		}
	}

	// The dispersion diagram: a 16 × 16 copy with the run's cell size.
	// The C-grid on the f-plane has one geostrophic and two inertia–gravity
	// modes per wavevector (sim/linear package documentation; Arakawa &
	// Lamb 1977), so N_c = 256 and 2N_c = 512, no spurious mode, none
	// growing; and since sin(x)/x ≤ 1 and cos ≤ 1 in the C-grid relation
	// (linear.QuadCGrid), no discrete frequency exceeds the continuous
	// ω² = f² + gH|k|² at its wavevector.
	d := raw.waitDispersion(t)
	if d.Grid != "quad n = 16" || !d.Copy || math.Abs(d.Dx-1e6/32) > 1e-6 {
		t.Errorf("dispersion of %q (copy %v, Δx %g m), want quad n = 16 with the run's Δx = 31250 m", d.Grid, d.Copy, d.Dx)
	}
	if d.Counts["geostrophic"] != 256 || d.Counts["inertia_gravity"] != 512 || d.Counts["spurious"] != 0 || d.Growing != 0 {
		t.Errorf("mode counts %v, %d growing; want 256 geostrophic, 512 inertia–gravity, none spurious or growing", d.Counts, d.Growing)
	}
	if len(d.K) != len(d.W) || len(d.W) != len(d.Class) || len(d.W) != 256+256 {
		t.Fatalf("dispersion points: %d k, %d ω, %d classes; want 512 (ω ≥ 0)", len(d.K), len(d.W), len(d.Class))
	}
	above := 0
	for i, w := range d.W {
		if d.Classes[d.Class[i]] != "inertia_gravity" {
			continue
		}
		cont := math.Sqrt(d.F*d.F + d.G*d.Depth*d.K[i]*d.K[i])
		if w > cont*(1+1e-9) {
			above++
		}
	}
	if above > 0 {
		t.Errorf("%d inertia–gravity modes faster than the continuous relation at their wavevector", above)
	}
}

// rawClient reads the text messages of a run whole.
type rawClient struct {
	in chan []byte
}

// dialRawJSON connects a watcher of run id that keeps every text message
// as it came (the shared client decodes into msg, which drops the fields of
// the linear panel's messages).
func dialRawJSON(t *testing.T, base, id string) *rawClient {
	t.Helper()
	c, ctx := dialWS(t, base, "/run/"+id+"/ws")
	rc := &rawClient{in: make(chan []byte, 1<<12)}
	go func() {
		defer close(rc.in)
		for {
			typ, b, err := c.Read(ctx)
			if err != nil {
				return
			}
			if typ == websocket.MessageText {
				select {
				case rc.in <- b:
				case <-ctx.Done():
					return
				}
			}
		}
	}()
	return rc
}

func (rc *rawClient) next(t *testing.T, typ string, d time.Duration) []byte {
	t.Helper()
	deadline := time.After(d)
	for {
		select {
		case b, ok := <-rc.in:
			if !ok {
				t.Fatalf("connection closed while waiting for %s", typ)
			}
			var h rawJSON
			if json.Unmarshal(b, &h) == nil && h.Type == typ {
				return b
			}
		case <-deadline:
			t.Fatalf("no %s message within %v", typ, d)
		}
	}
}

func (rc *rawClient) waitStability(t *testing.T, ok func(stability) bool) stability {
	t.Helper()
	for {
		var s stability
		if err := json.Unmarshal(rc.next(t, "stability", analysisHang), &s); err != nil {
			t.Fatal(err)
		}
		if s.State == "failed" {
			t.Fatalf("stability analysis failed: %s", s.Message)
		}
		if ok(s) {
			return s
		}
	}
}

func (rc *rawClient) waitDispersion(t *testing.T) dispersion {
	t.Helper()
	for {
		var d dispersion
		if err := json.Unmarshal(rc.next(t, "dispersion", analysisHang), &d); err != nil {
			t.Fatal(err)
		}
		switch d.State {
		case "failed":
			t.Fatalf("dispersion analysis failed: %s", d.Message)
		case "ready":
			return d
		}
	}
}

// TestFigure: the figure endpoints draw the displayed field as a PNG of
// the requested size and as SVG, on the plane and on the sphere; bad
// parameters get a message naming them.
func TestFigure(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "small-hex", smallHex)})
	request := func(path string) (*http.Response, []byte) {
		t.Helper()
		return httpGet(t, base+path)
	}
	check := func(what string) {
		t.Helper()
		resp, b := request("/run/1/figure.png?width=900&height=500")
		if resp.StatusCode != 200 || resp.Header.Get("Content-Type") != "image/png" {
			t.Fatalf("%s PNG: %s, %s: %s", what, resp.Status, resp.Header.Get("Content-Type"), b)
		}
		img, err := png.Decode(bytes.NewReader(b))
		if err != nil {
			t.Fatalf("%s PNG does not decode: %v", what, err)
		}
		if r := img.Bounds(); r.Dx() != 900 || r.Dy() != 500 {
			t.Errorf("%s PNG is %d × %d, asked for 900 × 500", what, r.Dx(), r.Dy())
		}
		resp, b = request("/run/1/figure.svg?field=vorticity")
		if resp.StatusCode != 200 || !strings.HasPrefix(resp.Header.Get("Content-Type"), "image/svg+xml") {
			t.Fatalf("%s SVG: %s, %s: %s", what, resp.Status, resp.Header.Get("Content-Type"), b)
		}
		polygons, root, err := parseSVG(b)
		if err != nil {
			t.Fatalf("%s SVG does not parse: %v", what, err)
		}
		if root != "svg" || polygons == 0 {
			t.Errorf("%s SVG: root <%s>, %d polygons", what, root, polygons)
		}
		writeArtifact(t, "figure-"+what+"-depth.png", get(t, base+"/run/1/figure.png"))
		writeArtifact(t, "figure-"+what+"-vorticity.png", get(t, base+"/run/1/figure.png?field=vorticity&width=1200&height=700"))
		writeArtifact(t, "figure-"+what+"-vorticity.svg", b)
	}
	check("plane")

	for _, c := range []struct{ query, says string }{
		{"width=50", "width"},
		{"height=99999", "height"},
		{"field=temperature", "temperature"},
		{"colour=red", "colour"},
	} {
		resp, b := request("/run/1/figure.png?" + c.query)
		if resp.StatusCode != http.StatusBadRequest || !strings.Contains(string(b), c.says) {
			t.Errorf("figure.png?%s: %s %q; want 400 naming %s", c.query, resp.Status, b, c.says)
		}
	}
	if resp, _ := request("/run/9/figure.png"); resp.StatusCode != http.StatusNotFound {
		t.Errorf("figure of a run that does not exist: %s", resp.Status)
	}

	cl := dial(t, base, "1")
	cl.mustAck("load", "williamson-6", nil)
	check("sphere")
}

// parseSVG decodes an SVG document and counts its polygons.
func parseSVG(b []byte) (polygons int, root string, err error) {
	dec := xml.NewDecoder(bytes.NewReader(b))
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			return polygons, root, nil
		}
		if err != nil {
			return 0, "", err
		}
		if se, ok := tok.(xml.StartElement); ok {
			if root == "" {
				root = se.Name.Local
			}
			if se.Name.Local == "polygon" {
				polygons++
			}
		}
	}
}
