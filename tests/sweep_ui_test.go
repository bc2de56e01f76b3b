package tests

import (
	"archive/zip"
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"html"
	"image/png"
	"io"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
	"gyrebench/sim/sweep"
)

// The sweeps launched from the workbench (server/sweep_routes.go): the
// form, the progress stream, the files, Stop, and the page in Chromium.

// A small convergence sweep: the steady geostrophic jet has an exact
// solution, so every run has an l2 error and the three spacings give a
// fitted order. An hour of simulated time at Δt = 60 s is 60 steps a run.
var smallSweep = url.Values{
	"scenario": {"steady-geostrophic"},
	"vary":     {"grid.n=8,16,32"},
	"set":      {"time.duration=3600"},
	"jobs":     {"2"},
}

// sweepServer starts the workbench on a small run, writing sweeps into a
// fresh folder, which it returns.
func sweepServer(t *testing.T) (string, string) {
	t.Helper()
	dir := t.TempDir()
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies), SweepDir: dir})
	return base, dir
}

var noFollow = &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}

// sweepPost posts the form and returns the status, the Location and the
// body.
func sweepPost(t *testing.T, u string, form url.Values) (int, string, string) {
	t.Helper()
	resp, err := noFollow.PostForm(u, form)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, resp.Header.Get("Location"), string(b)
}

// fetch returns the status, the content type and the body of a GET.
func fetch(t *testing.T, u string) (int, string, []byte) {
	t.Helper()
	resp, b := httpGet(t, u)
	return resp.StatusCode, resp.Header.Get("Content-Type"), b
}

// startSweep posts the form and returns the new sweep's id.
func startSweep(t *testing.T, base string, form url.Values) string {
	t.Helper()
	code, loc, body := sweepPost(t, base+"/sweeps", form)
	id, ok := strings.CutPrefix(loc, "/sweep/")
	if code != http.StatusSeeOther || !ok {
		t.Fatalf("POST /sweeps %v: HTTP %d, Location %q: %s", form, code, loc, html.UnescapeString(body))
	}
	return id
}

// progress reads a sweep's progress stream (server-sent events).
type progress struct {
	t    *testing.T
	body io.ReadCloser
	sc   *bufio.Scanner
}

func openProgress(t *testing.T, base, id string, timeout time.Duration) *progress {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), timeout)
	t.Cleanup(cancel)
	req, _ := http.NewRequestWithContext(ctx, http.MethodGet, base+"/sweep/"+id+"/events", nil)
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { resp.Body.Close() })
	if resp.StatusCode != http.StatusOK || !strings.HasPrefix(resp.Header.Get("Content-Type"), "text/event-stream") {
		t.Fatalf("progress stream: HTTP %d, %s", resp.StatusCode, resp.Header.Get("Content-Type"))
	}
	sc := bufio.NewScanner(resp.Body)
	sc.Buffer(nil, 1<<20)
	return &progress{t: t, body: resp.Body, sc: sc}
}

// next returns the next progress event; ok is false when the stream has
// closed. A stream that stalls past the timeout fails the test.
func (p *progress) next() (in server.SweepInfo, ok bool) {
	p.t.Helper()
	var event, data string
	for p.sc.Scan() {
		line := p.sc.Text()
		switch {
		case line == "":
			if event == "progress" {
				if err := json.Unmarshal([]byte(data), &in); err != nil {
					p.t.Fatalf("progress event %q: %v", data, err)
				}
				return in, true
			}
			event, data = "", ""
		case strings.HasPrefix(line, "event: "):
			event = strings.TrimPrefix(line, "event: ")
		case strings.HasPrefix(line, "data: "):
			data += strings.TrimPrefix(line, "data: ")
		}
	}
	if err := p.sc.Err(); err != nil {
		p.t.Fatalf("progress stream: %v", err)
	}
	return in, false
}

var sweepEnded = map[string]bool{"finished": true, "stopped": true, "failed": true}

// follow reads the stream to its end and returns every event; the last
// one must say the sweep has ended.
func (p *progress) follow() []server.SweepInfo {
	p.t.Helper()
	var all []server.SweepInfo
	for {
		in, ok := p.next()
		if !ok {
			break
		}
		all = append(all, in)
	}
	if len(all) == 0 || !sweepEnded[all[len(all)-1].State] {
		p.t.Fatalf("the progress stream closed without saying the sweep ended: %+v", all)
	}
	return all
}

