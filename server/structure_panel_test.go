package server

import (
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSweepFormVariesHodge: the sweep form takes scheme.hodge as an axis
// on a distorted plane; both runs finish, and each run's recipe names the
// Hodge star it ran with (the consistent one is the default and is left
// out of the recipe).
func TestSweepFormVariesHodge(t *testing.T) {
	root := t.TempDir()
	s, err := New(Options{Workers: 1, SweepDir: root})
	if err != nil {
		t.Fatal(err)
	}
	ts := httptest.NewServer(s)
	t.Cleanup(func() { s.Close(); ts.Close() })
	noFollow := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	resp, err := noFollow.PostForm(ts.URL+"/sweeps", url.Values{
		"scenario": {"steady-geostrophic"}, "vary": {"scheme.hodge=consistent,diagonal"},
		"set": {"grid.kind=hex\ngrid.n=8\ngrid.distort=0.15\ntime.duration=600"},
	})
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
	if !strings.Contains(string(b), `"state":"finished"`) || !strings.Contains(string(b), `"blew_up":0`) {
		t.Fatalf("sweep %s: the stream ended with %s", id, b)
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
