package sweep

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/stat"

	"gyrebench/sim"
	"gyrebench/sim/batch"
	"gyrebench/sim/diag"
	"gyrebench/sim/figure/figuretest"
	"gyrebench/sim/internal/testcheck"
)

// geostrophic returns the steady geostrophic jet, whose exact solution is
// its initial state, for one hour at Δt = 60 s.
func geostrophic() sim.Config {
	c := sim.DefaultConfig()
	c.Title = "steady jet"
	c.Initial.Case = "geostrophic-steady"
	c.Time.Integrator = "rk4"
	c.Time.Dt = 60
	c.Time.Duration = 3600
	c.Output.Every = 1200
	return c
}

func mustPlan(t *testing.T, base sim.Config, sets []string, vary ...string) *Plan {
	t.Helper()
	var axes []Axis
	for _, v := range vary {
		a, err := ParseVary(v)
		if err != nil {
			t.Fatal(err)
		}
		axes = append(axes, a)
	}
	p, err := NewPlan(base, "test", "a test sweep", sets, axes)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestParseVary(t *testing.T) {
	for _, tc := range []struct {
		in      string
		key     string
		values  []string
		wantErr []string // substrings of the message
	}{
		{in: "grid.n=8,16, 32", key: "grid.n", values: []string{"8", "16", "32"}},
		{in: "scheme.name=apvm", key: "scheme.name", values: []string{"apvm"}},
		{in: "grid.n=", wantErr: []string{"--vary grid.n", "empty list"}},
		{in: "grid.n=8,,16", wantErr: []string{"--vary grid.n=8,,16", "empty value"}},
		{in: "grid.n=8,8", wantErr: []string{"--vary grid.n=8,8", `"8" is repeated`}},
		{in: "grid.n", wantErr: []string{`--vary "grid.n"`, "key=v1,v2"}},
		{in: "=8", wantErr: []string{`--vary "=8"`}},
	} {
		a, err := ParseVary(tc.in)
		if tc.wantErr != nil {
			if err == nil {
				t.Errorf("ParseVary(%q) = %v, want an error", tc.in, a)
				continue
			}
			for _, s := range tc.wantErr {
				if !strings.Contains(err.Error(), s) {
					t.Errorf("ParseVary(%q): message %q lacks %q", tc.in, err, s)
				}
			}
			continue
		}
		if err != nil || a.Key != tc.key || strings.Join(a.Values, "|") != strings.Join(tc.values, "|") {
			t.Errorf("ParseVary(%q) = %+v, %v; want %s %v", tc.in, a, err, tc.key, tc.values)
		}
	}
}

func TestNewPlanRejects(t *testing.T) {
	many := make([]string, 40)
	for i := range many {
		many[i] = strconv.Itoa(4 + 2*i)
	}
	for _, tc := range []struct {
		name    string
		vary    []string
		wantErr []string
	}{
		{"unknown key", []string{"grid.size=8,16"}, []string{"--vary grid.size", "unknown key"}},
		{"wrong type", []string{"grid.n=8,x"}, []string{"--vary grid.n", `"x"`, "integer"}},
		{"not a number", []string{"time.dt=60,fast"}, []string{"--vary time.dt", `"fast"`, "number"}},
		{"unknown case parameter", []string{"initial.width=1,2"}, []string{"initial.width", "not a parameter"}},
		{"invalid combination", []string{"scheme.name=trisk-energy,al81"}, []string{"--vary scheme.name=al81", "quad"}},
		{"odd hex n", []string{"grid.n=8,9"}, []string{"--vary grid.n=9", "even"}},
		{"key twice", []string{"grid.n=8", "grid.n=16"}, []string{"--vary grid.n", "twice"}},
		{"too many runs", []string{"grid.n=" + strings.Join(many, ","), "time.dt=10,20,30,40,50,60,70,80,90,100,110,120,130,140,150,160,170,180,190,200,210,220,230,240,250,260"},
			[]string{"--vary", "40 × 26", "at most 1000"}},
		{"nothing varied", nil, []string{"--vary", "at least one"}},
	} {
		var axes []Axis
		for _, v := range tc.vary {
			a, err := ParseVary(v)
			if err != nil {
				t.Fatalf("%s: %v", tc.name, err)
			}
			axes = append(axes, a)
		}
		_, err := NewPlan(geostrophic(), "test", "", nil, axes)
		testcheck.ErrorSays(t, tc.name, err, tc.wantErr...)
	}
}

// The product runs the last axis fastest; values are canonical (as the
// recipe writes them); folders are named point-001, … in that order, and
// the choices of each are in the plan, whatever characters they hold.
func TestPlanOrderAndNames(t *testing.T) {
	p := mustPlan(t, geostrophic(), []string{"time.duration=600"}, "grid.n=8,16", "time.dt=60,1.2e2", "title=a b/c")
	want := []struct{ dir, choices string }{
		{"point-001", "grid.n=8,time.dt=60,title=a b/c"},
		{"point-002", "grid.n=8,time.dt=120,title=a b/c"},
		{"point-003", "grid.n=16,time.dt=60,title=a b/c"},
		{"point-004", "grid.n=16,time.dt=120,title=a b/c"},
	}
	if len(p.Runs) != len(want) {
		t.Fatalf("%d runs, want %d", len(p.Runs), len(want))
	}
	for i, r := range p.Runs {
		if r.Name != want[i].dir || r.Index != i || choiceText(r.Choices) != want[i].choices {
			t.Errorf("run %d: %q (index %d, choices %s), want %q with %s", i, r.Name, r.Index, choiceText(r.Choices), want[i].dir, want[i].choices)
		}
		if r.Config.Time.Duration != 600 {
			t.Errorf("run %d: --set time.duration not applied: %g", i, r.Config.Time.Duration)
		}
	}
	if c := p.Runs[3].Config; c.Grid.N != 16 || c.Time.Dt != 120 || c.Title != "a b/c" {
		t.Errorf("run 3 config: n %d, dt %g, title %q", c.Grid.N, c.Time.Dt, c.Title)
	}
}

// FitOrder against gonum's least-squares line through the logarithms.
func TestFitOrderMatchesLinearRegression(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 20 {
		n := 2 + trial%5
		x, y := make([]float64, n), make([]float64, n)
		lx, ly := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = math.Exp(rng.Float64()*6 - 3)
			y[i] = math.Exp(rng.NormFloat64() * 4)
			lx[i], ly[i] = math.Log(x[i]), math.Log(y[i])
		}
		order, icpt, ok := FitOrder(x, y)
		alpha, beta := stat.LinearRegression(lx, ly, nil, false)
		if !ok || math.Abs(order-beta) > 1e-9*math.Max(1, math.Abs(beta)) || math.Abs(icpt-alpha) > 1e-9*math.Max(1, math.Abs(alpha)) {
			t.Errorf("trial %d: FitOrder = %g, %g (ok %v); LinearRegression slope %g, intercept %g", trial, order, icpt, ok, beta, alpha)
		}
	}
	for _, tc := range []struct {
		name string
		x, y []float64
	}{
		{"one point", []float64{1}, []float64{1}},
		{"one spacing", []float64{2, 2}, []float64{1, 3}},
		{"zero error", []float64{1, 2}, []float64{0, 1}},
		{"negative spacing", []float64{-1, 2}, []float64{1, 1}},
		{"infinite error", []float64{1, 2}, []float64{math.Inf(1), 1}},
		{"lengths differ", []float64{1, 2, 3}, []float64{1, 2}},
	} {
		if o, _, ok := FitOrder(tc.x, tc.y); ok {
			t.Errorf("%s: FitOrder = %g, ok; want not ok", tc.name, o)
		}
	}
}

