package tests

import (
	"bufio"
	"context"
	"io"
	"net/http"
	"net/http/cookiejar"
	"net/url"
	"strings"
	"testing"

	"github.com/coder/websocket"

	"gyrebench/server"
)

// shareKey is the control key of these tests (serve --control-key).
const shareKey = "test-control-key-0123456789"

// browserLike is an HTTP client with a cookie jar that does not follow
// redirects, so that a test sees each answer.
func browserLike(t *testing.T) *http.Client {
	t.Helper()
	jar, err := cookiejar.New(nil)
	if err != nil {
		t.Fatal(err)
	}
	return &http.Client{Jar: jar, CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
}

// dialWith connects to run id through the HTTP client hc (its cookies go
// with the upgrade); the client reads until the test ends.
func dialWith(t *testing.T, hc *http.Client, base, id string) *client {
	t.Helper()
	c, rctx := dialWSWith(t, base, "/run/"+id+"/ws", &websocket.DialOptions{HTTPClient: hc})
	cl := &client{t: t, c: c, in: make(chan msg, 1<<14)}
	go cl.read(rctx)
	return cl
}

// roleOf reads a client's first message, which on a shared workbench
// must be its role, and returns the role.
func roleOf(t *testing.T, cl *client) string {
	t.Helper()
	m := cl.next(hang)
	if m.Type != "role" {
		t.Fatalf("first message %q, want the role message", m.Type)
	}
	return m.Role
}

// post sends a same-origin form post through hc and returns the status
// and the body.
func post(t *testing.T, hc *http.Client, base, path string, form url.Values) (int, string) {
	t.Helper()
	req, err := http.NewRequest(http.MethodPost, base+path, strings.NewReader(form.Encode()))
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	req.Header.Set("Origin", base)
	resp, err := hc.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(b)
}

// TestShareRoles: on a shared workbench a client without the control
// cookie watches (it gets the frames, its play is refused with the way to
// get control, and the run stays paused) and every mutating route refuses
// it; the control URL sets the cookie and drops the key from the address,
// after which the same client drives the run.
func TestShareRoles(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, Share: true, ControlKey: shareKey, SweepDir: t.TempDir()})
	if got, want := srv.ControlURL(base+"/"), base+"/?control="+shareKey; got != want {
		t.Fatalf("ControlURL = %q, want %q", got, want)
	}

	// A viewer: its role, then frames; play and set-field refused, the
	// read-only panel command taken.
	viewer := dialWith(t, browserLike(t), base, "1")
	if r := roleOf(t, viewer); r != "watch" {
		t.Fatalf("viewer's role = %q, want watch", r)
	}
	viewer.until(hang, "a first frame for the viewer", func(m msg) bool { return m.Type == "frame" })
	for _, cmd := range []struct {
		name  string
		value any
	}{{"play", nil}, {"set-field", "vorticity"}, {"set-dt", 1}} {
		r := viewer.reply(viewer.send(cmd.name, cmd.value), nil)
		if r.Type != "error" || r.fieldName() != "role" || !strings.Contains(r.Message, "control URL printed by `gyrebench serve`") {
			t.Errorf("viewer's %s: got %s %q (field %s), want an error saying how to get control", cmd.name, r.Type, r.Message, r.fieldName())
		}
	}
	if r := viewer.reply(viewer.send("linear", nil), nil); r.Type != "ack" {
		t.Errorf("viewer's linear (read-only): %s %q, want ack", r.Type, r.Message)
	}

	// Routes that change things refuse the viewer with the same advice.
	anon := browserLike(t)
	for _, p := range []struct {
		path string
		form url.Values
	}{
		{"/runs", url.Values{"scenario": {"dipole"}}},
		{"/pairs", url.Values{"base": {"run:1"}, "b.dt": {"100"}}},
		{"/sweeps", url.Values{"scenario": {"dipole"}, "vary": {"time.integrator=rk3,rk4"}}},
		{"/sweep/1/stop", url.Values{}},
	} {
		code, body := post(t, anon, base, p.path, p.form)
		if code != http.StatusForbidden || !strings.Contains(body, "control URL") {
			t.Errorf("POST %s without the cookie: %d %q, want 403 saying how to get control", p.path, code, body)
		}
	}
	if n := len(srv.Runs()); n != 1 {
		t.Errorf("%d runs after the refused posts, want 1", n)
	}

	// A wrong key sets no cookie.
	resp, err := anon.Get(base + "/run/1?control=not-the-key-at-all-000")
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusForbidden || len(resp.Cookies()) != 0 {
		t.Errorf("wrong key: %s with %d cookies, want 403 and none", resp.Status, len(resp.Cookies()))
	}

	// The control URL: a strict, HttpOnly cookie for the whole site and a
	// redirect to the same page without the key.
	presenter := browserLike(t)
	resp, err = presenter.Get(base + "/run/1?control=" + url.QueryEscape(shareKey))
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	loc := resp.Header.Get("Location")
	if resp.StatusCode != http.StatusSeeOther || loc != "/run/1" {
		t.Errorf("control URL: %s to %q, want 303 to /run/1", resp.Status, loc)
	}
	if strings.Contains(loc, shareKey) {
		t.Errorf("redirect %q carries the key", loc)
	}
	// The redirect stays on this site whatever the path.
	resp2, err := browserLike(t).Get(base + "//elsewhere.example/x?control=" + url.QueryEscape(shareKey))
	if err != nil {
		t.Fatal(err)
	}
	resp2.Body.Close()
	if l := resp2.Header.Get("Location"); l != "/elsewhere.example/x" {
		t.Errorf("control URL at //elsewhere.example/x redirects to %q, want /elsewhere.example/x on this site", l)
	}
	cs := resp.Cookies()
	if len(cs) != 1 || !cs[0].HttpOnly || cs[0].SameSite != http.SameSiteStrictMode || cs[0].Path != "/" {
		t.Fatalf("control URL set cookies %v, want one HttpOnly, SameSite=Strict cookie on /", resp.Header["Set-Cookie"])
	}

	// The presenter's later join reports the steps: none were taken while
	// only the viewer's commands arrived.
	drive := dialWith(t, presenter, base, "1")
	if r := roleOf(t, drive); r != "control" {
		t.Fatalf("presenter's role = %q, want control", r)
	}
	drive.until(hang, "the presenter's first status", func(m msg) bool {
		if m.Type == "status" {
			if m.State != "paused" || m.Steps != 0 {
				t.Errorf("after the viewer's refused play: state %s, %d steps; want paused at 0", m.State, m.Steps)
			}
			return true
		}
		return false
	})
	drive.mustAck("play", nil, nil)
	// The viewer watches the run advance.
	viewer.until(hang, "a viewer frame past step 3", func(m msg) bool { return m.Type == "frame" && m.bin.Steps > 3 })
	drive.mustAck("pause", nil, nil)

	// With the cookie, the routes are open too.
	if code, body := post(t, presenter, base, "/runs", url.Values{"scenario": {"dipole"}}); code != http.StatusSeeOther {
		t.Errorf("POST /runs with the cookie: %d %q, want 303", code, body)
	}

	get := func(hc *http.Client, path string) string {
		t.Helper()
		resp, err := hc.Get(base + path)
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		b, _ := io.ReadAll(resp.Body)
		if resp.StatusCode != http.StatusOK {
			t.Fatalf("GET %s: %s %q", path, resp.Status, b)
		}
		return string(b)
	}
	// The forms that start things: the viewer sees the watching chip, the
	// hint and a Start it cannot press; the presenter sees neither chip
	// nor a disabled Start.
	for _, f := range []struct{ path, start string }{
		{"/runs", `data-role="new-run-start"`},
		{"/pairs/new", `data-role="start-pair"`},
		{"/sweeps/new", `data-role="sweep-start"`},
	} {
		if v := get(anon, f.path); !strings.Contains(v, f.start+" disabled") || !strings.Contains(v, `data-role="role-chip">watching<`) || !strings.Contains(v, "control URL") {
			t.Errorf("viewer's %s lacks the disabled Start, the watching chip or the hint:\n%s", f.path, v)
		}
		v := get(presenter, f.path)
		if strings.Contains(v, `data-role="role-chip"`) || strings.Contains(v, f.start+" disabled") || !strings.Contains(v, f.start) {
			t.Errorf("presenter's %s shows the watching chip or a disabled Start, or no Start:\n%s", f.path, v)
		}
	}

	// A sweep's page: the viewer sees the watching chip and a Stop it
	// cannot press; the presenter's page has no chip.
	if code, body := post(t, presenter, base, "/sweeps", url.Values{"scenario": {"dipole"}, "vary": {"time.integrator=rk3,rk4"}}); code != http.StatusSeeOther {
		t.Fatalf("POST /sweeps with the cookie: %d %q, want 303", code, body)
	}
	if v := get(anon, "/sweep/1"); !strings.Contains(v, `data-role="sweep-stop" disabled`) || !strings.Contains(v, `data-role="role-chip">watching<`) || !strings.Contains(v, "control URL") {
		t.Errorf("viewer's sweep page lacks the disabled Stop, the watching chip or the hint:\n%s", v)
	}
	if v := get(presenter, "/sweep/1"); strings.Contains(v, `data-role="role-chip"`) {
		t.Errorf("presenter's sweep page shows the watching chip")
	}
	if code, body := post(t, presenter, base, "/sweep/1/stop", url.Values{}); code != http.StatusSeeOther {
		t.Errorf("presenter's stop: %d %q, want 303", code, body)
	}
}

