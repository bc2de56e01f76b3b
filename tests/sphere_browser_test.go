package tests

import (
	"context"
	"strconv"
	"testing"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
)

// dragAcross drags the mouse from the middle of canvas (a JavaScript
// expression) by (dx, dy) CSS pixels in eight moves, as a user turns a
// globe.
func dragAcross(t testing.TB, ctx context.Context, canvas string, dx, dy float64) {
	t.Helper()
	box := eval[[]float64](t, ctx, `(() => { const r = `+canvas+`.getBoundingClientRect(); return [r.left, r.top, r.width, r.height]; })()`)
	x, y := box[0]+box[2]/2, box[1]+box[3]/2
	drag := []chromedp.Action[chromedp.Void]{chromedp.MouseEvent(chromedp.MousePressed, x, y, chromedp.ButtonType("left"))}
	for k := 1; k <= 8; k++ {
		drag = append(drag, chromedp.MouseEvent(chromedp.MouseMoved, x+float64(k)*dx/8, y+float64(k)*dy/8, chromedp.ButtonType("left")))
	}
	drag = append(drag, chromedp.MouseEvent(chromedp.MouseReleased, x+dx, y+dy, chromedp.ButtonType("left")))
	do(t, ctx, drag...)
}

// TestSphereBrowser drives the sphere in headless Chromium: load a sphere
// scenario from the menu, see the globe, turn it by a drag, switch to the
// longitude–latitude map, and see the Δt warning appear before a run is
// pushed past its predicted stable limit.
func TestSphereBrowser(t *testing.T) {
	ctx := browser(t)
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "small-hex", smallHex)})
	const wait = hang
	canvas := role("field-canvas")

	do(t, ctx, chromedp.Navigate(base+"/"))
	eval[chromedp.Void](t, ctx, `localStorage.removeItem('gyrebench.projection')`)
	poll(t, ctx, "the first frame", canvas+`.dataset.frames > 0 && `+canvas+`.dataset.projection === 'plane'`, wait)

	// The planar run's linear panel: the prediction beside Δt and the
	// dispersion diagram of the hex grid, with its spurious branch.
	poll(t, ctx, "the stable-Δt prediction", role("dt-stable")+`.dataset.state === 'ready' && `+role("dt-stable")+`.dataset.seconds > 0`, wait)
	poll(t, ctx, "the dispersion diagram", role("dispersion-plot")+`.dataset.points > 100 && document.querySelector('[data-role="dispersion-legend"] [data-class="spurious"]') !== null`, analysisHang)
	screenshot(t, ctx, "", "sphere-01-plane-panel.png")

	// A run opened from a file shows the file's scenario in the menu, as
	// an entry of its own that cannot be loaded like a built-in.
	sc := role("scenario-select")
	if got := eval[string](t, ctx, sc+`.selectedOptions[0].textContent + '|' + `+sc+`.selectedOptions[0].disabled`); got != "small-hex (from a file)|true" {
		t.Errorf("scenario menu of a run opened from a file shows %q, want the file's name, disabled", got)
	}

	// Load the sphere: the file's entry goes.
	choose(t, ctx, "scenario-select", "williamson-6")
	do(t, ctx, chromedp.Click(sel("load-scenario")))
	poll(t, ctx, "the globe", canvas+`.dataset.drawn === 'globe' && `+canvas+`.dataset.grid === 'icosahedral 5' && !`+role("projection")+`.hidden`, wait)
	if eval[bool](t, ctx, sc+`.querySelector('option[data-file]') !== null`) || eval[string](t, ctx, sc+`.value`) != "williamson-6" {
		t.Errorf("after loading williamson-6 the menu shows %q and still has the file's entry", eval[string](t, ctx, sc+`.value`))
	}
	if got := eval[string](t, ctx, role("resolution-label")+`.textContent`); got != "Refinement level n" {
		t.Errorf("resolution label on the sphere = %q", got)
	}
	globe := screenshot(t, ctx, sel("field-canvas"), "sphere-02-globe.png")

	// Turn the globe by a drag across its middle.
	frames := eval[string](t, ctx, canvas+`.dataset.frames`)
	dragAcross(t, ctx, canvas, 160, -48)
	poll(t, ctx, "a redraw after the drag", canvas+`.dataset.frames > `+frames, wait)
	turned := screenshot(t, ctx, sel("field-canvas"), "sphere-03-globe-turned.png")
	mustDiffer(t, globe, turned, 0.1, "turning the globe")

	// The longitude–latitude map.
	lonlat := project(t, ctx, canvas, "lonlat", "the map", "sphere-04-lonlat.png", wait)
	mustDiffer(t, turned, lonlat, 0.1, "going from the globe to the map")

	// A coarser level: the map's polar bands and the cell outlines show.
	typeInto(t, ctx, "resolution-input", "3")
	poll(t, ctx, "level 3", canvas+`.dataset.grid === 'icosahedral 3' && `+canvas+`.dataset.drawn === 'lonlat'`, wait)
	level3 := screenshot(t, ctx, sel("field-canvas"), "sphere-05-lonlat-level3.png")
	// The same level, not relaxed (williamson-6 is on a Lloyd grid): the
	// generators move back to the bisected icosahedron's, the cells change.
	if eval[bool](t, ctx, role("optimize")+`.hidden`) || eval[string](t, ctx, role("optimize-select")+`.value`) != "lloyd" {
		t.Errorf("on the Lloyd sphere the generator control is hidden %v, reads %q; want shown, lloyd",
			eval[bool](t, ctx, role("optimize")+`.hidden`), eval[string](t, ctx, role("optimize-select")+`.value`))
	}
	choose(t, ctx, "optimize-select", "none")
	poll(t, ctx, "the bisected grid", canvas+`.dataset.optimize === 'none' && `+canvas+`.dataset.grid === 'icosahedral 3' && `+canvas+`.dataset.drawn === 'lonlat'`, wait)
	bisected := screenshot(t, ctx, sel("field-canvas"), "sphere-05b-lonlat-level3-bisected.png")
	mustDiffer(t, level3, bisected, 0.01, "undoing the Lloyd relaxation of level 3")
	choose(t, ctx, "optimize-select", "lloyd")
	poll(t, ctx, "the Lloyd grid again", canvas+`.dataset.optimize === 'lloyd'`, wait)
	choose(t, ctx, "field-select", "vorticity")
	poll(t, ctx, "vorticity on the map", canvas+`.dataset.field === 'vorticity'`, wait)
	screenshot(t, ctx, sel("field-canvas"), "sphere-06-lonlat-level3-vorticity.png")
	project(t, ctx, canvas, "globe", "the globe again", "sphere-07-globe-level3-vorticity.png", wait)
	poll(t, ctx, "the sphere's dispersion diagram", role("dispersion-caption")+`.dataset.state === 'ready' && `+role("dispersion-plot")+`.dataset.points > 100`, analysisHang)
	eval[chromedp.Void](t, ctx, `document.querySelector('fieldset.linear').scrollIntoView()`)
	screenshot(t, ctx, "", "sphere-08-linear-panel.png")
	eval[chromedp.Void](t, ctx, role("play-pause")+`.scrollIntoView()`)

	// The Δt warning: the prediction for this flow (8 km deep, 100 m/s
	// winds) is below the hard limit; a Δt between them is accepted with a
	// warning beside the control.
	poll(t, ctx, "the prediction on the sphere", role("dt-stable")+`.dataset.state === 'ready' && `+role("dt-stable")+`.dataset.guide > 0`, wait)
	guide := eval[float64](t, ctx, `Number(`+role("dt-stable")+`.dataset.guide)`)
	if !eval[bool](t, ctx, role("dt-warning")+`.hidden`) {
		t.Errorf("a warning at the scenario's own Δt (%s s, guide %g s): %q", eval[string](t, ctx, role("dt-input")+`.value`), guide, eval[string](t, ctx, role("dt-warning")+`.textContent`))
	}
	over := strconv.FormatFloat(float64(int(1.4*guide)), 'f', -1, 64)
	// While typing, before anything is sent, the field is already warned about.
	eval[chromedp.Void](t, ctx, `(() => { const s = `+role("dt-input")+`; s.focus(); s.value = '`+over+`'; s.dispatchEvent(new Event('input', {bubbles: true})); })()`)
	poll(t, ctx, "the warning while typing", `!`+role("dt-warning")+`.hidden && `+role("dt-warning")+`.textContent.includes('would be past')`, wait)
	typeInto(t, ctx, "dt-input", over)
	poll(t, ctx, "the run to take Δt = "+over, role("dt-input")+`.value === '`+over+`'`, wait)
	poll(t, ctx, "the Δt warning", `!`+role("dt-warning")+`.hidden && `+role("dt-warning")+`.textContent.includes('stable')`, wait)
	if m := eval[string](t, ctx, role("message")+`.className`); m == "message error" && !eval[bool](t, ctx, role("message")+`.hidden`) {
		t.Errorf("Δt past the prediction was refused: %q", eval[string](t, ctx, role("message")+`.textContent`))
	}
	screenshot(t, ctx, "", "sphere-09-dt-warning.png")

	// Back below the limit: the warning goes.
	typeInto(t, ctx, "dt-input", "300")
	poll(t, ctx, "the warning to go", role("dt-warning")+`.hidden && `+role("dt-input")+`.value === '300'`, wait)

	// And back to the plane by loading a planar scenario.
	choose(t, ctx, "scenario-select", "dipole")
	do(t, ctx, chromedp.Click(sel("load-scenario")))
	poll(t, ctx, "the plane again", canvas+`.dataset.drawn === 'plane' && `+role("projection")+`.hidden && `+role("optimize")+`.hidden && `+role("resolution-label")+`.textContent === 'Cells per side n'`, wait)
	screenshot(t, ctx, "", "sphere-10-plane-again.png")
}
