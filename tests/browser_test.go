package tests

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"
	"github.com/chromedp/chromedp/kb"

	"gyrebench/server"
)

// artifacts is where browser tests leave their screenshots (git-ignored).
const artifacts = "artifacts"

// chromium finds Debian's Chromium. Without it the browser tests fail
// under CI=true and are skipped otherwise.
func chromium(t testing.TB) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatal("chromium is not installed; the browser tests need it (Debian package chromium; .ci/test installs it)")
	}
	t.Skip("chromium is not installed; skipping the browser test (it fails instead under CI=true)")
	return ""
}

// browser starts a headless Chromium with a fresh profile and returns a
// context for one tab. Exceptions thrown by the page fail the test.
func browser(t testing.TB) context.Context {
	t.Helper()
	if testing.Short() {
		// The race stage runs -short: the server's side of what a
		// browser does is covered there by the websocket tests, and
		// Chromium under the race detector's slowed server is most of
		// that stage's time. The full suite runs every browser test.
		t.Skip("a browser test; runs in the full suite")
	}
	opts := []chromedp.ExecAllocatorOption{
		chromedp.ExecPath(chromium(t)),
		chromedp.Flag("headless", true),
		chromedp.Flag("no-sandbox", true),
		chromedp.Flag("disable-gpu", true),
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("no-first-run", true),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(1280, 860),
	}
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	ctx, cancelTab := chromedp.NewContext(actx)
	t.Cleanup(func() {
		cancelTab()
		cancelAlloc()
	})
	exceptions := chromedp.Events(ctx, runtime.ExceptionThrown)
	go func() {
		for ev, err := range exceptions {
			if err != nil {
				return
			}
			t.Errorf("exception in the page: %s %s", ev.ExceptionDetails.Text, describe(ev.ExceptionDetails))
		}
	}()
	return ctx
}

func describe(d *runtime.ExceptionDetails) string {
	if d == nil {
		return ""
	}
	s := fmt.Sprintf("at %s:%d:%d", d.URL, d.LineNumber, d.ColumnNumber)
	if d.Exception != nil {
		s += " " + d.Exception.Description
	}
	return s
}

func do(t testing.TB, ctx context.Context, actions ...chromedp.Action[chromedp.Void]) {
	t.Helper()
	if err := chromedp.Do(ctx, actions...); err != nil {
		t.Fatal(err)
	}
}

// poll waits until the JavaScript expression is truthy, within d. A
// page that is still being replaced (after a form's POST and redirect,
// say) has for a moment no JavaScript context to evaluate in; Chromium
// then answers that the context it was asked for is gone, and the poll
// starts again in the new page's context, within the same d.
func poll(t testing.TB, ctx context.Context, what, expr string, d time.Duration) {
	t.Helper()
	deadline := time.Now().Add(d)
	for {
		_, err := chromedp.Run(ctx, chromedp.Poll[chromedp.Void](expr, chromedp.WithPollingTimeout(time.Until(deadline))))
		if err == nil {
			return
		}
		if !pageBeingReplaced(err) || !time.Now().Before(deadline) {
			t.Fatalf("waiting for %s (%s): %v", what, expr, err)
		}
	}
}

// pageBeingReplaced reports whether err is Chromium's answer to an
// evaluation in a JavaScript context that a navigation has just torn
// down ("Cannot find context with specified id", "Execution context was
// destroyed").
func pageBeingReplaced(err error) bool {
	msg := err.Error()
	return strings.Contains(msg, "Cannot find context with specified id") || strings.Contains(msg, "Execution context was destroyed")
}

func eval[T any](t testing.TB, ctx context.Context, expr string) T {
	t.Helper()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr))
	if err != nil {
		t.Fatalf("evaluating %s: %v", expr, err)
	}
	return v
}

func role(r string) string { return fmt.Sprintf(`document.querySelector('[data-role="%s"]')`, r) }

func sel(r string) chromedp.CSS { return chromedp.CSS(fmt.Sprintf(`[data-role="%s"]`, r)) }

// choose sets a menu as a user would and fires its change event.
func choose(t testing.TB, ctx context.Context, r, value string) {
	t.Helper()
	eval[chromedp.Void](t, ctx, fmt.Sprintf(`(() => { const s = %s; s.value = %q; s.dispatchEvent(new Event('change', {bubbles: true})); })()`, role(r), value))
}

// typeInto replaces a text field's contents and commits it (change event).
func typeInto(t testing.TB, ctx context.Context, r, text string) {
	t.Helper()
	eval[chromedp.Void](t, ctx, fmt.Sprintf(`(() => { const s = %s; s.focus(); s.value = %q; s.dispatchEvent(new Event('change', {bubbles: true})); s.blur(); })()`, role(r), text))
}

