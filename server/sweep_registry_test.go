package server

import (
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSweepListKeepsTheLatest starts one sweep more than the workbench
// lists: the oldest leaves the list (its page is gone) but its folder stays.
func TestSweepListKeepsTheLatest(t *testing.T) {
	root := t.TempDir()
	s, err := New(Options{Workers: 1, SweepDir: root})
	if err != nil {
		t.Fatal(err)
	}
	ts := httptest.NewServer(s)
	t.Cleanup(func() { s.Close(); ts.Close() })
	noFollow := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	var dirs []string
	for i := range MaxSweeps + 1 {
		resp, err := noFollow.PostForm(ts.URL+"/sweeps", url.Values{
			"scenario": {"steady-geostrophic"}, "vary": {"grid.n=4"}, "set": {"time.duration=60"},
		})
		if err != nil {
			t.Fatal(err)
		}
		resp.Body.Close()
		id, ok := strings.CutPrefix(resp.Header.Get("Location"), "/sweep/")
		if resp.StatusCode != http.StatusSeeOther || !ok {
			t.Fatalf("sweep %d: HTTP %d", i, resp.StatusCode)
		}
		// The progress stream closes when the sweep has ended.
		ev, err := http.Get(ts.URL + "/sweep/" + id + "/events")
		if err != nil {
			t.Fatal(err)
		}
		b, _ := io.ReadAll(ev.Body)
		ev.Body.Close()
		if !strings.Contains(string(b), `"state":"finished"`) {
			t.Fatalf("sweep %s: the stream ended with %s", id, b)
		}
		var in SweepInfo
		resp, err = http.Get(ts.URL + "/api/sweep/" + id)
		if err != nil {
			t.Fatal(err)
		}
		err = json.NewDecoder(resp.Body).Decode(&in)
		resp.Body.Close()
		if err != nil {
			t.Fatal(err)
		}
		dirs = append(dirs, in.Dir)
	}
	resp, err := http.Get(ts.URL + "/api/sweeps")
	if err != nil {
		t.Fatal(err)
	}
	var all []SweepInfo
	err = json.NewDecoder(resp.Body).Decode(&all)
	resp.Body.Close()
	if err != nil || len(all) != MaxSweeps || all[0].ID != "2" || all[MaxSweeps-1].ID != "5" {
		t.Fatalf("listed sweeps %+v (%v); want 2 to 5", all, err)
	}
	if resp, _ := http.Get(ts.URL + "/sweep/1"); resp.StatusCode != http.StatusNotFound {
		t.Errorf("the dropped sweep's page: HTTP %d, want 404", resp.StatusCode)
	}
	for _, d := range dirs {
		if _, err := os.Stat(filepath.Join(d, "sweep.csv")); err != nil {
			t.Errorf("sweep folder %s: %v; every sweep's files stay on disk", d, err)
		}
	}
}
