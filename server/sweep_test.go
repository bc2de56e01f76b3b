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

// sweepServer starts a workbench whose sweeps go under root.
func sweepServer(t *testing.T, root string) *httptest.Server {
	t.Helper()
	s, err := New(Options{Workers: 1, SweepDir: root})
	if err != nil {
		t.Fatal(err)
	}
	ts := httptest.NewServer(s)
	t.Cleanup(func() { s.Close(); ts.Close() })
	return ts
}

// runSweep posts the new-sweep form, which must answer with a redirect
// to the sweep's page, and reads the sweep's progress stream, which
// closes when the sweep has ended. It returns the sweep's id and the
// stream.
func runSweep(t *testing.T, ts *httptest.Server, form url.Values) (id, stream string) {
	t.Helper()
	noFollow := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	resp, err := noFollow.PostForm(ts.URL+"/sweeps", form)
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	id, ok := strings.CutPrefix(resp.Header.Get("Location"), "/sweep/")
	if resp.StatusCode != http.StatusSeeOther || !ok {
		t.Fatalf("POST /sweeps: HTTP %d: %s", resp.StatusCode, body)
	}
	ev, err := http.Get(ts.URL + "/sweep/" + id + "/events")
	if err != nil {
		t.Fatal(err)
	}
	b, _ := io.ReadAll(ev.Body)
	ev.Body.Close()
	return id, string(b)
}

// TestSweepFormVariesHodge: the sweep form takes scheme.hodge as an axis
// on a distorted plane; both runs finish, and each run's recipe names the
// Hodge star it ran with (the consistent one is the default and is left
// out of the recipe).
func TestSweepFormVariesHodge(t *testing.T) {
	root := t.TempDir()
	ts := sweepServer(t, root)
	id, stream := runSweep(t, ts, url.Values{
		"scenario": {"steady-geostrophic"}, "vary": {"scheme.hodge=consistent,diagonal"},
		"set": {"grid.kind=hex\ngrid.n=8\ngrid.distort=0.15\ntime.duration=600"},
	})
	if !strings.Contains(stream, `"state":"finished"`) || !strings.Contains(stream, `"blew_up":0`) {
		t.Fatalf("sweep %s: the stream ended with %s", id, stream)
	}
	recipes, err := filepath.Glob(filepath.Join(root, "*", "*", "recipe.toml"))
	if err != nil || len(recipes) != 2 {
		t.Fatalf("recipes %v (%v); want one per run, 2", recipes, err)
	}
	diagonal := 0
	for _, p := range recipes {
		r, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if strings.Contains(string(r), `hodge = "diagonal"`) {
			diagonal++
		}
		if !strings.Contains(string(r), "distort = 0.15") {
			t.Errorf("%s does not carry grid.distort:\n%s", p, r)
		}
	}
	if diagonal != 1 {
		t.Errorf("%d of the 2 recipes name the diagonal Hodge star; want 1", diagonal)
	}
}

// TestSweepListKeepsTheLatest starts one sweep more than the workbench
// lists: the oldest leaves the list (its page is gone) but its folder stays.
func TestSweepListKeepsTheLatest(t *testing.T) {
	ts := sweepServer(t, t.TempDir())
	var dirs []string
	for range MaxSweeps + 1 {
		id, stream := runSweep(t, ts, url.Values{
			"scenario": {"steady-geostrophic"}, "vary": {"grid.n=4"}, "set": {"time.duration=60"},
		})
		if !strings.Contains(stream, `"state":"finished"`) {
			t.Fatalf("sweep %s: the stream ended with %s", id, stream)
		}
		var in SweepInfo
		resp, err := http.Get(ts.URL + "/api/sweep/" + id)
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