func TestSweepUIRunsAndServesFiles(t *testing.T) {
	base, root := sweepServer(t)
	id := startSweep(t, base, smallSweep)
	events := openProgress(t, base, id, hang).follow()

	// The progress: three runs, counted up, each counted run ended.
	prev := -1
	for i, in := range events {
		ended := 0
		for _, r := range in.Runs {
			if r.State != "waiting" && r.State != "running" {
				ended++
			}
		}
		if in.Total != 3 || len(in.Runs) != 3 || in.Done < prev || in.Done > 3 || ended != in.Done {
			t.Errorf("event %d: done %d (before %d), total %d, %d runs of which %d ended; want total 3, done counting up to 3 and matching the runs",
				i, in.Done, prev, in.Total, len(in.Runs), ended)
		}
		prev = in.Done
	}
	last := events[len(events)-1]
	if last.State != "finished" || last.Done != 3 || last.BlewUp != 0 {
		t.Fatalf("last event: state %s, done %d, blew up %d, message %q; want finished, 3, 0", last.State, last.Done, last.BlewUp, last.Message)
	}
	for _, r := range last.Runs {
		if r.State != "done" || r.Steps != 60 || r.L2H == nil {
			t.Errorf("run %s: state %s, %d steps, l2 %v; want done after 3600 s / 60 s = 60 steps, with an l2 error", r.Name, r.State, r.Steps, r.L2H)
		}
	}
	t.Logf("%d progress events; the sweep took %.2f s; fitted orders %+v", len(events), last.ElapsedS, last.Fits)

	// Its own folder under the sweep root, shown on the page.
	if filepath.Dir(last.Dir) != root {
		t.Errorf("sweep folder %s is not directly under --sweeps %s", last.Dir, root)
	}
	_, _, page := fetch(t, base+"/sweep/"+id)
	pageText := html.UnescapeString(string(page))
	if !strings.Contains(pageText, last.Dir) {
		t.Errorf("the sweep page does not show its folder %s", last.Dir)
	}
	if n := strings.Count(pageText, `data-role="sweep-plot"`); n != 3 {
		t.Errorf("the finished page has %d sweep-plot images, want 3 (error, energy drift, enstrophy drift)", n)
	}

	// sweep.csv from the server: 3 rows, and the same bytes as sweep.Collect
	// writes from a copy of the run folders.
	code, ctype, csvBytes := fetch(t, base+"/sweep/"+id+"/file/sweep.csv")
	if code != http.StatusOK || !strings.HasPrefix(ctype, "text/csv") {
		t.Fatalf("sweep.csv: HTTP %d, %s", code, ctype)
	}
	recs, err := csv.NewReader(bytes.NewReader(csvBytes)).ReadAll()
	if err != nil || len(recs) != 4 {
		t.Fatalf("sweep.csv: %d records (%v), want a header and 3 rows:\n%s", len(recs), err, csvBytes)
	}
	copyDir := t.TempDir()
	copyTree(t, last.Dir, copyDir)
	for _, f := range []string{"sweep.csv", "sweep.json"} {
		os.Remove(filepath.Join(copyDir, f))
	}
	if _, err := sweep.Collect(copyDir); err != nil {
		t.Fatal(err)
	}
	if want, _ := os.ReadFile(filepath.Join(copyDir, "sweep.csv")); !bytes.Equal(csvBytes, want) {
		t.Errorf("sweep.csv from the server differs from sweep.Collect's:\n%s\nwant\n%s", csvBytes, want)
	}

	// The fitted order on the page is sweep.json's.
	var js struct {
		Fits []struct {
			Order float64  `json:"order"`
			Runs  []string `json:"runs"`
		} `json:"fits"`
	}
	_, _, jb := fetch(t, base+"/sweep/"+id+"/file/sweep.json")
	if err := json.Unmarshal(jb, &js); err != nil || len(js.Fits) != 1 || len(js.Fits[0].Runs) != 3 {
		t.Fatalf("sweep.json: %v, fits %+v; want one curve of 3 runs", err, js.Fits)
	}
	if o := strconv.FormatFloat(js.Fits[0].Order, 'f', 2, 64); !strings.Contains(pageText, `data-role="sweep-order">`+o+"<") {
		t.Errorf("the page does not show the fitted order %s of sweep.json", o)
	}

	// The plots: PNGs decode, SVGs are XML with an <svg> root.
	var pngs, svgs int
	for _, f := range last.Files {
		code, ctype, b := fetch(t, base+"/sweep/"+id+"/file/"+f)
		if code != http.StatusOK {
			t.Errorf("%s: HTTP %d", f, code)
			continue
		}
		switch filepath.Ext(f) {
		case ".png":
			pngs++
			img, err := png.Decode(bytes.NewReader(b))
			if err != nil || ctype != "image/png" || img.Bounds().Dx() < 100 {
				t.Errorf("%s (%s): %v", f, ctype, err)
			}
		case ".svg":
			svgs++
			if root, err := xmlRoot(b); err != nil || root != "svg" || ctype != "image/svg+xml" {
				t.Errorf("%s (%s): root element %q, %v; want <svg>", f, ctype, root, err)
			}
		}
	}
	if pngs != 3 || svgs != 3 {
		t.Errorf("%d PNG and %d SVG plots among %v, want 3 of each", pngs, svgs, last.Files)
	}

	// A run folder's own files, and the whole folder as a zip.
	r0 := last.Runs[0].Name
	code, _, sb := fetch(t, base+"/sweep/"+id+"/run/"+url.PathEscape(r0)+"/summary.json")
	var sum struct{ Steps int64 }
	if code != http.StatusOK || json.Unmarshal(sb, &sum) != nil || sum.Steps != 60 {
		t.Errorf("%s/summary.json: HTTP %d, %s", r0, code, sb)
	}
	_, ctype, zb := fetch(t, base+"/sweep/"+id+"/sweep.zip")
	zr, err := zip.NewReader(bytes.NewReader(zb), int64(len(zb)))
	if err != nil || ctype != "application/zip" {
		t.Fatalf("sweep.zip (%s): %v", ctype, err)
	}
	top := filepath.Base(last.Dir)
	inZip := map[string]*zip.File{}
	for _, f := range zr.File {
		inZip[f.Name] = f
	}
	for _, r := range last.Runs {
		if inZip[top+"/"+r.Name+"/summary.json"] == nil || inZip[top+"/"+r.Name+"/final.nc"] == nil {
			t.Errorf("sweep.zip lacks %s's summary.json or final.nc", r.Name)
		}
	}
	if f := inZip[top+"/sweep.csv"]; f == nil {
		t.Errorf("sweep.zip lacks sweep.csv")
	} else if rc, err := f.Open(); err == nil {
		b, _ := io.ReadAll(rc)
		rc.Close()
		if !bytes.Equal(b, csvBytes) {
			t.Errorf("sweep.csv in the zip differs from the download")
		}
	}

	// Only the files the sweep wrote: a file planted in the folder, other
	// names and every escape out of it are refused.
	if err := os.WriteFile(filepath.Join(last.Dir, "planted.txt"), []byte("not a sweep output"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, p := range []string{
		"/file/planted.txt",
		"/file/recipe.toml",
		"/file/..%2F..%2F..%2F..%2Fetc%2Fpasswd",
		"/file/%2Fetc%2Fpasswd",
		"/file/../../../etc/passwd",
		"/file/" + url.PathEscape(r0+"/summary.json"),
		"/run/" + url.PathEscape(r0) + "/..%2Fsweep.csv",
		"/run/" + url.PathEscape(r0) + "/..%2F..%2Fplanted.txt",
		"/run/..%2F" + url.PathEscape(r0) + "/summary.json",
		"/run/..%2F..%2F" + url.PathEscape(filepath.Base(last.Dir)) + "/sweep.csv",
		"/run/" + url.PathEscape(r0) + "/planted.txt",
		"/run/point-999/summary.json",
	} {
		code, _, b := fetch(t, base+"/sweep/"+id+p)
		if code != http.StatusNotFound || bytes.Contains(b, []byte("not a sweep output")) || bytes.Contains(b, []byte("root:")) {
			t.Errorf("GET /sweep/%s%s: HTTP %d, %q; want 404 and nothing of the file", id, p, code, b)
		}
	}

	// The JSON endpoints agree with the stream.
	var one server.SweepInfo
	var all []server.SweepInfo
	_, _, b1 := fetch(t, base+"/api/sweep/"+id)
	_, _, b2 := fetch(t, base+"/api/sweeps")
	if json.Unmarshal(b1, &one) != nil || json.Unmarshal(b2, &all) != nil || one.State != "finished" || one.Done != 3 || len(all) != 1 || all[0].ID != id {
		t.Errorf("/api/sweep/%s: %s; /api/sweeps: %s", id, b1, b2)
	}
}

// copyTree copies the plan and the run folders of a sweep.
func copyTree(t *testing.T, from, to string) {
	t.Helper()
	err := filepath.WalkDir(from, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(from, p)
		if d.IsDir() {
			return os.MkdirAll(filepath.Join(to, rel), 0o755)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(to, rel), b, 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
}

// xmlRoot returns the name of the document's root element.
func xmlRoot(b []byte) (string, error) {
	d := xml.NewDecoder(bytes.NewReader(b))
	for {
		tok, err := d.Token()
		if err != nil {
			return "", err
		}
		if se, ok := tok.(xml.StartElement); ok {
			return se.Name.Local, nil
		}
	}
}

func TestSweepUIRefusesBadForms(t *testing.T) {
	base, root := sweepServer(t)
	form := func(change map[string]string) url.Values {
		f := url.Values{}
		for k, v := range smallSweep {
			f[k] = v
		}
		for k, v := range change {
			f.Set(k, v)
		}
		return f
	}
	for _, tc := range []struct {
		name   string
		change map[string]string
		field  string
		want   []string
	}{
		{"unknown key", map[string]string{"vary": "grid.nn=8,16"}, "vary", []string{"vary grid.nn", "unknown key", "allowed", "grid.n"}},
		{"empty list", map[string]string{"vary": "grid.n="}, "vary", []string{"vary grid.n", "empty list"}},
		{"empty value", map[string]string{"vary": "grid.n=8,,16"}, "vary", []string{"grid.n=8,,16", "empty value"}},
		{"no vary", map[string]string{"vary": "  \n "}, "vary", []string{"vary", "at least one", "key=v1,v2"}},
		{"bad value", map[string]string{"vary": "grid.n=8,x"}, "vary", []string{"grid.n", `"x"`, "integer"}},
		{"too many runs", map[string]string{"vary": "grid.n=8,16,32,48,64\ntime.dt=10,20,30,40,50,60,70,80,90,100,110,120,130,140"}, "vary",
			[]string{"more than 64 runs", "5 × 14", "at most 64"}},
		{"grid too large", map[string]string{"vary": "grid.n=8,512"}, "vary", []string{"grid.n=512", "262144 cells", "131072"}},
		{"bad set", map[string]string{"set": "time.duration=soon"}, "set", []string{"set time.duration", `"soon"`, "number"}},
		{"unknown scenario", map[string]string{"scenario": "no-such-case"}, "scenario", []string{`scenario = "no-such-case"`, "steady-geostrophic"}},
		{"no such run", map[string]string{"scenario": "run:77"}, "scenario", []string{`scenario = "run:77"`, "no run 77"}},
		{"jobs zero", map[string]string{"jobs": "0"}, "jobs", []string{`jobs = "0"`, "from 1 to"}},
		{"jobs text", map[string]string{"jobs": "all"}, "jobs", []string{`jobs = "all"`, "whole number"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f := form(tc.change)
			code, _, body := sweepPost(t, base+"/sweeps", f)
			text := html.UnescapeString(body)
			if code != http.StatusBadRequest {
				t.Errorf("HTTP %d, want 400", code)
			}
			if !strings.Contains(body, `data-role="sweep-error" data-field="`+tc.field+`"`) {
				t.Errorf("no sweep-error message about the field %s in the page", tc.field)
			}
			i := strings.Index(text, `data-role="sweep-error"`)
			msg := text[max(i, 0):min(max(i, 0)+600, len(text))]
			for _, w := range tc.want {
				if !strings.Contains(msg, w) {
					t.Errorf("message %q lacks %q", msg, w)
				}
			}
			// The user's input comes back in the form.
			if v := strings.TrimSpace(f.Get("vary")); v != "" && !strings.Contains(text, v) {
				t.Errorf("the re-rendered form lost the vary input %q", v)
			}
			if !strings.Contains(body, `name="jobs" type="number" min="1" max="`) || !strings.Contains(text, `value="`+f.Get("jobs")+`"`) {
				t.Errorf("the re-rendered form lost the jobs input %q", f.Get("jobs"))
			}
		})
	}
	// Nothing started, nothing written.
	_, _, b := fetch(t, base+"/api/sweeps")
	if strings.TrimSpace(string(b)) != "[]" {
		t.Errorf("after refused forms, /api/sweeps = %s, want []", b)
	}
	if entries, err := os.ReadDir(root); err != nil || len(entries) != 0 {
		t.Errorf("after refused forms the sweep folder holds %d entries (%v), want none", len(entries), err)
	}
	// A form from another site is refused outright.
	req, _ := http.NewRequest(http.MethodPost, base+"/sweeps", strings.NewReader(smallSweep.Encode()))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	req.Header.Set("Sec-Fetch-Site", "cross-site")
	resp, err := noFollow.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusForbidden {
		t.Errorf("cross-site POST /sweeps: HTTP %d, want 403", resp.StatusCode)
	}
}

// TestSweepUIStop stops a long sweep mid-run: the run in flight writes
// its files so far (interrupted), the next never starts, no sweep.csv is
// written, and the page says stopped. While it runs, a second sweep is
// refused.
//
// With one job, the snapshot that reports run 0 done may come before or
// after run 1 is marked running (the worker goes on to it as the snapshot
// is published), so the test reads on until run 1 runs, and checks that
// run 2 waits the whole time, before it presses Stop.
func TestSweepUIStop(t *testing.T) {
	base, _ := sweepServer(t)
	id := startSweep(t, base, url.Values{
		"scenario": {"steady-geostrophic"},
		"vary":     {"time.duration=600,8640000,8640060"}, // 10 steps, then 100 days: far longer than the test
		"set":      {"grid.n=16"},
		"jobs":     {"1"},
	})
	p := openProgress(t, base, id, hang)
	for {
		in, ok := p.next()
		if !ok || in.State != "running" {
			t.Fatalf("before the first run ended: %+v, want running", in)
		}
		if in.Runs[2].State != "waiting" {
			t.Fatalf("with one job, run 2 is %s before run 1 has ended; want waiting", in.Runs[2].State)
		}
		if in.Done == 1 {
			if in.Runs[0].State != "done" || (in.Runs[1].State != "waiting" && in.Runs[1].State != "running") {
				t.Fatalf("with one job, after the first run the runs are %s, %s, %s; want done, then waiting or running, then waiting", in.Runs[0].State, in.Runs[1].State, in.Runs[2].State)
			}
			if in.Runs[1].State == "running" {
				break
			}
		}
	}

	code, _, body := sweepPost(t, base+"/sweeps", smallSweep)
	if code != http.StatusConflict || !strings.Contains(html.UnescapeString(body), "sweep "+id+" is running") {
		t.Errorf("a second sweep while %s runs: HTTP %d, want 409 naming the running sweep", id, code)
	}

	stopped := time.Now()
	if code, loc, _ := sweepPost(t, base+"/sweep/"+id+"/stop", nil); code != http.StatusSeeOther || loc != "/sweep/"+id {
		t.Fatalf("POST stop: HTTP %d, Location %q", code, loc)
	}
	rest := p.follow()
	last := rest[len(rest)-1]
	t.Logf("stopped %.2f s after Stop; %d events after it", time.Since(stopped).Seconds(), len(rest))
	if last.State != "stopped" || !strings.Contains(last.Message, "interrupted") {
		t.Fatalf("after Stop: state %s, message %q; want stopped, interrupted", last.State, last.Message)
	}
	if last.Runs[0].State != "done" || last.Runs[1].State != "interrupted" || last.Runs[2].State != "not run" || last.Interrupted != 1 || last.Done != 2 {
		t.Errorf("after Stop the runs are %s, %s, %s (%d ended, %d interrupted); want done, interrupted, not run", last.Runs[0].State, last.Runs[1].State, last.Runs[2].State, last.Done, last.Interrupted)
	}
	sb, err := os.ReadFile(filepath.Join(last.Dir, last.Runs[1].Name, "summary.json"))
	var sum struct {
		Interrupted bool  `json:"interrupted"`
		Steps       int64 `json:"steps"`
	}
	if err != nil || json.Unmarshal(sb, &sum) != nil || !sum.Interrupted || sum.Steps >= 144000 {
		t.Errorf("the run in flight at Stop: summary.json %s (%v); want interrupted before the end", sb, err)
	}
	if _, err := os.Stat(filepath.Join(last.Dir, last.Runs[2].Name)); !os.IsNotExist(err) {
		t.Errorf("the run after the stopped one has a folder (%v); want none", err)
	}
	if code, _, _ := fetch(t, base+"/sweep/"+id+"/file/sweep.csv"); code != http.StatusNotFound {
		t.Errorf("sweep.csv of a stopped sweep: HTTP %d, want 404", code)
	}
	_, _, page := fetch(t, base+"/sweep/"+id)
	if !strings.Contains(string(page), `data-role="sweep-state" data-state="stopped">stopped<`) {
		t.Errorf("the page of the stopped sweep does not say stopped")
	}
	// Stopping it again changes nothing; a new sweep may start now.
	if code, _, _ := sweepPost(t, base+"/sweep/"+id+"/stop", nil); code != http.StatusSeeOther {
		t.Errorf("second Stop: HTTP %d", code)
	}
	next := startSweep(t, base, url.Values{"scenario": {"steady-geostrophic"}, "vary": {"grid.n=8"}, "set": {"time.duration=600"}})
	if in := openProgress(t, base, next, hang).follow(); in[len(in)-1].State != "finished" {
		t.Errorf("the sweep after the stopped one: %+v", in[len(in)-1])
	}
}

// TestSweepUIFromRun sweeps the current choices of an open run: its
// scenario file (small decaying eddies on hex 32), not a built-in.
func TestSweepUIFromRun(t *testing.T) {
	base, _ := sweepServer(t)
	_, _, form := fetch(t, base+"/sweeps/new?run=1")
	if !strings.Contains(string(form), `<option value="run:1" title="the run&#39;s current choices, from its initial state" selected>`) {
		t.Errorf("/sweeps/new?run=1 does not preselect run 1")
	}
	id := startSweep(t, base, url.Values{"scenario": {"run:1"}, "vary": {"time.dt=60,120"}, "set": {"time.duration=600\ninitial.u_rms=4"}})
	events := openProgress(t, base, id, hang).follow()
	last := events[len(events)-1]
	if last.State != "finished" || last.Done != 2 {
		t.Fatalf("sweep of run 1: %+v", last)
	}
	for i, r := range last.Runs {
		b, err := os.ReadFile(filepath.Join(last.Dir, r.Name, "recipe.toml"))
		rec := string(b)
		if err != nil || !strings.Contains(rec, `case = "turbulence"`) || !strings.Contains(rec, "n = 32") || !strings.Contains(rec, "u_rms = 4") {
			t.Errorf("%s/recipe.toml (%v) is not run 1's scenario with the set applied:\n%s", r.Name, err, rec)
		}
		if want := int64(600 / (60 * (i + 1))); r.Steps != want {
			t.Errorf("%s: %d steps, want %d", r.Name, r.Steps, want)
		}
	}
	// No reference solution: drift plots, no fitted order.
	if len(last.Fits) != 0 || strings.Contains(strings.Join(last.Files, " "), "error.png") {
		t.Errorf("a case without a reference solution got fits %v, files %v", last.Fits, last.Files)
	}
}

// TestSweepBrowser fills the form in Chromium, follows the sweep on its
// page and waits until its plots have loaded.
func TestSweepBrowser(t *testing.T) {
	ctx := browser(t)
	base, _ := sweepServer(t)
	const wait = hang

	// From a run's page, its sweep link opens the form on its choices.
	do(t, ctx, chromedp.Navigate(base+"/run/1"))
	poll(t, ctx, "the run page", role("sweep-link")+` !== null`, wait)
	navigate(t, ctx, "/sweeps/new", chromedp.Click(sel("sweep-link")))
	poll(t, ctx, "the form", role("sweep-form")+` !== null && `+role("sweep-scenario")+`.value === 'run:1'`, wait)
	// A refused form comes back with the message and the input kept.
	choose(t, ctx, "sweep-scenario", "steady-geostrophic")
	eval[chromedp.Void](t, ctx, role("sweep-vary")+`.value = "grid.n=8,,32"`)
	if resp, err := chromedp.RunResponse(ctx, chromedp.Click(sel("sweep-start"))); err != nil || resp.Status != http.StatusBadRequest {
		t.Fatalf("submitting a bad vary line: %v, HTTP %v; want 400", err, resp)
	}
	poll(t, ctx, "the refusal", role("sweep-error")+`?.textContent.includes('empty value') && `+role("sweep-vary")+`.value === 'grid.n=8,,32' && `+role("sweep-vary")+`.getAttribute('aria-invalid') === 'true'`, wait)
	if got := eval[string](t, ctx, role("sweep-scenario")+`.value`); got != "steady-geostrophic" {
		t.Errorf("the refused form came back with scenario %q, want the one chosen", got)
	}
	screenshot(t, ctx, "", "sweep-00-refused.png")

	eval[chromedp.Void](t, ctx, role("sweep-vary")+`.value = "grid.n=8,16,32\nscheme.name=trisk-energy,apvm"`)
	eval[chromedp.Void](t, ctx, role("sweep-set")+`.value = "time.duration=7200"`)
	screenshot(t, ctx, "", "sweep-00-form.png")
	navigate(t, ctx, "/sweep/", chromedp.Click(sel("sweep-start")))
	poll(t, ctx, "the sweep to finish", role("sweep-state")+`.textContent === 'finished' && `+role("sweep-done")+`.textContent === '6'`, analysisHang) // six runs under the race detector: minutes
	plots := `[...document.querySelectorAll('[data-role="sweep-plot"]')]`
	poll(t, ctx, "the plots loaded", plots+`.length === 3 && `+plots+`.every((i) => i.complete && i.naturalWidth > 0)`, wait)
	if n := eval[float64](t, ctx, `document.querySelectorAll('[data-role="sweep-fits"] tbody tr').length`); n != 2 {
		t.Errorf("%g rows of fitted orders, want 2 (one per scheme)", n)
	}
	if d := eval[string](t, ctx, role("sweep-dir")+`.textContent`); !filepath.IsAbs(d) {
		t.Errorf("the page shows the folder %q, want an absolute path", d)
	}
	if eval[bool](t, ctx, role("sweep-stop")+`.disabled`) != true {
		t.Errorf("Stop is enabled on a finished sweep")
	}
	screenshot(t, ctx, "", "sweep-01-finished-top.png")
	screenshot(t, ctx, ".sweep-page", "sweep-02-finished-page.png")

	// A long sweep, stopped from its page: the Stop button, the stream's
	// "stopping" and "stopped", and the note in place of the plots.
	navigate(t, ctx, "/sweeps", chromedp.Click(chromedp.CSS(`.bar a[href="/sweeps/new"]`)))
	if n := eval[float64](t, ctx, `document.querySelectorAll('[data-role="sweep-list"] tbody tr').length`); n != 1 {
		t.Errorf("the sweep list has %g rows, want the finished sweep", n)
	}
	screenshot(t, ctx, "", "sweep-03-list.png")
	choose(t, ctx, "sweep-scenario", "steady-geostrophic")
	eval[chromedp.Void](t, ctx, role("sweep-vary")+`.value = "time.duration=600,8640000,8640060"`)
	eval[chromedp.Void](t, ctx, role("sweep-set")+`.value = "grid.n=16"`)
	eval[chromedp.Void](t, ctx, role("sweep-jobs")+`.value = "1"`)
	navigate(t, ctx, "/sweep/", chromedp.Click(sel("sweep-start")))
	poll(t, ctx, "the first run to end", role("sweep-done")+`.textContent === '1' && `+role("sweep-state")+`.textContent === 'running'`, wait)
	screenshot(t, ctx, "", "sweep-04-running.png")
	do(t, ctx, chromedp.Click(sel("sweep-stop")))
	poll(t, ctx, "the sweep stopped", role("sweep-state")+`.textContent === 'stopped' && `+role("sweep-results-body")+`?.dataset.state === 'stopped'`, wait)
	if got := eval[string](t, ctx, `document.querySelector('tr[data-run="1"]').dataset.state`); got != "interrupted" {
		t.Errorf("the run in flight at Stop shows %q, want interrupted", got)
	}
	screenshot(t, ctx, "", "sweep-05-stopped.png")
}