func readCSV(t *testing.T, path string) [][]string { return testcheck.ReadCSV(t, path) }

func column(t *testing.T, recs [][]string, name string) []string {
	t.Helper()
	for i, h := range recs[0] {
		if h == name {
			var out []string
			for _, r := range recs[1:] {
				out = append(out, r[i])
			}
			return out
		}
	}
	t.Fatalf("no column %q in %v", name, recs[0])
	return nil
}

func floats(t *testing.T, s []string) []float64 {
	t.Helper()
	out := make([]float64, len(s))
	for i, v := range s {
		f, err := strconv.ParseFloat(v, 64)
		if err != nil {
			t.Fatalf("%q: %v", v, err)
		}
		out[i] = f
	}
	return out
}

// checkPlots decodes every PNG (960 × 600) and parses every SVG.
func checkPlots(t *testing.T, dir string, names ...string) {
	t.Helper()
	for _, n := range names {
		b, err := os.ReadFile(filepath.Join(dir, n))
		if err != nil {
			t.Errorf("%s: %v", n, err)
			continue
		}
		switch filepath.Ext(n) {
		case ".png":
			img, err := png.Decode(bytes.NewReader(b))
			if err != nil {
				t.Errorf("%s: %v", n, err)
				continue
			}
			if sz := img.Bounds().Size(); sz.X != PlotWidth || sz.Y != PlotHeight {
				t.Errorf("%s: %v, want %d × %d", n, sz, PlotWidth, PlotHeight)
			}
		case ".svg":
			root, texts, err := figuretest.Parse(b)
			if err != nil {
				t.Fatalf("%s: %v", n, err)
			}
			if root != "svg" {
				t.Errorf("%s: root element %q, want svg", n, root)
			}
			if !strings.Contains(texts, "drift") && !strings.Contains(texts, "order") {
				t.Errorf("%s: no title or legend text found in %q", n, texts)
			}
		}
	}
}

