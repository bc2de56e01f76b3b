package tests

import (
	"math"
	"net/url"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/coder/websocket"

	"gyrebench/scenarios"
	"gyrebench/server"
	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/ncout"
	"gyrebench/sim/scenario"
)

// Bad set-dissipation commands are refused naming the coefficient, the
// value and what is allowed, and change nothing; a good one is marked on
// the plot.
func TestDissipationCommand(t *testing.T) {
	srv, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	cl := dial(t, base, "1")
	cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
	cl.mustAck("step", nil, nil)
	before := srv.Run("1").Info()
	for _, tc := range []struct{ name, raw, field, text string }{
		{"negative", `{"cmd":"set-dissipation","value":{"hyperviscosity":-1}}`, "dissipation", "scheme.hyperviscosity = -1"},
		{"text", `{"cmd":"set-dissipation","value":{"viscosity":"lots"}}`, "scheme.viscosity", "lots"},
		{"unknown key", `{"cmd":"set-dissipation","value":{"smagorinsky":0.1}}`, "dissipation", "smagorinsky"},
		{"not an object", `{"cmd":"set-dissipation","value":5}`, "dissipation", "5"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cl.t = t
			cl.sendRaw(websocket.MessageText, []byte(tc.raw))
			var r msg
			cl.until(hang, "an error reply", func(m msg) bool {
				if m.Type == "ack" || m.Type == "marker" || m.Type == "config" {
					t.Fatalf("%s was accepted (%s)", tc.raw, m.Type)
				}
				r = m
				return m.Type == "error"
			})
			if r.fieldName() != tc.field || !strings.Contains(r.Message, tc.text) || !containsAny(r.Message, "≥ 0", "must be", "want") {
				t.Errorf("error field %q message %q; want field %q quoting %q and saying what is allowed", r.fieldName(), r.Message, tc.field, tc.text)
			}
		})
	}
	cl.t = t
	if after := srv.Run("1").Info(); after != before {
		t.Errorf("refused commands changed the run:\n%+v\n%+v", before, after)
	}
	var mark msg
	cl.mustAck("set-dissipation", map[string]any{"hyperviscosity": 1e14}, func(m msg) {
		if m.Type == "marker" {
			mark = m
		}
	})
	if mark.Kind != "dissipation" || !strings.Contains(mark.Label, "ν₄ = 1e+14") {
		t.Errorf("marker %+v, want kind dissipation labelled with ν₄", mark)
	}
}

// In a pair, set-dissipation changes the side it names: after it and N
// lockstep steps, side B is bit for bit a solo run that had the
// hyperviscosity from the start, and side A the inviscid run.
func TestPairDissipationSide(t *testing.T) {
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "eddies", eddies)})
	id := startPair(t, base, url.Values{"base": {"run:1"}})
	pc := dialPair(t, base, id)
	pc.must("b", "set-dissipation", map[string]any{"hyperviscosity": 1e14}, nil)
	const n = 12
	for i := 0; i < n; i++ {
		pc.must("", "step", nil, nil)
	}
	for i, cfg := range pairConfigs(t, eddies, func(b *sim.Config) { b.Scheme.Hyperviscosity = 1e14 }) {
		side := pairSides[i]
		want, _ := soloState(t, cfg, n)
		got := stateOf(t, get(t, base+"/pair/"+id+"/"+side+"/final.nc"))
		for k := range got {
			if math.Float64bits(got[k]) != math.Float64bits(want[k]) {
				t.Fatalf("side %s after %d steps: state[%d] = %.17g, the solo run (ν₄ = %g) has %.17g", side, n, k, got[k], cfg.Scheme.Hyperviscosity, want[k])
			}
		}
	}
}

