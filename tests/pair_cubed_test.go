package tests

import (
	"html"
	"io"
	"net/http"
	"net/url"
	"strings"
	"testing"

	"gyrebench/server"
)

// TestPairCubedAndHodge: the pair form starts a pair of consistent
// against diagonal Hodge star on one cubed sphere, which is one grid (so
// A − B is sent), zero at the start and not zero after steps (the two
// stars differ on the cubed sphere's non-orthogonal dual); and a pair of
// icosahedral level 3 against cubed n = 12, at similar cell counts (642
// and 864), which says its grids differ. An unknown Hodge star is refused
// naming the side and the field.
func TestPairCubedAndHodge(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "sphere3", sphere3)})

	id := startPair(t, base, url.Values{"base": {"run:1"}, "a.grid": {"cubed"}, "a.n": {"12"}, "b.grid": {"cubed"}, "b.n": {"12"}, "b.hodge": {"diagonal"}})
	pc := dialPair(t, base, id)
	st, first := pc.firstDiff()
	if !st.SameGrid {
		t.Fatal("consistent against diagonal H on one cubed sphere: the pair says its grids differ")
	}
	if first.min != 0 || first.max != 0 {
		t.Errorf("A − B at t = 0: range [%g, %g], want [0, 0]", first.min, first.max)
	}
	// The frame of the fifth step may come before or after its ack (the
	// frame slot and the reply queue are written in either order), so
	// the frames that arrive while waiting for the acks are looked at too.
	var later pmsg
	see := func(p pmsg) {
		if p.side == "diff" && p.m.Type == "frame" && p.m.bin.Steps >= 5 {
			later = p
		}
	}
	for i := 0; i < 5; i++ {
		pc.must("", "step", nil, see)
	}
	if later.vals == nil {
		pc.until("an A − B frame after 5 steps", func(p pmsg) bool {
			see(p)
			return later.vals != nil
		})
	}
	if later.min == 0 && later.max == 0 {
		t.Error("A − B after 5 steps is exactly 0: the diagonal H changed nothing on the cubed sphere")
	}
	t.Logf("consistent − diagonal depth after 5 steps: [%g, %g] m", later.min, later.max)

	id2 := startPair(t, base, url.Values{"base": {"run:1"}, "b.grid": {"cubed"}, "b.n": {"12"}})
	pc2 := dialPair(t, base, id2)
	var st2 pairStatus
	pc2.until("the pair status", func(p pmsg) bool {
		if p.m.Type == "pair" {
			st2 = p.pair
			return true
		}
		return false
	})
	if st2.SameGrid {
		t.Error("icosahedral against cubed: the pair says its sides share a grid")
	}

	resp, err := http.PostForm(base+"/pairs", url.Values{"base": {"run:1"}, "b.hodge": {"exact"}})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	body := html.UnescapeString(string(b))
	if resp.StatusCode != http.StatusBadRequest || !strings.Contains(body, `B: scheme.hodge = "exact"`) {
		t.Errorf("b.hodge = exact: HTTP %d; want 400 naming B and scheme.hodge", resp.StatusCode)
	}
}
