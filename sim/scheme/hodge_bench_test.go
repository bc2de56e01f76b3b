package scheme

import (
	"fmt"
	"testing"
	"time"

	"gyrebench/sim/mesh"
	"gyrebench/sim/par"
)

// BenchmarkHodge times one trisk-energy tendency, one worker, on a
// jittered grid with the diagonal and with the general Hodge star (the
// same topology and metric otherwise), and on the cubed sphere;
// min-ns/cell is the fastest call per cell.
func BenchmarkHodge(b *testing.B) {
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 128, Length: 2e6, Jitter: 0.2, Seed: 1},
		{Kind: mesh.Quad, N: 128, Length: 2e6, Jitter: 0.2, Seed: 1},
		{Kind: mesh.Cubed, N: 64, Radius: 6.37122e6},
	} {
		for _, general := range []bool{false, true} {
			f := randomFixtureOn(b, spec, 1)
			if general {
				if err := mesh.EnsureHodge(f.m); err != nil {
					b.Fatal(err)
				}
			}
			s, err := New(TRiSKEnergy, f.g, f.phys, par.New(1), Options{})
			if err != nil {
				b.Fatal(err)
			}
			dx := make([]float64, len(f.x))
			name := map[bool]string{false: "diagonal", true: "general"}[general]
			b.Run(fmt.Sprintf("%s-%d/%s", spec.Kind, spec.N, name), func(b *testing.B) {
				best := time.Duration(1 << 62)
				for i := 0; i < b.N; i++ {
					t0 := time.Now()
					s.Tendency(dx, f.x)
					best = min(best, time.Since(t0))
				}
				b.ReportMetric(float64(best.Nanoseconds())/float64(f.m.NumCells), "min-ns/cell")
			})
		}
	}
}
