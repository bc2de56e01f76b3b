package batch

import (
	"context"
	"math"
	"path/filepath"
	"strconv"
	"testing"

	"gyrebench/sim"
	"gyrebench/sim/internal/testcheck"
)

// The circulation drift in series.csv and summary.json is absolute
// (m² s⁻¹). On the sphere the total circulation Σ A_v (ζ_v + f_v) of the
// closed surface is zero (Stokes: ζ integrates to zero; f = 2Ω sin θ is
// odd about the equator), so a drift relative to the round-off start means
// nothing and circulation_rel_drift is left empty; the absolute drift must
// be round-off against the scale 2Ω·4πa². On the plane the circulation is
// f0 times the domain area, and the relative drift is given as well.
func TestCirculationDrift(t *testing.T) {
	sphere := sim.DefaultConfig()
	sphere.Grid = sim.GridConfig{Kind: "icosahedral", N: 2}
	sphere.Initial = sim.InitialConfig{Case: "williamson-6", Params: map[string]float64{}}
	sphere.Time.Dt, sphere.Time.Duration, sphere.Output.Every = 900, 3600, 1800
	plane := sim.DefaultConfig()
	plane.Grid = sim.GridConfig{Kind: "hex", N: 8, Length: 1e6}
	plane.Initial = sim.InitialConfig{Case: "gaussian-bump", Params: map[string]float64{}}
	plane.Time.Dt, plane.Time.Duration, plane.Output.Every = 120, 1200, 600
	for _, c := range []struct {
		name     string
		cfg      sim.Config
		sphere   bool
		absBound float64
	}{
		{"sphere", sphere, true, 1e-12 * 2 * sphere.Physics.Omega * 4 * math.Pi * sphere.Physics.Radius * sphere.Physics.Radius},
		{"plane", plane, false, 1e-12 * plane.Physics.F0 * 1e6 * 1e6},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			sum, err := Run(context.Background(), c.cfg, Options{OutDir: dir, Workers: 1})
			if err != nil {
				t.Fatal(err)
			}
			recs := testcheck.ReadCSV(t, filepath.Join(dir, "series.csv"))
			col := map[string]int{}
			for i, h := range recs[0] {
				col[h] = i
			}
			for _, k := range []string{"circulation", "circulation_drift", "circulation_rel_drift"} {
				if _, ok := col[k]; !ok {
					t.Fatalf("series.csv has no column %s: %v", k, recs[0])
				}
			}
			if len(recs) < 3 {
				t.Fatalf("series.csv has %d rows, want at least 2 after the header", len(recs)-1)
			}
			for _, r := range recs[1:] {
				abs, err := strconv.ParseFloat(r[col["circulation_drift"]], 64)
				if err != nil {
					t.Fatalf("circulation_drift %q: %v", r[col["circulation_drift"]], err)
				}
				if !(math.Abs(abs) <= c.absBound) {
					t.Errorf("t = %s: circulation drift %g m² s⁻¹, want round-off (≤ %g)", r[0], abs, c.absBound)
				}
				rel := r[col["circulation_rel_drift"]]
				if c.sphere && rel != "" {
					t.Errorf("t = %s: circulation_rel_drift = %q on the sphere, want empty (the reference is zero)", r[0], rel)
				}
				if !c.sphere {
					v, err := strconv.ParseFloat(rel, 64)
					if err != nil || math.Abs(v) > 1e-13 {
						t.Errorf("t = %s: circulation_rel_drift = %q on the plane, want a number ≤ 1e-13", r[0], rel)
					}
				}
			}
			if !(math.Abs(sum.CirculationDrift) <= c.absBound) {
				t.Errorf("summary circulation_drift %g, want ≤ %g", sum.CirculationDrift, c.absBound)
			}
		})
	}
}
