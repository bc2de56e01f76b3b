package tests

import (
	"bufio"
	"context"
	"io"
	"net/http"
	"net/url"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/coder/websocket"

	"gyrebench/server"
)

// TestServe runs server.Serve as `gyrebench serve` does: it prints the
// URL (and a warning when not on loopback), serves the page there, and
// returns when its context ends.
func TestServe(t *testing.T) {
	cases := []struct {
		addr string
		warn bool
	}{
		{"127.0.0.1:0", false},
		{"localhost:0", false},
		{"0.0.0.0:0", true},
	}
	for _, tc := range cases {
		t.Run(tc.addr, func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			pr, pw := io.Pipe()
			done := make(chan error, 1)
			go func() {
				done <- server.Serve(ctx, server.Options{Addr: tc.addr, Workers: 1, Stderr: pw})
				pw.Close()
			}()
			lines := bufio.NewScanner(pr)
			var warned bool
			var link string
			for link == "" && lines.Scan() {
				line := lines.Text()
				if strings.HasPrefix(line, "warning:") && strings.Contains(line, "network") {
					warned = true
				}
				if i := strings.Index(line, "http://"); i >= 0 {
					link = line[i:]
				}
			}
			go func() { _, _ = io.Copy(io.Discard, pr) }()
			if link == "" {
				t.Fatalf("Serve printed no URL (returned %v)", <-done)
			}
			if warned != tc.warn {
				t.Errorf("listening on %s: warning printed = %v, want %v", tc.addr, warned, tc.warn)
			}
			u, err := url.Parse(link)
			if err != nil || u.Port() == "0" || u.Port() == "" {
				t.Fatalf("printed URL %q does not name the port actually bound", link)
			}
			resp, err := http.Get(link)
			if err != nil {
				t.Fatal(err)
			}
			body, _ := io.ReadAll(resp.Body)
			resp.Body.Close()
			if resp.StatusCode != http.StatusOK || !strings.HasSuffix(resp.Request.URL.Path, "/run/1") {
				t.Fatalf("GET %s: %s at %s", link, resp.Status, resp.Request.URL)
			}
			for _, r := range []string{"field-canvas", "series-plot", "sim-time", "run-state", "scheme-select", "grid-select",
				"resolution-input", "dt-input", "integrator-select", "field-select", "play-pause", "step-once", "reset"} {
				if !strings.Contains(string(body), `data-role="`+r+`"`) {
					t.Errorf("the page has no data-role=%q", r)
				}
			}
			// A websocket client is connected when the context ends: Serve
			// must close it and return.
			wctx, wcancel := context.WithTimeout(context.Background(), hang)
			defer wcancel()
			c, _, err := websocket.Dial(wctx, "ws"+strings.TrimPrefix(link, "http")+"run/1/ws", nil)
			if err != nil {
				t.Fatal(err)
			}
			defer c.CloseNow()
			stopServe(t, cancel, done)
		})
	}
}

// TestServeBadOptions: a bad address, scenario, frame rate, ring size,
// bound on runs, write timeout or host name is an error naming it.
func TestServeBadOptions(t *testing.T) {
	cases := []struct {
		opt  server.Options
		want string
	}{
		{server.Options{Addr: "nonsense"}, "nonsense"},
		{server.Options{Addr: "127.0.0.1:0", Scenario: "no-such-scenario"}, "no-such-scenario"},
		{server.Options{Addr: "127.0.0.1:0", MaxFPS: -1}, "fps = -1: allowed 1 to 120"},
		{server.Options{Addr: "127.0.0.1:0", MaxFPS: 500}, "fps = 500: allowed 1 to 120"},
		{server.Options{Addr: "127.0.0.1:0", RingSize: 5000}, "ring = 5000: allowed 1 to 1024"},
		{server.Options{Addr: "127.0.0.1:0", MaxRuns: 1000}, "max-runs = 1000: allowed 1 to 256"},
		{server.Options{Addr: "127.0.0.1:0", WriteTimeout: -time.Second}, "write timeout = -1s: must be positive"},
		{server.Options{Addr: "127.0.0.1:0", Hosts: []string{"lab-pc:8080"}}, `host = "lab-pc:8080"`},
	}
	for _, tc := range cases {
		ctx, cancel := context.WithTimeout(context.Background(), hang)
		err := server.Serve(ctx, tc.opt)
		cancel()
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("Serve(%+v) = %v, want an error naming %q", tc.opt, err, tc.want)
		}
	}
}

