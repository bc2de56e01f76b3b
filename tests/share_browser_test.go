package tests

import (
	"testing"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
)

// TestShareBrowser: on a shared workbench, Chromium that opened the
// control URL plays, pauses and switches the grid; a second Chromium
// (its own profile, so without the cookie) shows the watching state,
// with its controls disabled, its keyboard refused with how to get
// control, and keeps drawing what the presenter does.
func TestShareBrowser(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Share: true, ControlKey: shareKey})
	const wait = hang
	presenter, viewer := browser(t), browser(t)

	do(t, presenter, chromedp.Navigate(base+"/run/1?control="+shareKey))
	poll(t, presenter, "the presenter's first frame", role("field-canvas")+`.dataset.frames > 0 && document.body.dataset.role === 'control'`, wait)
	if u := eval[string](t, presenter, `location.pathname + location.search`); u != "/run/1" {
		t.Errorf("the presenter's address after the control URL = %q, want /run/1 (no key)", u)
	}
	if !eval[bool](t, presenter, role("role-chip")+`.hidden`) {
		t.Error("the presenter's page shows the watching chip")
	}

	do(t, viewer, chromedp.Navigate(base+"/"))
	poll(t, viewer, "the viewer's first frame", role("field-canvas")+`.dataset.frames > 0 && document.body.dataset.role === 'watch'`, wait)
	watchingNow := func(when string) {
		t.Helper()
		for _, r := range []string{"play-pause", "step-once", "reset", "grid-select", "dt-input", "field-select", "scheme-select", "load-scenario", "timeline-replay"} {
			if !eval[bool](t, viewer, role(r)+`.disabled`) {
				t.Errorf("%s: the viewer's %s is enabled", when, r)
			}
		}
		if eval[bool](t, viewer, role("large-type")+`.disabled`) {
			t.Errorf("%s: the viewer's large-type (its own display) is disabled", when)
		}
		if eval[bool](t, viewer, role("role-chip")+`.hidden || `+role("role-hint")+`.hidden`) {
			t.Errorf("%s: the viewer shows no watching chip and hint", when)
		}
	}
	watchingNow("on joining")
	if h := eval[string](t, viewer, role("role-hint")+`.textContent`); h == "" {
		t.Error("the watching hint is empty")
	}
	// The keyboard still sends: the server refuses and says how to get control.
	do(t, viewer, chromedp.KeyEvent(" "))
	poll(t, viewer, "the refusal of the viewer's play", role("message")+`.textContent.includes('control URL')`, wait)
	if s := eval[string](t, presenter, role("run-state")+`.textContent`); s != "paused" {
		t.Errorf("after the viewer's play the presenter sees %q, want paused", s)
	}

	// The presenter plays; the viewer watches time advance.
	do(t, presenter, chromedp.Click(sel("play-pause")))
	poll(t, presenter, "the run to be running", role("run-state")+`.textContent === 'running'`, wait)
	frames := eval[string](t, viewer, role("field-canvas")+`.dataset.frames`)
	poll(t, viewer, "the viewer's frames while running", role("field-canvas")+`.dataset.frames > `+frames+` + 5 && `+role("sim-time")+`.dataset.seconds > 3600`, wait)
	watchingNow("while running")
	do(t, presenter, chromedp.Click(sel("play-pause")))
	poll(t, presenter, "the pause", role("run-state")+`.textContent === 'paused'`, wait)
	poll(t, viewer, "the viewer to see the pause", role("run-state")+`.textContent === 'paused'`, wait)

	// The presenter switches the grid; the viewer draws the new one.
	choose(t, presenter, "grid-select", "quad")
	poll(t, presenter, "the quadrilateral grid", role("field-canvas")+`.dataset.grid.startsWith('quad ')`, wait)
	poll(t, viewer, "the viewer on the quadrilateral grid", role("field-canvas")+`.dataset.grid.startsWith('quad ') && `+role("grid-select")+`.value === 'quad'`, wait)
	watchingNow("after the grid switch")
	screenshot(t, viewer, "", "share-viewer.png")
	screenshot(t, presenter, "", "share-presenter.png")

	// A pair the presenter starts is watched the same way.
	do(t, presenter, chromedp.Navigate(base+"/pairs/new?run=1"))
	navigate(t, presenter, "/pair/", chromedp.Click(sel("start-pair")))
	do(t, viewer, chromedp.Navigate(base+"/pair/1"))
	poll(t, viewer, "the viewer's pair page", sideRole("field-canvas", "a")+`.dataset.frames > 0 && document.body.dataset.role === 'watch' && !`+role("role-chip")+`.hidden`, wait)
	for _, r := range []string{"play-pause", "step-once", "field-select", `scheme-select"][data-side="b`} {
		if !eval[bool](t, viewer, role(r)+`.disabled`) {
			t.Errorf("the viewer's pair control %s is enabled", r)
		}
	}
	do(t, presenter, chromedp.Click(sel("play-pause")))
	poll(t, viewer, "the viewer to see the pair run", sideRole("steps", "a")+`.textContent > 0 && `+sideRole("steps", "b")+`.textContent > 0`, wait)
	screenshot(t, viewer, "", "share-viewer-pair.png")
}