// gridScaleVorticity returns Σ_e l_e d_e ((ζ_v1 − ζ_v0)/l_e)², the
// squared gradient of the relative vorticity of the run's live state
// (final.nc over HTTP), which the grid-scale noise dominates.
func gridScaleVorticity(t *testing.T, base string, msh *mesh.Mesh) float64 {
	t.Helper()
	path := filepath.Join(t.TempDir(), "final.nc")
	if err := os.WriteFile(path, get(t, base+"/run/1/final.nc"), 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := ncout.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	zeta := f.Var("relative_vorticity").Data.([]float64)
	if len(zeta) != msh.NumVertices {
		t.Fatalf("final.nc has %d vertices, the mesh %d", len(zeta), msh.NumVertices)
	}
	s := 0.0
	for e := 0; e < msh.NumEdges; e++ {
		g := (zeta[msh.EdgeVertices[2*e+1]] - zeta[msh.EdgeVertices[2*e]]) / msh.EdgeLength[e]
		s += msh.EdgeLength[e] * msh.DualLength[e] * g * g
	}
	return s
}

// TestDissipationBrowser runs the shear layer until its vorticity carries
// grid-scale noise, turns hyperviscosity on through the workbench's input
// (ν₄ chosen, by package dissip's grid scale, for a grid-scale e-folding
// time of one hour) and runs six e-folding times more. Asserted are
// properties that do not depend on timing: the hint shows the e-folding
// time, the change is marked on the plot, the server-side squared
// vorticity gradient falls, and the budget panel holds a negative
// dissipation term of energy and enstrophy. Screenshots before and after
// are left in artifacts/ to be looked at.
func TestDissipationBrowser(t *testing.T) {
	ctx := browser(t)
	src, err := scenarios.Source("shear-rollup")
	if err != nil {
		t.Fatal(err)
	}
	sc, err := scenario.Parse(src, "shear-rollup")
	if err != nil {
		t.Fatal(err)
	}
	probe, err := sim.NewModel(sc.Config, 1)
	if err != nil {
		t.Fatal(err)
	}
	msh := probe.Mesh()
	nu4 := probe.GridScale().HyperviscosityFor(3600)
	probe.Close()
	_, base := startServer(t, server.Options{Workers: 1, Scenario: "shear-rollup"})
	const wait = 300 * time.Second

	do(t, ctx, chromedp.Navigate(base+"/"))
	poll(t, ctx, "the first frame", role("field-canvas")+`.dataset.frames > 0`, hang)
	choose(t, ctx, "field-select", "vorticity")
	if h := eval[string](t, ctx, role("dissipation-hint")+`.textContent`); !strings.Contains(h, "no dissipation") || !strings.Contains(h, "ν₄ = C·d⁴/τ") {
		t.Errorf("dissipation hint %q: want the scaling and that nothing is damped", h)
	}
	do(t, ctx, chromedp.Click(sel("play-pause")))
	const before = 8 * 86400.0
	poll(t, ctx, "eight simulated days", role("sim-time")+`.dataset.seconds >= `+strconv.Itoa(int(before)), wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the pause", role("run-state")+`.textContent === 'paused'`, hang)
	screenshot(t, ctx, sel("field-canvas"), "dissipation-1-before.png")
	g0 := gridScaleVorticity(t, base, msh)
	t0 := simSeconds(t, ctx)

	typeInto(t, ctx, "hyperviscosity-input", strconv.FormatFloat(nu4, 'g', 6, 64))
	poll(t, ctx, "the hint to show the e-folding time", role("dissipation-hint")+`.textContent.includes('e-folding time now 60 min')`, hang)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "six grid-scale e-folding times", role("sim-time")+`.dataset.seconds >= `+strconv.Itoa(int(t0+6*3600)), wait)
	do(t, ctx, chromedp.Click(sel("play-pause")))
	poll(t, ctx, "the pause", role("run-state")+`.textContent === 'paused'`, hang)
	poll(t, ctx, "the plot to catch up", role("budget-plot")+`.dataset.energyRateDissipation !== ''`, hang)
	screenshot(t, ctx, sel("field-canvas"), "dissipation-2-after.png")
	screenshot(t, ctx, "", "dissipation-3-page.png")
	g1 := gridScaleVorticity(t, base, msh)
	t.Logf("ν₄ = %.4g m⁴/s from t = %.3g d: Σ l d |∇ζ|² %.4g → %.4g (ratio %.3g)", nu4, t0/86400, g0, g1, g1/g0)
	if !(g1 < 0.5*g0) {
		t.Errorf("the squared vorticity gradient went from %g to %g in six e-folding times; want it at least halved", g0, g1)
	}

	series := eval[string](t, ctx, role("budget-plot")+`.dataset.series`)
	if !strings.Contains(series, "energy_rate_dissipation") || !strings.Contains(series, "enstrophy_rate_dissipation") {
		t.Errorf("budget panel series %q lack the dissipation terms", series)
	}
	for _, k := range []string{"energyRateDissipation", "enstrophyRateDissipation"} {
		v, err := strconv.ParseFloat(eval[string](t, ctx, role("budget-plot")+`.dataset.`+k), 64)
		if err != nil || !(v < 0) || math.IsInf(v, 0) {
			t.Errorf("budget panel %s = %v (%v), want a negative rate", k, v, err)
		}
	}
}
