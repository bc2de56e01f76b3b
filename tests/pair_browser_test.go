package tests

import (
	"bytes"
	"context"
	"fmt"
	"net/url"
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
)

func sideRole(r, side string) string {
	return fmt.Sprintf(`document.querySelector('[data-role="%s"][data-side="%s"]')`, r, side)
}

func sideSel(r, side string) chromedp.CSS {
	return chromedp.CSS(fmt.Sprintf(`[data-role="%s"][data-side="%s"]`, r, side))
}

// chooseSide sets one side's menu as a user would.
func chooseSide(t testing.TB, ctx context.Context, r, side, value string) {
	t.Helper()
	eval[chromedp.Void](t, ctx, fmt.Sprintf(`(() => { const s = %s; s.value = %q; s.dispatchEvent(new Event('change', {bubbles: true})); })()`, sideRole(r, side), value))
}

// navigate runs the actions (a click on a link or a submit button) and
// waits until the page they lead to has loaded, at a path starting with
// prefix.
func navigate(t testing.TB, ctx context.Context, prefix string, actions ...chromedp.Action[chromedp.Void]) {
	t.Helper()
	resp, err := chromedp.RunResponse(ctx, actions...)
	if err != nil {
		t.Fatal(err)
	}
	if u, err := url.Parse(resp.URL); err != nil || resp.Status != 200 || !strings.HasPrefix(u.Path, prefix) {
		body, _ := chromedp.Run(ctx, chromedp.Evaluate[string](`document.body.innerText.slice(0, 300)`))
		t.Fatalf("the browser went to %s (HTTP %d), want %s…: %s", resp.URL, resp.Status, prefix, body)
	}
}