// project shows the field canvas in projection proj ("globe" or
// "lonlat"), waits (at most d) until it is drawn so, and screenshots it
// as name.
func project(t testing.TB, ctx context.Context, canvas, proj, what, name string, d time.Duration) image.Image {
	t.Helper()
	choose(t, ctx, "projection-select", proj)
	poll(t, ctx, what, canvas+`.dataset.drawn === '`+proj+`'`, d)
	return screenshot(t, ctx, sel("field-canvas"), name)
}

func screenshot(t testing.TB, ctx context.Context, s chromedp.CSS, name string) image.Image {
	t.Helper()
	var b []byte
	var err error
	if s == "" {
		b, err = chromedp.Run(ctx, chromedp.CaptureScreenshot())
	} else {
		b, err = chromedp.Run(ctx, chromedp.Screenshot(s))
	}
	if err != nil {
		t.Fatalf("screenshot %s: %v", name, err)
	}
	writeArtifact(t, name, b)
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("screenshot %s is not a PNG: %v", name, err)
	}
	return img
}

// mustDiffer fails unless at least the fraction least of the pixels
// differ between a and b (what says how they came about), and logs the
// fraction otherwise.
func mustDiffer(t testing.TB, a, b image.Image, least float64, what string) {
	t.Helper()
	if d := differing(a, b); d < least {
		t.Errorf("%s changed %.2f %% of the canvas, want at least %g %%", what, 100*d, 100*least)
	} else {
		t.Logf("%s changed %.0f %% of the canvas", what, 100*d)
	}
}

// writeArtifact leaves b in the artifacts folder as name.
func writeArtifact(t testing.TB, name string, b []byte) {
	t.Helper()
	if err := os.MkdirAll(artifacts, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(artifacts, name), b, 0o644); err != nil {
		t.Fatalf("saving %s: %v", name, err)
	}
}

// differing returns the fraction of pixels that differ between a and b.
func differing(a, b image.Image) float64 {
	r := a.Bounds().Intersect(b.Bounds())
	if r.Empty() {
		return 1
	}
	n := 0
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			if a.At(x, y) != b.At(x, y) {
				n++
			}
		}
	}
	return float64(n) / float64(r.Dx()*r.Dy())
}