// TestShareRoleOptions: a control key too short is refused with a message
// naming the flag; a workbench not shared sends no role and takes every
// command.
func TestShareRoleOptions(t *testing.T) {
	for _, key := range []string{"short", "has space in it, long enough"} {
		if _, err := server.New(server.Options{Share: true, ControlKey: key}); err == nil || !strings.Contains(err.Error(), "--control-key") {
			t.Errorf("ControlKey %q: error %v, want one naming --control-key", key, err)
		}
	}
	srv, base := startServer(t, server.Options{Workers: 1})
	if u := srv.ControlURL(base + "/"); u != "" {
		t.Errorf("not shared: ControlURL = %q, want none", u)
	}
	cl := dial(t, base, "1")
	if m := cl.next(hang); m.Type != "hello" {
		t.Errorf("not shared: first message %q, want hello (no role)", m.Type)
	}
	cl.mustAck("play", nil, nil)
	cl.mustAck("pause", nil, nil)
}

// TestShareServePrints: `gyrebench serve --share --control-key K` prints
// a watch URL without the key and a control URL with it, and the control
// URL, opened, gives its browser control.
func TestShareServePrints(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	pr, pw := io.Pipe()
	done := make(chan error, 1)
	go func() {
		done <- server.Serve(ctx, server.Options{Addr: "127.0.0.1:0", Workers: 1, Share: true, ControlKey: shareKey, Stderr: pw})
		pw.Close()
	}()
	lines := bufio.NewScanner(pr)
	urls := map[string]string{}
	for len(urls) < 2 && lines.Scan() {
		f := strings.Fields(lines.Text())
		if len(f) >= 2 && (f[0] == "watch:" || f[0] == "control:") {
			urls[f[0]] = f[1]
		}
	}
	go func() { _, _ = io.Copy(io.Discard, pr) }()
	watch, control := urls["watch:"], urls["control:"]
	if watch == "" || control == "" || strings.Contains(watch, shareKey) || control != watch+"?control="+shareKey {
		t.Fatalf("printed watch %q and control %q, want the control URL to be the watch URL with ?control=KEY", watch, control)
	}
	hc := browserLike(t)
	hc.CheckRedirect = nil // follow, as a browser does
	resp, err := hc.Get(control)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusOK || resp.Request.URL.RawQuery != "" {
		t.Fatalf("GET the control URL: %s at %s, want the page without the key", resp.Status, resp.Request.URL)
	}
	cl := dialWith(t, hc, strings.TrimSuffix(watch, "/"), "1")
	if r := roleOf(t, cl); r != "control" {
		t.Errorf("after the printed control URL: role %q, want control", r)
	}
	stopServe(t, cancel, done)
}
