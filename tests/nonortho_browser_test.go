package tests

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"io"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
)

// setN puts a resolution in the field without committing it, so that the
// next grid-menu change sends it with the family.
func setN(t *testing.T, ctx context.Context, n string) {
	t.Helper()
	eval[chromedp.Void](t, ctx, role("resolution-input")+`.value = '`+n+`'`)
}

// TestCubedBrowser drives the cubed sphere in headless Chromium: a
// running Williamson case 2 on icosahedral level 5 is switched to the
// cubed sphere n = 48 from the grid menu and back; the globe draws the
// cubed sphere's quadrilaterals; the structure panel follows the grid and
// the Hodge-star menu (the diagonal H on the cubed sphere: energy
// conserving yes, consistent no); the server's series keeps the mass to
// 1e-12 across both remaps, and its markers show the switches.
func TestCubedBrowser(t *testing.T) {
	ctx := browser(t)
	srv, base := startServer(t, server.Options{Workers: 1, Scenario: "williamson-2"})
	const wait = 120 * time.Second // hang guards only
	canvas := role("field-canvas")
	panel := role("structure-panel")

	do(t, ctx, chromedp.Navigate(base+"/"))
	eval[chromedp.Void](t, ctx, `localStorage.removeItem('gyrebench.projection')`)
	poll(t, ctx, "the globe of level 5", canvas+`.dataset.frames > 0 && `+canvas+`.dataset.drawn === 'globe' && `+canvas+`.dataset.grid === 'icosahedral 5'`, wait)
	if got := eval[string](t, ctx, canvas+`.dataset.cellCorners`); got != "5–6" {
		t.Errorf("icosahedral cells have %q corners, want 5–6", got)
	}
	poll(t, ctx, "the structure report of level 5", panel+`.dataset.state === 'ready' && `+panel+`.dataset.grid === 'icosahedral level 5'`, analysisHang)
	if eval[string](t, ctx, role("hodge-hint")+`.dataset.orthogonal`) != "true" || eval[string](t, ctx, panel+`.dataset.energyConserving`) != "yes" {
		t.Errorf("level 5: hint says orthogonal %q, energy conserving %q; want true, yes",
			eval[string](t, ctx, role("hodge-hint")+`.dataset.orthogonal`), eval[string](t, ctx, panel+`.dataset.energyConserving`))
	}

	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the run to be running", role("run-state")+`.textContent === 'running'`, wait)
	poll(t, ctx, "simulated time to advance", role("sim-time")+`.dataset.seconds > 3600`, wait)

	// To the cubed sphere, n = 48, while running.
	setN(t, ctx, "48")
	choose(t, ctx, "grid-select", "cubed")
	poll(t, ctx, "the cubed grid", canvas+`.dataset.grid === 'cubed 48' || !`+role("message")+`.hidden`, wait)
	t.Logf("after the switch: grid %q, drawn %q, corners %q, message %q", eval[string](t, ctx, canvas+`.dataset.grid`), eval[string](t, ctx, canvas+`.dataset.drawn`),
		eval[string](t, ctx, canvas+`.dataset.cellCorners`), eval[string](t, ctx, role("message")+`.textContent`))
	poll(t, ctx, "the cubed globe", canvas+`.dataset.grid === 'cubed 48' && `+canvas+`.dataset.drawn === 'globe' && `+canvas+`.dataset.cellCorners === '4'`, wait)
	if got := eval[string](t, ctx, role("resolution-label")+`.textContent`); got != "Cells per cube edge n" {
		t.Errorf("resolution label on the cubed sphere = %q", got)
	}
	if !eval[bool](t, ctx, role("optimize")+`.hidden`) {
		t.Error("the icosahedral generator control is shown on the cubed sphere")
	}
	if got := eval[string](t, ctx, role("grid-hint")+`.textContent`); !strings.Contains(got, "13824 cells (6n²)") {
		t.Errorf("grid hint on cubed n = 48: %q", got)
	}
	poll(t, ctx, "frames on the cubed sphere", canvas+`.dataset.frames > 3`, wait)
	screenshot(t, ctx, sel("field-canvas"), "cubed-01-globe-n48.png")
	poll(t, ctx, "the structure report of cubed n = 48", panel+`.dataset.state === 'ready' && `+panel+`.dataset.grid === 'cubed n = 48' && `+panel+`.dataset.hodge === 'consistent'`, analysisHang)
	if eval[string](t, ctx, role("hodge-hint")+`.dataset.orthogonal`) != "false" {
		t.Error("the Hodge hint on the cubed sphere says its dual is orthogonal")
	}
	if c := eval[string](t, ctx, panel+`.dataset.energyConserving + ' ' + `+panel+`.dataset.consistent`); c != "yes yes" {
		t.Errorf("cubed n = 48, consistent H: energy conserving, consistent = %q; want yes yes", c)
	}

	// The figures draw the cubed sphere's cells: quadrilaterals.
	writeArtifact(t, "cubed-04-figure-n48.png", get(t, base+"/run/1/figure.png"))
	svg := get(t, base+"/run/1/figure.svg")
	writeArtifact(t, "cubed-05-figure-n48.svg", svg)
	if polys, quads := svgQuads(t, svg); polys < 6*48*48 || float64(quads) < 0.95*float64(polys) {
		t.Errorf("figure.svg of cubed n = 48: %d polygons, %d with four corners; want at least %d, nearly all quadrilaterals", polys, quads, 6*48*48)
	} else {
		t.Logf("figure.svg of cubed n = 48: %d polygons, %d of them quadrilaterals", polys, quads)
	}

	// The diagonal Hodge star: still energy conserving, no longer consistent.
	choose(t, ctx, "hodge-select", "diagonal")
	poll(t, ctx, "the structure report with the diagonal H", panel+`.dataset.state === 'ready' && `+panel+`.dataset.grid === 'cubed n = 48' && `+panel+`.dataset.hodge === 'diagonal'`, analysisHang)
	verdicts := eval[string](t, ctx, role("structure-verdicts")+`.textContent`)
	if !strings.Contains(verdicts, "energy conserving: yes") || !strings.Contains(verdicts, "consistent: no") {
		t.Errorf("structure verdicts with the diagonal H on cubed n = 48: %q; want energy conserving: yes, consistent: no", verdicts)
	}
	eval[chromedp.Void](t, ctx, `document.querySelector('fieldset.structure').scrollIntoView()`)
	screenshot(t, ctx, "", "cubed-02-structure-panel-diagonal.png")
	eval[chromedp.Void](t, ctx, role("play-pause")+`.scrollIntoView()`)
	project(t, ctx, canvas, "lonlat", "the cubed map", "cubed-03-lonlat-n48.png", wait)
	choose(t, ctx, "projection-select", "globe")

	// Back to icosahedral level 5 (Lloyd-relaxed, as the scenario's).
	setN(t, ctx, "5")
	choose(t, ctx, "grid-select", "icosahedral")
	poll(t, ctx, "level 5 again", canvas+`.dataset.grid === 'icosahedral 5' && `+canvas+`.dataset.cellCorners === '5–6'`, wait)
	poll(t, ctx, "the run to go on", role("sim-time")+`.dataset.seconds > 0 && `+role("run-state")+`.textContent === 'running'`, wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the run to pause", role("run-state")+`.textContent === 'paused'`, wait)

	// The server's series, as a new watcher receives it.
	cl := dial(t, base, "1")
	var hist msg
	cl.until(wait, "the history", func(m msg) bool { hist = m; return m.Type == "history" })
	worst := 0.0
	for _, p := range hist.Points {
		if p.Mass == nil {
			t.Fatal("a point of the series has no mass")
		}
		worst = max(worst, math.Abs(*p.Mass))
	}
	if worst > 1e-12 || len(hist.Points) < 3 {
		t.Errorf("series of %d points: largest relative mass drift %.3g, want ≤ 1e-12", len(hist.Points), worst)
	}
	var labels []string
	for _, m := range hist.Markers {
		labels = append(labels, m.Label)
	}
	want := "grid: cubed n = 48 | Hodge star: diagonal | grid: icosahedral level 5"
	if got := strings.Join(labels, " | "); !strings.Contains(got, want) {
		t.Errorf("markers %q, want %q", got, want)
	}
	// A coarse cubed sphere, where the quadrilaterals show on the map.
	setN(t, ctx, "6")
	choose(t, ctx, "grid-select", "cubed")
	poll(t, ctx, "cubed n = 6", canvas+`.dataset.grid === 'cubed 6' && `+canvas+`.dataset.cellCorners === '4'`, wait)
	project(t, ctx, canvas, "lonlat", "the map of cubed n = 6", "cubed-06-lonlat-n6.png", wait)
	project(t, ctx, canvas, "globe", "the globe of cubed n = 6", "cubed-07-globe-n6.png", wait)

	in := srv.Run("1").Info()
	t.Logf("at t = %.0f s (step %d): largest relative mass drift %.2e over %d points; markers %q", in.Time, in.Steps, worst, len(hist.Points), labels)
}

// svgQuads counts the polygons of an SVG figure and those with four
// corners.
func svgQuads(t *testing.T, b []byte) (polys, quads int) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			return polys, quads
		}
		if err != nil {
			t.Fatalf("figure.svg: %v", err)
		}
		se, ok := tok.(xml.StartElement)
		if !ok || se.Name.Local != "polygon" {
			continue
		}
		polys++
		for _, a := range se.Attr {
			if a.Name.Local == "points" && len(strings.Fields(strings.ReplaceAll(a.Value, ",", " "))) == 8 {
				quads++
			}
		}
	}
}