// TestPairBrowser starts a pair in headless Chromium from a run's page,
// sees A, B and A − B drawn (A − B exactly zero at the start), runs it,
// and moves B to another grid, after which the difference is withdrawn.
func TestPairBrowser(t *testing.T) {
	ctx := browser(t)
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	const wait = hang

	do(t, ctx, chromedp.Navigate(base+"/run/1"))
	poll(t, ctx, "the run page", role("field-canvas")+`.dataset.frames > 0`, wait)
	navigate(t, ctx, "/pairs/new", chromedp.Click(sel("compare"))) // the run page's "compare…" link
	poll(t, ctx, "the new-pair form", role("new-pair")+` !== null && `+role("pair-base")+`.value === 'run:1'`, wait)
	chooseSide(t, ctx, "scheme-select", "b", "trisk-enstrophy")
	screenshot(t, ctx, "", "pair-00-form.png")
	navigate(t, ctx, "/pair/", chromedp.Click(sel("start-pair")))

	frames := func(side string) string { return sideRole("field-canvas", side) + `.dataset.frames > 0` }
	poll(t, ctx, "A, B and A − B drawn", frames("a")+` && `+frames("b")+` && `+role("diff-canvas")+`.dataset.frames > 0`, wait)
	if got := eval[string](t, ctx, role("diff-canvas")+`.dataset.maxAbs`); got != "0" {
		t.Errorf("max |A − B| at t = 0 = %s, want 0", got)
	}
	if a, b := eval[string](t, ctx, sideRole("field-canvas", "a")+`.dataset.scheme`), eval[string](t, ctx, sideRole("field-canvas", "b")+`.dataset.scheme`); a != "trisk-energy" || b != "trisk-enstrophy" {
		t.Errorf("schemes shown: A %s, B %s", a, b)
	}
	// One colour scale: both canvases were drawn with the same range.
	for _, k := range []string{"lo", "hi"} {
		if a, b := eval[string](t, ctx, sideRole("field-canvas", "a")+`.dataset.`+k), eval[string](t, ctx, sideRole("field-canvas", "b")+`.dataset.`+k); a != b {
			t.Errorf("colour range %s: A %s, B %s; want one shared scale", k, a, b)
		}
	}
	screenshot(t, ctx, "", "pair-01-start.png")

	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "both sides past 6 h", sideRole("sim-time", "a")+`.dataset.seconds > 21600 && `+sideRole("sim-time", "b")+`.dataset.seconds > 21600`, hang)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the pause", role("run-state")+`.textContent === 'paused'`, wait)
	poll(t, ctx, "a non-zero A − B", role("diff-canvas")+`.dataset.maxAbs > 0 && `+role("diff-canvas")+`.dataset.steps === `+sideRole("field-canvas", "a")+`.dataset.steps`, wait)
	ta, tb := eval[string](t, ctx, sideRole("sim-time", "a")+`.dataset.seconds`), eval[string](t, ctx, sideRole("sim-time", "b")+`.dataset.seconds`)
	if ta != tb {
		t.Errorf("equal Δt, paused: A at t = %s s, B at %s s; want the same time", ta, tb)
	}
	t.Logf("paused at t = %s s, max |A − B| depth = %s m", ta, eval[string](t, ctx, role("diff-canvas")+`.dataset.maxAbs`))
	screenshot(t, ctx, "", "pair-02-running.png")

	// B's own Hodge star and dissipation, from its controls; A keeps its
	// own, and a refused value changes nothing and says why.
	cfgOf := func(side string) string { return `window.gyrebench.sides.` + side + `.config` }
	chooseSide(t, ctx, "hyperviscosity-input", "b", "1e14")
	poll(t, ctx, "B's hyperviscosity", cfgOf("b")+`.dissipation.hyperviscosity === 1e14 && `+cfgOf("a")+`.dissipation.hyperviscosity === 0 && `+
		sideRole("dissipation-hint", "b")+`.textContent !== ''`, wait)
	if a, b := eval[string](t, ctx, sideRole("caption", "a")+`.textContent`), eval[string](t, ctx, sideRole("caption", "b")+`.textContent`); strings.Contains(a, "ν₄") || !strings.Contains(b, "ν₄ = 1×10¹⁴") {
		t.Errorf("captions after B's ν₄ = 1e14: A %q, B %q; want ν₄ named on B only", a, b)
	}
	chooseSide(t, ctx, "hodge-select", "b", "diagonal")
	poll(t, ctx, "B's Hodge star", cfgOf("b")+`.hodge === 'diagonal' && `+cfgOf("a")+`.hodge === 'consistent' && `+sideRole("hodge-select", "a")+`.value === 'consistent'`, wait)
	chooseSide(t, ctx, "viscosity-input", "a", "-1")
	poll(t, ctx, "the refusal of ν₂ = -1 on A", role("message")+`.textContent.includes('scheme.viscosity')`, wait)
	if v := eval[float64](t, ctx, cfgOf("a")+`.dissipation.viscosity`); v != 0 {
		t.Errorf("after a refused ν₂ = -1, A's viscosity is %g, want 0", v)
	}
	screenshot(t, ctx, "", "pair-02b-dissipation.png")

	// One action on one side: B to the quadrilateral grid.
	chooseSide(t, ctx, "grid-select", "b", "quad")
	poll(t, ctx, "B on the quadrilateral grid", sideRole("field-canvas", "b")+`.dataset.grid === 'quad 32' && !`+role("diff-note")+`.hidden`, wait)
	if g := eval[string](t, ctx, sideRole("field-canvas", "a")+`.dataset.grid`); g != "hex 32" {
		t.Errorf("A's grid after B's change: %s", g)
	}
	do(t, ctx, chromedp.Click(sel("step-once")))
	poll(t, ctx, "B drawn on its new grid", sideRole("steps", "b")+`.textContent > 0`, wait)
	screenshot(t, ctx, "", "pair-03-different-grids.png")
}