func simSeconds(t testing.TB, ctx context.Context) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(eval[string](t, ctx, role("sim-time")+`.dataset.seconds`), 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// TestBrowser drives the workbench in headless Chromium: play, watch time
// and the field change, switch the grid, refuse a bad Δt, blow up a run,
// and resume it from a recent state with a smaller Δt.
func TestBrowser(t *testing.T) {
	ctx := browser(t)
	_, base := startServer(t, server.Options{Workers: 1})
	const wait = hang

	do(t, ctx, chromedp.Navigate(base+"/"))
	poll(t, ctx, "the first frame", role("field-canvas")+`.dataset.frames > 0 && `+role("run-state")+`.textContent === 'paused'`, wait)
	t.Logf("page load to first frame: %s ms (DOM content loaded at %.0f ms)", eval[string](t, ctx, role("field-canvas")+`.dataset.firstFrameMs`),
		eval[float64](t, ctx, `performance.getEntriesByType('navigation')[0].domContentLoadedEventEnd`))
	first := screenshot(t, ctx, sel("field-canvas"), "01-paused-field.png")

	// Play: simulated time advances and the field changes.
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the run to be running", role("run-state")+`.textContent === 'running'`, wait)
	poll(t, ctx, "simulated time to advance", role("sim-time")+`.dataset.seconds > 3600`, wait)
	frames := eval[string](t, ctx, role("field-canvas")+`.dataset.frames`)
	poll(t, ctx, "more frames", role("field-canvas")+`.dataset.frames > `+frames+` + 5`, wait)
	var diff float64
	deadline := time.Now().Add(wait)
	for k := 0; diff < 0.05; k++ {
		if time.Now().After(deadline) {
			t.Fatalf("the field canvas stayed the same while running: %.3f of its pixels changed", diff)
		}
		now := screenshot(t, ctx, sel("field-canvas"), "02-running-field.png")
		diff = differing(first, now)
	}
	t.Logf("%.0f %% of the field's pixels changed while running", 100*diff)
	screenshot(t, ctx, "", "03-running-page.png")

	// Switch the grid through the menu while running.
	choose(t, ctx, "grid-select", "quad")
	poll(t, ctx, "the quadrilateral grid", role("field-canvas")+`.dataset.grid === 'quad 64'`, wait)
	frames = eval[string](t, ctx, role("field-canvas")+`.dataset.frames`)
	quad := simSeconds(t, ctx)
	poll(t, ctx, "frames on the new grid", role("field-canvas")+`.dataset.frames > `+frames+` + 5 && `+role("sim-time")+`.dataset.seconds > `+strconv.FormatFloat(quad, 'g', -1, 64), wait)
	if s := eval[string](t, ctx, role("run-state")+`.textContent`); s != "running" {
		t.Errorf("run-state after the grid switch = %q, want running", s)
	}
	screenshot(t, ctx, "", "04-quad-grid.png")

	// The line under the scheme menu says what the chosen scheme conserves
	// and follows a switch to a quad-only scheme.
	if h := eval[string](t, ctx, role("scheme-hint")+`.textContent`); h != "conserves mass and energy" {
		t.Errorf("scheme-hint for trisk-energy = %q, want %q", h, "conserves mass and energy")
	}
	choose(t, ctx, "scheme-select", "sadourny-enstrophy")
	poll(t, ctx, "the hint for sadourny-enstrophy", role("scheme-hint")+`.textContent === 'conserves mass and potential enstrophy; quad grid only'`, wait)

	// A signed field on the dual polygons, large type and a closer look.
	choose(t, ctx, "field-select", "vorticity")
	poll(t, ctx, "the vorticity field", role("field-canvas")+`.dataset.field === 'vorticity'`, wait)
	do(t, ctx, chromedp.KeyEvent("l"), chromedp.KeyEvent("+"), chromedp.KeyEvent("+"), chromedp.KeyEvent("+"))
	poll(t, ctx, "large type", `document.body.classList.contains('large')`, wait)
	frames = eval[string](t, ctx, role("field-canvas")+`.dataset.frames`)
	poll(t, ctx, "frames in large type", role("field-canvas")+`.dataset.frames > `+frames+` + 2`, wait)
	screenshot(t, ctx, "", "05-large-type-vorticity.png")
	do(t, ctx, chromedp.KeyEvent("l"), chromedp.KeyEvent("0"))
	choose(t, ctx, "field-select", "depth")
	poll(t, ctx, "the depth field", role("field-canvas")+`.dataset.field === 'depth' && !document.body.classList.contains('large')`, wait)

	// A bad Δt is refused with a message naming it; the field reverts.
	typeInto(t, ctx, "dt-input", "-5")
	poll(t, ctx, "the refusal", role("message")+`.textContent.includes('time.dt') && `+role("message")+`.textContent.includes('-5')`, wait)
	if got := eval[string](t, ctx, role("dt-input")+`.value`); got != "120" {
		t.Errorf("Δt field after a refused value = %q, want the run's 120", got)
	}
	screenshot(t, ctx, "", "06-refused-dt.png")

	// The keyboard help opens with ? and closes with Esc.
	do(t, ctx, chromedp.KeyEvent("?"))
	poll(t, ctx, "the help overlay", `!`+role("help-overlay")+`.hidden`, wait)
	do(t, ctx, chromedp.KeyEvent(kb.Escape))
	poll(t, ctx, "the help overlay to close", role("help-overlay")+`.hidden`, wait)

	// The blow-up scenario: it pauses itself as blown-up and says where.
	choose(t, ctx, "scenario-select", "overstep-rk3")
	do(t, ctx, chromedp.Click(sel("load-scenario")))
	poll(t, ctx, "the scenario to load", role("dt-input")+`.value === '285' && `+role("run-state")+`.textContent === 'paused' && `+role("sim-time")+`.dataset.seconds == 0`, wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the blow-up", role("run-state")+`.textContent === 'blown-up'`, hang)
	poll(t, ctx, "where it blew up", `!`+role("blowup")+`.hidden && /cell \d+|edge \d+/.test(`+role("blowup")+`.textContent)`, wait)
	screenshot(t, ctx, "", "07-blown-up.png")
	blew := simSeconds(t, ctx)

	// Back to the oldest recent state, a smaller Δt, and on past the blow-up.
	eval[chromedp.Void](t, ctx, `(() => { const s = `+role("scrub")+`; s.value = '0'; s.dispatchEvent(new Event('change', {bubbles: true})); })()`)
	poll(t, ctx, "the rewind", role("sim-time")+`.dataset.seconds < `+strconv.FormatFloat(blew, 'g', -1, 64)+` && `+role("run-state")+`.textContent === 'paused'`, wait)
	typeInto(t, ctx, "dt-input", "100")
	poll(t, ctx, "Δt = 100", role("dt-input")+`.value === '100'`, wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the run to pass the blow-up time", role("sim-time")+`.dataset.seconds > `+strconv.FormatFloat(blew+2000, 'g', -1, 64)+` && `+role("run-state")+`.textContent === 'running'`, hang)
	screenshot(t, ctx, "", "08-resumed.png")
}