// Steady geostrophic flow after one hour on quad and hex, n = 8, 16, 32:
// TRiSK on these uniform grids is second order (Ringler, Thuburn, Klemp &
// Skamarock 2010, J. Comput. Phys. 229, 3065–3090, from memory; measured
// fits here: l2 2.03 (quad) and 1.98 (hex), l∞ 1.93 and 1.94), so the
// fitted l2 order must be within 0.1 of 2 and the l∞ order within 0.3. The order in sweep.json must equal an independent
// least-squares fit (gonum/stat) of the sweep.csv columns, and the
// spacing of these grids is exactly L/n (cell centres L/n apart in a row
// on quad and hex alike).
func TestConvergenceSweep(t *testing.T) {
	dir := t.TempDir()
	p := mustPlan(t, geostrophic(), nil, "grid.kind=quad,hex", "grid.n=8,16,32")
	calls := 0
	started := map[int]bool{}
	var setups atomic.Int32
	res, out, err := Execute(context.Background(), p, dir, Options{Jobs: 2, Workers: 1,
		Setup: func() { setups.Add(1) },
		Started: func(r *Run) {
			if started[r.Index] {
				t.Errorf("Started(%s) twice", r.Name)
			}
			started[r.Index] = true
		},
		Done: func(done, total int, r *Run, sum *batch.Summary, err error) {
			calls++
			if done != calls || total != 6 || err != nil || sum == nil || !started[r.Index] {
				t.Errorf("Done(%d, %d, %s, %v, %v) as call %d, started %v", done, total, r.Name, sum, err, calls, started[r.Index])
			}
		}})
	if err != nil {
		t.Fatal(err)
	}
	if n := setups.Load(); n != 2 {
		t.Errorf("Setup called %d times, want once per job goroutine (2)", n)
	}
	if out != (Outcome{Runs: 6}) || calls != 6 || len(started) != 6 {
		t.Errorf("outcome %+v after %d Done calls, want 6 runs, no blow-up", out, calls)
	}
	recs := readCSV(t, filepath.Join(dir, CSVFile))
	if got := strings.Join(recs[0], ","); got != strings.Join(CSVHeader([]string{"grid.kind", "grid.n"}), ",") {
		t.Errorf("header %s", got)
	}
	runs := column(t, recs, "run")
	for i, r := range p.Runs {
		if i >= len(runs) || runs[i] != r.Name {
			t.Fatalf("sweep.csv rows %v, want the product order of %v", runs, p.Runs)
		}
	}
	kinds, ns := column(t, recs, "grid.kind"), floats(t, column(t, recs, "grid.n"))
	spacing, l2 := floats(t, column(t, recs, "spacing_m")), floats(t, column(t, recs, "l2_h"))
	linf := floats(t, column(t, recs, "linf_h"))
	for i := range spacing {
		if want := 1e6 / ns[i]; math.Abs(spacing[i]-want) > 1e-9*want {
			t.Errorf("%s: spacing_m = %g, want L/n = %g", runs[i], spacing[i], want)
		}
	}
	var js struct {
		Fits []Fit `json:"fits"`
	}
	b, err := os.ReadFile(filepath.Join(dir, JSONFile))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &js); err != nil {
		t.Fatal(err)
	}
	if len(js.Fits) != 2 || len(res.Fits) != 2 {
		t.Fatalf("sweep.json has %d fits, the result %d; want one per grid kind", len(js.Fits), len(res.Fits))
	}
	for _, f := range js.Fits {
		kind := f.Group[0].Value
		var lx, ly, lyInf []float64
		for i := range kinds {
			if kinds[i] == kind {
				lx, ly = append(lx, math.Log(spacing[i])), append(ly, math.Log(l2[i]))
				lyInf = append(lyInf, math.Log(linf[i]))
			}
		}
		_, beta := stat.LinearRegression(lx, ly, nil, false)
		_, betaInf := stat.LinearRegression(lx, lyInf, nil, false)
		t.Logf("%s: fitted order l2 %.4f (l2 %v), l∞ %.4f (l∞ %v)", kind, f.Order, f.L2H, f.OrderLInf, f.LInfH)
		if math.Abs(f.Order-beta) > 1e-9 || math.Abs(f.OrderLInf-betaInf) > 1e-9 {
			t.Errorf("%s: sweep.json orders l2 %.12g, l∞ %.12g; least squares of sweep.csv %.12g, %.12g", kind, f.Order, f.OrderLInf, beta, betaInf)
		}
		if math.Abs(f.OrderLInf-2) > 0.3 {
			t.Errorf("%s: l∞ order %.3f, want 2 ± 0.3", kind, f.OrderLInf)
		}
		if math.Abs(f.Order-2) > 0.1 {
			t.Errorf("%s: order %.3f, want 2 ± 0.1", kind, f.Order)
		}
		if len(f.Group) != 1 || f.Group[0].Key != "grid.kind" || len(f.Runs) != 3 {
			t.Errorf("fit group %+v over %v, want grid.kind and 3 runs", f.Group, f.Runs)
		}
	}
	checkPlots(t, dir, "error.png", "error.svg", "energy-drift.png", "energy-drift.svg", "enstrophy-drift.png", "enstrophy-drift.svg")
}

