package tests

import (
	"context"
	"html"
	"io"
	"net"
	"net/http"
	"net/url"
	"strings"
	"testing"

	"github.com/coder/websocket"

	"gyrebench/server"
)

// asHost is an HTTP client that sends every request to the test server at
// base, whatever host its URL names, and does not follow redirects: the
// requests a browser sends once a rebinding domain points at this machine.
func asHost(t *testing.T, base string) *http.Client {
	t.Helper()
	u, err := url.Parse(base)
	if err != nil {
		t.Fatal(err)
	}
	var d net.Dialer
	return &http.Client{
		Transport: &http.Transport{DialContext: func(ctx context.Context, network, _ string) (net.Conn, error) {
			return d.DialContext(ctx, network, u.Host)
		}},
		CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse },
	}
}

// hostRequest sends a request naming host (host:port) with a matching
// Origin, and returns the status and the body.
func hostRequest(t *testing.T, c *http.Client, method, host, path string, form url.Values) (int, string) {
	t.Helper()
	var body io.Reader
	if form != nil {
		body = strings.NewReader(form.Encode())
	}
	req, err := http.NewRequest(method, "http://"+host+path, body)
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Origin", "http://"+host)
	if form != nil {
		req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	}
	resp, err := c.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, html.UnescapeString(string(b))
}

// hostDial opens the run websocket naming host, and returns the HTTP
// status of the upgrade (101 when accepted).
func hostDial(t *testing.T, c *http.Client, host string) int {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	ws, resp, err := websocket.Dial(ctx, "ws://"+host+"/run/1/ws", &websocket.DialOptions{
		HTTPClient: c, HTTPHeader: http.Header{"Origin": {"http://" + host}},
	})
	if err == nil {
		ws.CloseNow()
		return http.StatusSwitchingProtocols
	}
	if resp == nil {
		t.Fatalf("websocket as %s: %v", host, err)
	}
	return resp.StatusCode
}

// TestHostAllowList: a request that names a host the workbench was not
// told to answer to — what a page on a rebinding domain sends from a
// visitor's browser — is refused on every route, websocket included, with
// a message naming the flag; --host adds a name.
func TestHostAllowList(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "small-hex", smallHex), SweepDir: t.TempDir(), Hosts: []string{"lab-pc"}})
	c := asHost(t, base)
	port := base[strings.LastIndex(base, ":")+1:]
	sweep := url.Values{"scenario": {"steady-geostrophic"}, "vary": {"grid.n=8"}, "set": {"time.duration=600"}}
	for _, host := range []string{"evil.example:8080", "evil.example:" + port, "lab-pc.evil.example:" + port, "127.0.0.2:" + port} {
		t.Run(host, func(t *testing.T) {
			for _, r := range []struct {
				method, path string
				form         url.Values
			}{
				{"GET", "/", nil},
				{"GET", "/run/1", nil},
				{"GET", "/static/app.js", nil},
				{"POST", "/runs", url.Values{"scenario": {"steady-geostrophic"}}},
				{"POST", "/sweeps", sweep},
			} {
				code, body := hostRequest(t, c, r.method, host, r.path, r.form)
				if code != http.StatusMisdirectedRequest || !strings.Contains(body, "--host") {
					t.Errorf("%s %s as %s: HTTP %d %q; want 421 naming --host", r.method, r.path, host, code, body)
				}
			}
			if code := hostDial(t, c, host); code != http.StatusMisdirectedRequest {
				t.Errorf("run websocket as %s: HTTP %d, want 421", host, code)
			}
		})
	}
	// The loopback names and the name given with --host are accepted:
	// the index sends the browser to the run, a form starts one, and the
	// websocket opens.
	for _, host := range []string{"127.0.0.1:" + port, "localhost:" + port, "[::1]:" + port, "LAB-PC:" + port, "lab-pc:8080"} {
		if code, body := hostRequest(t, c, "GET", host, "/run/1", nil); code != http.StatusOK {
			t.Errorf("GET /run/1 as %s: HTTP %d %q, want 200", host, code, body)
		}
		if code := hostDial(t, c, host); code != http.StatusSwitchingProtocols {
			t.Errorf("run websocket as %s: HTTP %d, want 101", host, code)
		}
	}
	if code, body := hostRequest(t, c, "POST", "lab-pc:"+port, "/runs", url.Values{"scenario": {"steady-geostrophic"}}); code != http.StatusSeeOther {
		t.Errorf("POST /runs as lab-pc: HTTP %d %q, want 303", code, body)
	}
}