// TestRunsAndWatchers: everyone at one address watches and controls one
// run; new runs start from the runs page; other sites are refused.
func TestRunsAndWatchers(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	a, b := dial(t, base, "1"), dial(t, base, "1")
	for _, cl := range []*client{a, b} {
		cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
	}
	// One watcher changes Δt; the other sees the new config and the marker.
	a.mustAck("set-dt", 90, nil)
	var conf, mark msg
	b.until(hang, "the change, seen by the other watcher", func(m msg) bool {
		switch m.Type {
		case "config":
			conf = m
		case "marker":
			mark = m
		}
		return conf.Type != "" && mark.Type != ""
	})
	if conf.Dt != 90 || mark.Kind != "dt" {
		t.Errorf("second watcher saw Δt = %g and marker %+v, want 90 and a dt marker", conf.Dt, mark)
	}

	// A new run from the runs page.
	noRedirect := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	resp, err := noRedirect.PostForm(base+"/runs", url.Values{"scenario": {"dipole"}})
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusSeeOther || resp.Header.Get("Location") != "/run/2" {
		t.Fatalf("POST /runs: %s to %q, want 303 to /run/2", resp.Status, resp.Header.Get("Location"))
	}
	c := dial(t, base, "2")
	c.until(hang, "the new run's config", func(m msg) bool {
		if m.Type == "config" {
			if m.Scheme != "al81" || m.Grid.Kind != "quad" {
				t.Errorf("run 2 config = %+v, want the dipole scenario (al81 on quad)", m)
			}
			return true
		}
		return false
	})
	// The runs page now offers the newest run's scenario for the next one.
	if page := string(get(t, base+"/runs")); !strings.Contains(page, `<option value="dipole"`) ||
		!regexp.MustCompile(`<option value="dipole"[^>]* selected`).MatchString(page) {
		t.Errorf("the runs page does not preselect the newest run's scenario, dipole")
	}

	// Refusals: an unknown scenario, a cross-site form, a cross-site
	// websocket.
	resp, err = noRedirect.PostForm(base+"/runs", url.Values{"scenario": {"nope"}})
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	if resp.StatusCode != http.StatusBadRequest || !strings.Contains(string(body), "nope") {
		t.Errorf("POST /runs scenario=nope: %s, body without the name", resp.Status)
	}
	req, _ := http.NewRequest(http.MethodPost, base+"/runs", strings.NewReader("scenario=dipole"))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	req.Header.Set("Origin", "http://elsewhere.example")
	resp, err = noRedirect.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusForbidden {
		t.Errorf("cross-site POST /runs: %s, want 403", resp.Status)
	}
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	ws, _, err := websocket.Dial(ctx, "ws"+strings.TrimPrefix(base, "http")+"/run/1/ws",
		&websocket.DialOptions{HTTPHeader: http.Header{"Origin": {"http://elsewhere.example"}}})
	if err == nil {
		ws.CloseNow()
		t.Error("a websocket from another site's page was accepted")
	}
}

// TestFrameRateCap: a run sends at most Options.MaxFPS field frames per
// second by the server's clock, however fast it steps (a small grid steps
// thousands of times a second here). The judgement is the upper bound
// that follows from the cap, measured on the server's own clock, so a
// slow or busy machine can only make it easier to meet; the frames it
// waits for only show that the stream is alive.
func TestFrameRateCap(t *testing.T) {
	const fps = 10
	_, base := startServer(t, server.Options{Workers: 1, MaxFPS: fps, Scenario: writeScenario(t, "small-hex", smallHex)})
	cl := dial(t, base, "1")
	cl.mustAck("play", nil, nil)
	var s0, s1 msg
	frames := 0
	cl.until(hang, "two seconds of running and two frames", func(m msg) bool {
		switch {
		case m.Type == "status" && m.State == server.StateRunning && s0.Type == "":
			s0, frames = m, 0
		case m.Type == "frame" && s0.Type != "":
			frames++
		case m.Type == "status" && s0.Type != "" && m.WallS-s0.WallS >= 2 && frames >= 2:
			s1 = m
			return true
		}
		return false
	})
	cl.mustAck("pause", nil, nil)
	span := s1.WallS - s0.WallS
	// Frames sent between the two status messages are at least 1/fps
	// apart, so there are at most fps·span + 1; one more may be a frame
	// sent just before s0 that the writer delivered after it.
	if limit := fps*span + 2; float64(frames) > limit {
		t.Errorf("%d frames in %.2f s (%d steps) with MaxFPS %d; want at most %.0f", frames, span, s1.Steps-s0.Steps, fps, limit)
	}
}