// Collect reads back what Execute wrote: the same sweep.csv from the
// folders alone, with or without the plan; a missing or foreign folder is
// an error that writes nothing.
func TestCollect(t *testing.T) {
	dir := t.TempDir()
	p := mustPlan(t, geostrophic(), []string{"time.duration=1200"}, "grid.n=8,16")
	if _, _, err := Execute(context.Background(), p, dir, Options{Jobs: 2}); err != nil {
		t.Fatal(err)
	}
	want, _ := os.ReadFile(filepath.Join(dir, CSVFile))
	os.Remove(filepath.Join(dir, CSVFile))
	if _, err := Collect(dir); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(filepath.Join(dir, CSVFile)); !bytes.Equal(got, want) {
		t.Errorf("Collect with the plan:\n%s\nwant\n%s", got, want)
	}
	// Without the plan the varied keys come from the recipes.
	noPlan := t.TempDir()
	for _, r := range p.Runs {
		copyDir(t, filepath.Join(dir, r.Name), filepath.Join(noPlan, r.Name))
	}
	if _, err := Collect(noPlan); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(filepath.Join(noPlan, CSVFile)); !bytes.Equal(got, want) {
		t.Errorf("Collect without the plan:\n%s\nwant\n%s", got, want)
	}

	// A run folder missing: an error naming it; nothing written.
	partial := t.TempDir()
	copyFile(t, filepath.Join(dir, PlanFile), filepath.Join(partial, PlanFile))
	copyDir(t, filepath.Join(dir, p.Runs[0].Name), filepath.Join(partial, p.Runs[0].Name))
	_, err := Collect(partial)
	if err == nil || !strings.Contains(err.Error(), p.Runs[1].Name) || !strings.Contains(err.Error(), "1 of 2") {
		t.Errorf("Collect with a run missing: %v; want an error naming %s", err, p.Runs[1].Name)
	}
	if _, err := os.Stat(filepath.Join(partial, CSVFile)); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("sweep.csv written after an error: %v", err)
	}
	// A folder that holds another run than the plan says.
	swapped := t.TempDir()
	copyFile(t, filepath.Join(dir, PlanFile), filepath.Join(swapped, PlanFile))
	copyDir(t, filepath.Join(dir, p.Runs[0].Name), filepath.Join(swapped, p.Runs[1].Name))
	copyDir(t, filepath.Join(dir, p.Runs[1].Name), filepath.Join(swapped, p.Runs[0].Name))
	if _, err := Collect(swapped); err == nil || !strings.Contains(err.Error(), "grid.n = 16, the sweep plan says 8") {
		t.Errorf("Collect of swapped folders: %v; want the grid.n mismatch", err)
	}
	if _, err := Collect(filepath.Join(dir, "nowhere")); err == nil || !strings.Contains(err.Error(), "--collect") {
		t.Errorf("Collect of a missing folder: %v", err)
	}
}

