package tests

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
)

// canvasStats returns, for a canvas, the fraction of its pixels that are
// not the colour of its top-left corner (the ground outside the globe's
// disc) and the standard deviation of their luminance (0 to 255).
func canvasStats(t testing.TB, ctx context.Context, canvas string) (covered, spread float64) {
	t.Helper()
	v := eval[[]float64](t, ctx, `((c) => {
		const w = c.width, h = c.height, d = c.getContext('2d').getImageData(0, 0, w, h).data;
		let n = 0, s = 0, s2 = 0;
		for (let i = 0; i < d.length; i += 4) {
			if (d[i] === d[0] && d[i + 1] === d[1] && d[i + 2] === d[2]) continue;
			const y = 0.299 * d[i] + 0.587 * d[i + 1] + 0.114 * d[i + 2];
			n++; s += y; s2 += y * y;
		}
		const m = s / Math.max(1, n);
		return [n / (w * h), Math.sqrt(Math.max(0, s2 / Math.max(1, n) - m * m))];
	})(`+canvas+`)`)
	return v[0], v[1]
}

// TestPairSphereBrowser starts a pair on the icosahedral sphere from the
// new-pair form (B with another scheme): A, B and A − B are drawn as
// globes, and turning one globe by a drag turns all three by the same
// rotation; the G key moves all three to the longitude–latitude map.
func TestPairSphereBrowser(t *testing.T) {
	ctx := browser(t)
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "sphere3", sphere3)})
	const wait = hang
	a, b, d := sideRole("field-canvas", "a"), sideRole("field-canvas", "b"), role("diff-canvas")
	views := map[string]string{"A": a, "B": b, "A − B": d}

	do(t, ctx, chromedp.Navigate(base+"/pairs/new?run=1"))
	poll(t, ctx, "the new-pair form", role("new-pair")+` !== null && `+role("pair-base")+`.value === 'run:1'`, wait)
	chooseSide(t, ctx, "scheme-select", "b", "trisk-enstrophy")
	navigate(t, ctx, "/pair/", chromedp.Click(sel("start-pair")))

	drawn := func(c, how string) string {
		return c + `.dataset.frames > 0 && ` + c + `.dataset.drawn === '` + how + `'`
	}
	poll(t, ctx, "A, B and A − B on globes", drawn(a, "globe")+` && `+drawn(b, "globe")+` && `+drawn(d, "globe"), wait)
	if g := eval[string](t, ctx, a+`.dataset.grid`); g != "icosahedral 3" {
		t.Errorf("A's grid: %q, want icosahedral 3", g)
	}
	// Steps make A − B non-zero, so that its globe has a pattern too.
	for k := 1; k <= 3; k++ {
		do(t, ctx, chromedp.Click(sel("step-once")))
		poll(t, ctx, fmt.Sprintf("step %d drawn", k), d+fmt.Sprintf(`.dataset.steps >= %d && `, k)+d+`.dataset.maxAbs > 0`, wait)
	}
	for name, c := range views {
		// The disc of radius 0.47 min(W, H) covers about half a square's
		// pixels; a blank or unchanging canvas covers none, a flat fill
		// has no spread.
		covered, spread := canvasStats(t, ctx, c)
		t.Logf("%s: %.0f %% of the canvas drawn, luminance spread %.1f", name, 100*covered, spread)
		if covered < 0.2 || spread < 2 {
			t.Errorf("%s: %.1f %% of the canvas drawn, luminance spread %.2f; want a globe with a pattern (at least 20 %%, spread 2)", name, 100*covered, spread)
		}
	}
	before := map[string]string{}
	for name, c := range views {
		before[name] = eval[string](t, ctx, c+`.dataset.camera`)
	}
	if before["A"] != before["B"] || before["B"] != before["A − B"] {
		t.Errorf("the globes start turned differently: %v", before)
	}
	shotA := screenshot(t, ctx, sideSel("field-canvas", "a"), "pair-sphere-01-a.png")
	screenshot(t, ctx, "", "pair-sphere-01-globes.png")

	// Drag B's globe across its middle.
	dragAcross(t, ctx, b, 96, -32)
	moved := `(` + a + `.dataset.camera !== ` + fmt.Sprintf("%q", before["A"]) + `)`
	poll(t, ctx, "all three globes turned alike", moved+` && `+a+`.dataset.camera === `+b+`.dataset.camera && `+b+`.dataset.camera === `+d+`.dataset.camera`, wait)
	after := eval[string](t, ctx, b+`.dataset.camera`)
	t.Logf("camera before the drag %q, after %q", before["B"], after)
	if !strings.HasPrefix(after, "lon=") || strings.HasPrefix(after, "lon=0 ") {
		t.Errorf("after a drag to the right the globe reads %q, want a longitude other than 0", after)
	}
	turnedA := screenshot(t, ctx, sideSel("field-canvas", "a"), "pair-sphere-02-a-turned.png")
	screenshot(t, ctx, "", "pair-sphere-02-globes-turned.png")
	mustDiffer(t, shotA, turnedA, 0.05, "dragging B's globe (seen on A's canvas)")

	// G: all three to the map, panned alike.
	eval[chromedp.Void](t, ctx, `document.dispatchEvent(new KeyboardEvent('keydown', {key: 'g', bubbles: true}))`)
	poll(t, ctx, "three maps", drawn(a, "lonlat")+` && `+drawn(b, "lonlat")+` && `+drawn(d, "lonlat")+` && `+a+`.dataset.camera === `+d+`.dataset.camera`, wait)
	screenshot(t, ctx, "", "pair-sphere-03-maps.png")
}