// TestTimelineBrowser records a live run in the browser (a scheme change
// and a mark while running), saves its timeline, loads it back through
// the file input and replays it: the replay pauses at the mark and ends on
// the live run's final.nc. A built-in timeline pauses at its first mark.
func TestTimelineBrowser(t *testing.T) {
	ctx := browser(t)
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	const wait = hang

	do(t, ctx, chromedp.Navigate(base+"/run/1"))
	poll(t, ctx, "the first frame", role("field-canvas")+`.dataset.frames > 0 && `+role("run-state")+`.textContent === 'paused'`, wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "t past 2 h", role("sim-time")+`.dataset.seconds > 7200`, wait)
	choose(t, ctx, "scheme-select", "apvm")
	poll(t, ctx, "the scheme change recorded", role("timeline-status")+`.dataset.events >= 2`, wait)
	t1 := simSeconds(t, ctx)
	poll(t, ctx, "t past another 2 h", role("sim-time")+`.dataset.seconds > `+strconv.FormatFloat(t1+7200, 'g', -1, 64), wait)
	const label = "APVM has had two hours"
	eval[chromedp.Void](t, ctx, role("mark-label")+`.value = `+strconv.Quote(label))
	do(t, ctx, chromedp.Click(sel("timeline-mark")))
	poll(t, ctx, "the mark recorded", role("timeline-status")+`.dataset.events >= 3`, wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the pause", role("run-state")+`.textContent === 'paused'`, wait)
	screenshot(t, ctx, "", "timeline-01-recorded.png")

	// Save: what the "Save timeline" link downloads, and the live state.
	href := eval[string](t, ctx, role("timeline-save")+`.getAttribute('href')`)
	saved := get(t, base+href)
	live := get(t, base+"/run/1/final.nc")

	// Load it back as a user would pick the file, and replay.
	eval[chromedp.Void](t, ctx, fmt.Sprintf(`(() => {
		const dt = new DataTransfer();
		dt.items.add(new File([%s], 'saved.toml', {type: 'application/toml'}));
		const f = %s; f.files = dt.files; f.dispatchEvent(new Event('change', {bubbles: true}));
	})()`, strconv.Quote(string(saved)), role("timeline-file")))
	do(t, ctx, chromedp.Click(sel("timeline-replay")))
	poll(t, ctx, "the replay loaded", role("timeline-status")+`.dataset.replay === 'saved.toml' && `+role("sim-time")+`.dataset.seconds == 0`, wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the replay paused at the mark", role("timeline-status")+`.dataset.mark === `+strconv.Quote(label)+` && `+role("run-state")+`.textContent === 'paused'`, wait)
	if b := eval[string](t, ctx, role("mark-banner")+`.textContent`); !strings.Contains(b, label) {
		t.Errorf("the banner over the field reads %q, want the mark's label", b)
	}
	screenshot(t, ctx, "", "timeline-02-replay-at-mark.png")
	eval[chromedp.Void](t, ctx, role("timeline-panel")+`.scrollIntoView()`)
	screenshot(t, ctx, sel("timeline-panel"), "timeline-02b-panel.png")
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the replay to finish", role("timeline-status")+`.dataset.note.includes('finished') && `+role("run-state")+`.textContent === 'paused'`, wait)
	if again := get(t, base+"/run/1/final.nc"); !bytes.Equal(again, live) {
		t.Errorf("after the replay in the browser, final.nc differs from the live run's (%d vs %d bytes)", len(again), len(live))
	}
	screenshot(t, ctx, "", "timeline-03-replay-finished.png")

	// A built-in demonstration pauses at its first mark, at t = 0.
	eval[chromedp.Void](t, ctx, `(() => { const s = `+role("timeline-builtin")+`; s.value = 'shear-tour'; s.dispatchEvent(new Event('change', {bubbles: true})); })()`)
	do(t, ctx, chromedp.Click(sel("timeline-replay")))
	poll(t, ctx, "the built-in loaded", role("timeline-status")+`.dataset.replay === 'shear-tour'`, wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "its first mark", role("timeline-status")+`.dataset.mark !== '' && `+role("run-state")+`.textContent === 'paused'`, wait)
	screenshot(t, ctx, "", "timeline-04-builtin-first-mark.png")
	do(t, ctx, chromedp.Click(sel("timeline-stop")))
	poll(t, ctx, "the replay stopped", role("timeline-status")+`.dataset.replay === ''`, wait)
}