func copyFile(t *testing.T, from, to string) {
	t.Helper()
	b, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func copyDir(t *testing.T, from, to string) {
	t.Helper()
	if err := os.MkdirAll(to, 0o755); err != nil {
		t.Fatal(err)
	}
	entries, err := os.ReadDir(from)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		copyFile(t, filepath.Join(from, e.Name()), filepath.Join(to, e.Name()))
	}
}

// A run that blows up is a row with blew_up = true; the sweep goes on.
// A depth bump stepped with rk3 at a gravity-wave Courant number of 1.2
// on the hex grid, above its limit of about 0.71 (see
// scenarios/overstep-rk3.toml), against 0.32.
func TestBlowUpIsARow(t *testing.T) {
	dir := t.TempDir()
	c := geostrophic()
	c.Initial.Case = "gaussian-bump"
	c.Time.Integrator, c.Time.Duration, c.Output.Every = "rk3", 15000, 5000
	c.Grid.N = 16 // d = 62.5 km, c = 99 m/s
	p := mustPlan(t, c, nil, "time.dt=200,750")
	_, out, err := Execute(context.Background(), p, dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if out.BlewUp != 1 {
		t.Fatalf("outcome %+v, want one blow-up", out)
	}
	recs := readCSV(t, filepath.Join(dir, CSVFile))
	if got := column(t, recs, "blew_up"); got[0] != "false" || got[1] != "true" {
		t.Errorf("blew_up column %v, want false, true", got)
	}
	b, _ := os.ReadFile(filepath.Join(dir, JSONFile))
	if !strings.Contains(string(b), `"blew_up": [
    "point-002"`) {
		t.Errorf("sweep.json does not list the blown-up run:\n%s", b)
	}
}

// Williamson et al. (1992) case 2 over icosahedral levels 3, 4 and 5 on
// Lloyd grids, five days with rk4, as in the sphere convergence test
// (sim/sphere_test.go). A sweep's product of choices keeps Δt fixed, so it
// runs at the finest level's Courant number (Δt = 450 s) where that test
// halves Δt with each level; with rk4 the time error is far below the
// spatial one, so the orders must agree to 0.05. The sweep's order must also
// equal, to round-off, a least-squares fit of direct runs with the same
// settings, and be at least first order.
func TestSphereSweep(t *testing.T) {
	if testing.Short() {
		t.Skip("long; runs in the full suite")
	}
	c := sim.DefaultConfig()
	c.Grid = sim.GridConfig{Kind: "icosahedral", N: 3, Optimize: "lloyd"}
	c.Initial.Case = "williamson-2"
	c.Time.Integrator, c.Time.Dt, c.Time.Duration, c.Output.Every = "rk4", 450, 5*86400, 86400
	dir := t.TempDir()
	p := mustPlan(t, c, nil, "grid.n=3,4,5")
	res, _, err := Execute(context.Background(), p, dir, Options{Jobs: 2})
	if err != nil {
		t.Fatal(err)
	}
	fit := func(dt func(n int) float64) float64 {
		var lx, ly []float64
		for _, n := range []int{3, 4, 5} {
			cfg := c
			cfg.Grid.N, cfg.Time.Dt = n, dt(n)
			m, err := sim.NewModel(cfg, 2)
			if err != nil {
				t.Fatal(err)
			}
			for m.Time() < cfg.Time.Duration-cfg.Time.Dt/2 {
				if err := m.Step(); err != nil {
					t.Fatal(err)
				}
			}
			e := diag.ErrorNorms(m.Depth(), m.ExactDepth(), m.Mesh().CellArea)
			lx, ly = append(lx, math.Log(m.Mesh().Spacing())), append(ly, math.Log(e.L2))
			m.Close()
		}
		_, beta := stat.LinearRegression(lx, ly, nil, false)
		return beta
	}
	same := fit(func(int) float64 { return 450 })
	courant := fit(func(n int) float64 { return 3600 / float64(int(1)<<(n-3)) }) // the sphere test's Δt
	if len(res.Fits) != 1 {
		t.Fatalf("%d fits, want 1", len(res.Fits))
	}
	got := res.Fits[0].Order
	t.Logf("williamson-2, Lloyd levels 3–5, 5 days: sweep order %.4f; direct runs %.4f at Δt = 450 s, %.4f at the sphere test's constant Courant number", got, same, courant)
	if math.Abs(got-same) > 1e-9 {
		t.Errorf("sweep order %.12g, direct runs %.12g", got, same)
	}
	if math.Abs(got-courant) > 0.05 {
		t.Errorf("sweep order %.4f differs from the constant-Courant order %.4f by more than 0.05", got, courant)
	}
	if got < 1 {
		t.Errorf("order %.3f, want ≥ 1", got)
	}
	checkPlots(t, dir, "error.png", "error.svg")
}

// Ending the context stops the sweep: runs not yet started never start,
// no sweep.csv is written, and the error says it was interrupted.
func TestExecuteInterrupted(t *testing.T) {
	dir := t.TempDir()
	p := mustPlan(t, geostrophic(), []string{"time.duration=600"}, "grid.n=8,16,32")
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	_, out, err := Execute(ctx, p, dir, Options{Jobs: 1, Done: func(done, _ int, _ *Run, _ *batch.Summary, _ error) {
		if done == 1 {
			cancel()
		}
	}})
	if !errors.Is(err, batch.ErrInterrupted) || !strings.Contains(err.Error(), "after 1 of 3 runs") {
		t.Errorf("error %v, want an interruption after 1 of 3 runs", err)
	}
	if out.Interrupted != 0 {
		t.Errorf("outcome %+v: a run started after the end", out)
	}
	if _, err := os.Stat(filepath.Join(dir, p.Runs[0].Name, "summary.json")); err != nil {
		t.Errorf("the finished run's files: %v", err)
	}
	for _, f := range []string{p.Runs[1].Name, p.Runs[2].Name, CSVFile} {
		if _, err := os.Stat(filepath.Join(dir, f)); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%s exists after the interruption (%v)", f, err)
		}
	}
}