// TestBadHostOption: a --host value that is not a bare name is refused
// when the server is built, with a message naming it.
func TestBadHostOption(t *testing.T) {
	for _, h := range []string{"", "http://lab-pc", "lab-pc:8080", "lab pc"} {
		_, err := server.New(server.Options{Hosts: []string{h}, Scenario: writeScenario(t, "small-hex", smallHex)})
		if err == nil || !strings.Contains(err.Error(), "host") || !strings.Contains(err.Error(), `"`+h+`"`) {
			t.Errorf("--host %q: error %v, want one naming host and the value", h, err)
		}
	}
}

// TestMaxRuns: past Options.MaxRuns live runs and pairs together, a new
// run or pair is refused (429) with a message naming --max-runs, and
// nothing is started.
func TestMaxRuns(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, MaxRuns: 2, Scenario: writeScenario(t, "small-hex", smallHex)})
	if code, _, body := sweepPost(t, base+"/runs", url.Values{"scenario": {"steady-geostrophic"}}); code != http.StatusSeeOther {
		t.Fatalf("the second run: HTTP %d %q, want 303", code, body)
	}
	for _, r := range []struct {
		path string
		form url.Values
	}{
		{"/runs", url.Values{"scenario": {"steady-geostrophic"}}},
		{"/pairs", url.Values{"base": {"steady-geostrophic"}, "b.scheme": {"trisk-enstrophy"}}},
	} {
		code, _, body := sweepPost(t, base+r.path, r.form)
		body = html.UnescapeString(body)
		if code != http.StatusTooManyRequests || !strings.Contains(body, "--max-runs 2") {
			t.Errorf("POST %s past the bound: HTTP %d, want 429 naming --max-runs 2; page: %.300s", r.path, code, body)
		}
	}
	if n := len(srv.Runs()); n != 2 {
		t.Errorf("%d runs after the refusals, want 2", n)
	}
	if _, err := server.New(server.Options{MaxRuns: -1}); err == nil || !strings.Contains(err.Error(), "max-runs") {
		t.Errorf("MaxRuns -1: error %v, want one naming max-runs", err)
	}
}

// TestFormBodyLimits: every form refuses a body over its bound with 413
// and a message giving the bound, and starts nothing.
func TestFormBodyLimits(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "small-hex", smallHex), SweepDir: t.TempDir()})
	big := strings.Repeat("x", 64<<10)
	for _, path := range []string{"/runs", "/pairs", "/sweeps", "/sweep/1/stop"} {
		code, _, body := sweepPost(t, base+path, url.Values{"scenario": {"steady-geostrophic"}, "base": {"steady-geostrophic"}, "padding": {big}})
		body = html.UnescapeString(body)
		if code != http.StatusRequestEntityTooLarge || !strings.Contains(body, "larger than") || !strings.Contains(body, "bytes") {
			t.Errorf("POST %s with a 64 KiB body: HTTP %d, want 413 giving the bound; page: %.300s", path, code, body)
		}
	}
	if n := len(srv.Runs()); n != 1 {
		t.Errorf("%d runs after the refusals, want 1", n)
	}
}

// hex128 at a ring of 1024 states is 1024 × 16 384 cell-states, more than
// a run may keep.
func TestRingMemoryBound(t *testing.T) {
	_, err := server.New(server.Options{RingSize: 1024, Scenario: writeScenario(t, "hex128", hex128)})
	if err == nil || !strings.Contains(err.Error(), "ring") || !strings.Contains(err.Error(), "16384-cell") || !strings.Contains(err.Error(), "--ring") {
		t.Errorf("ring 1024 on 16 384 cells: error %v, want a refusal naming the ring, the grid and --ring", err)
	}
	// Live: a grid switch that the ring could not keep is refused and
	// changes nothing.
	srv, base := startServer(t, server.Options{Workers: 1, RingSize: 1024, Scenario: writeScenario(t, "small-hex", smallHex)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" }) // joined
	before := srv.Run("1").Info()
	r := cl.reply(cl.send("set-grid", map[string]any{"kind": "hex", "n": 128}), nil)
	if r.Type != "error" || r.fieldName() != "grid.n" || !strings.Contains(r.Message, "ring") || !strings.Contains(r.Message, "at most 512") {
		t.Errorf("set-grid hex 128 with ring 1024: %s %q (field %q), want an error on grid.n naming the ring and the largest that fits", r.Type, r.Message, r.fieldName())
	}
	if after := srv.Run("1").Info(); after != before {
		t.Errorf("the refused grid switch changed the run:\nbefore %+v\nafter  %+v", before, after)
	}
}