func ExampleNewPlan() {
	base := sim.DefaultConfig()
	base.Initial.Case = "geostrophic-steady"
	n, _ := ParseVary("grid.n=16,32")
	s, _ := ParseVary("scheme.name=trisk-energy,apvm")
	p, err := NewPlan(base, "steady-geostrophic", "", []string{"time.duration=21600"}, []Axis{n, s})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range p.Runs {
		fmt.Println(r.Name, choiceText(r.Choices))
	}
	// Output:
	// point-001 grid.n=16,scheme.name=trisk-energy
	// point-002 grid.n=16,scheme.name=apvm
	// point-003 grid.n=32,scheme.name=trisk-energy
	// point-004 grid.n=32,scheme.name=apvm
}

func ExampleWriteJobs() {
	dir, _ := os.MkdirTemp("", "sweep-example")
	defer os.RemoveAll(dir)
	base := sim.DefaultConfig()
	base.Initial.Case = "geostrophic-steady"
	n, _ := ParseVary("grid.n=16,32")
	p, _ := NewPlan(base, "steady-geostrophic", "", nil, []Axis{n})
	jobs := filepath.Join(dir, "jobs.txt")
	if err := WriteJobs(jobs, dir, p, 2); err != nil {
		fmt.Println(err)
		return
	}
	b, _ := os.ReadFile(jobs)
	fmt.Print(strings.ReplaceAll(string(b), dir, "DIR"))
	// Output:
	// gyrebench run DIR/jobs/point-001.toml --out DIR/point-001 --workers 2
	// gyrebench run DIR/jobs/point-002.toml --out DIR/point-002 --workers 2
}
